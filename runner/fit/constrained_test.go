package fit

import (
	"math"
	"testing"
)

// TestReferenceConstrained reproduces every constrained record (partial
// constrained cells of the three comparisons and the stereotype model).
// Sources: see refSources.
func TestReferenceConstrained(t *testing.T) {
	for _, name := range refNames {
		rs := loadRef(t, name)
		for _, rm := range rs.models {
			if len(rm.Constrained) == 0 {
				continue
			}
			rm := rm
			t.Run(name+"/"+rm.ID, func(t *testing.T) {
				t.Logf("data: %s", refSources[name])
				m := rm.modelOf(t)
				res, err := Fit(rs.data(rm.Predictors), m, Options{})
				if err != nil {
					t.Fatal(err)
				}
				if !res.OK() {
					t.Fatalf("status %s: %s", res.Status, res.Message)
				}
				if res.LogLik < *rm.LogLik-tolLL {
					t.Errorf("loglik %.10f below reference %.10f", res.LogLik, *rm.LogLik)
				}
				if res.NParams != rm.NParams {
					t.Errorf("n_params %d want %d", res.NParams, rm.NParams)
				}
				for k, p := range rm.Predictors {
					for j, want := range rm.Effects[p] {
						if !near(res.Effects[j][k], want, 1e-4, 1e-6) {
							t.Errorf("effect %s eq %d = %.8g, want %.8g", p, j+1, res.Effects[j][k], want)
						}
					}
				}
				for j, want := range rm.Phi {
					if len(res.Phi) != 1 || !near(res.Phi[0][j], want, 1e-4, 1e-6) {
						t.Errorf("phi %v, want %v", res.Phi, rm.Phi)
						break
					}
				}
				_ = math.Abs
			})
		}
	}
}
