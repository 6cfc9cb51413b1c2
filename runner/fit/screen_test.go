package fit

import (
	"math"
	"testing"
)

// TestScreenedStartsSameMaximumOnReferences: on every reference record with
// constrained predictors (the stereotype models included), the search with
// its starts screened on the quadratic approximation around the partial
// fit (ScreenAbove -1, as on large data) chooses the maximum of the search
// that runs every start on the data (ScreenAbove above the rows): the same
// log-likelihood within 1e-9 relative and the same estimates within 1e-7
// relative (or 1e-7 of a standard error). Sources: refSources.
func TestScreenedStartsSameMaximumOnReferences(t *testing.T) {
	for _, rec := range refRecords(t, true) {
		name, rs, rm := rec.name, rec.rs, rec.rm
		m := rm.modelOf(t)
		d := rs.data(rm.Predictors)
		full, err := Fit(d, m, Options{ScreenAbove: 1 << 30})
		if err != nil {
			t.Fatal(err)
		}
		screened, err := Fit(d, m, Options{ScreenAbove: -1})
		if err != nil {
			t.Fatal(err)
		}
		id := name + "/" + rm.ID
		if full.Status != screened.Status {
			t.Errorf("%s: status %s, screened %s", id, full.Status, screened.Status)
			continue
		}
		if math.Abs(full.LogLik-screened.LogLik) > 1e-9*math.Abs(full.LogLik) {
			t.Errorf("%s: log-likelihood %.12f, screened %.12f", id, full.LogLik, screened.LogLik)
		}
		for i, v := range full.Estimates {
			tol := 1e-7 * math.Max(math.Abs(v), full.StdErrors[i])
			if w := screened.Estimates[i]; !(math.Abs(v-w) <= tol) && !(math.IsNaN(v) && math.IsNaN(w)) {
				t.Errorf("%s: %s %.12g, screened %.12g", id, full.ParamNames[i], v, w)
			}
		}
	}
}
