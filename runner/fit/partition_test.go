package fit

import (
	"math"
	"testing"
)

// A fit whose log-likelihood is summed over four partitions equals the
// local fit to 1e-8 (General Social Survey extract, Long 1997).
func TestPartitionedFitEqualsLocal(t *testing.T) {
	d := gssData(t)
	K := len(d.Predictors)
	n := d.N()
	var parts []*Data
	for p := 0; p < 4; p++ {
		lo, hi := p*n/4, (p+1)*n/4
		parts = append(parts, &Data{J: d.J, Predictors: d.Predictors, Y: d.Y[lo:hi], X: d.X[lo*K : hi*K]})
	}
	counts := make([]float64, d.J)
	for _, y := range d.Y {
		counts[y]++
	}
	w := Whole{J: d.J, Predictors: d.Predictors, Counts: counts, Rows: n}
	for _, m := range metaModels[:2] {
		local := fitOK(t, d, m)
		sums := func(theta []float64, order int) (*Sums, error) {
			total := &Sums{}
			for _, p := range parts {
				s, err := PartitionSums(p, m, theta, order)
				if err != nil {
					return nil, err
				}
				total.Add(s)
			}
			return total, nil
		}
		diag := func(theta []float64) (int, float64, error) {
			neg, minP := 0, math.Inf(1)
			for _, p := range parts {
				k, mp, err := PartitionDiagnostics(p, m, theta)
				if err != nil {
					return 0, 0, err
				}
				neg += k
				minP = math.Min(minP, mp)
			}
			return neg, minP, nil
		}
		r, err := FitFromSums(w, m, sums, diag, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if !r.OK() || math.Abs(r.LogLik-local.LogLik) > 1e-8 {
			t.Fatalf("%s: %s ll %v vs %v", m.Name(), r.Status, r.LogLik, local.LogLik)
		}
		for i := range r.Estimates {
			if math.Abs(r.Estimates[i]-local.Estimates[i]) > 1e-8 || math.Abs(r.StdErrors[i]-local.StdErrors[i]) > 1e-8 {
				t.Errorf("%s: %v (%v) vs %v (%v)", r.ParamNames[i], r.Estimates[i], r.StdErrors[i], local.Estimates[i], local.StdErrors[i])
			}
		}
	}
}
