package fit

import (
	"math"
	"testing"
)

// Expanding the Copenhagen housing table (Madsen 1976) to one row per
// resident gives 1681 rows with 72 distinct ones: the fit merges them and
// reproduces the reference fit of the weighted table.
func TestRepeatedRowsAreMerged(t *testing.T) {
	rs := loadRef(t, "housing")
	for _, rm := range rs.models {
		if rm.ID != "cumulative/partial_unconstrained/logit" {
			continue
		}
		w := rs.data(rm.Predictors)
		K := len(w.Predictors)
		ex := &Data{J: w.J, Predictors: w.Predictors, Categories: w.Categories}
		for i, c := range w.Weights {
			for r := 0; r < int(c); r++ {
				ex.Y = append(ex.Y, w.Y[i])
				ex.X = append(ex.X, w.X[i*K:(i+1)*K]...)
			}
		}
		if c := ex.design().compressed(); c.n > 72 || c.mult == nil {
			t.Fatalf("expanded table compressed to %d rows", c.n)
		}
		r := fitOK(t, ex, rm.modelOf(t))
		if math.Abs(r.LogLik-*rm.LogLik) > tolLL || r.NRows != 1681 || r.NObs != 1681 {
			t.Fatalf("loglik %v rows %d nobs %v", r.LogLik, r.NRows, r.NObs)
		}
		for i, n := range r.ParamNames {
			if !near(r.Estimates[i], rm.Estimates[n], tolRel, tolAbs) || !near(r.StdErrors[i], rm.SEOIM[n], tolRel, tolAbs) {
				t.Errorf("%s: %v (%v), reference %v (%v)", n, r.Estimates[i], r.StdErrors[i], rm.Estimates[n], rm.SEOIM[n])
			}
		}
		return
	}
	t.Fatal("reference record missing")
}

// Data without repeats are left as they are.
func TestDistinctRowsNotMerged(t *testing.T) {
	d := synthData(5, 500, 3, 4, false, false)
	if c := d.design().compressed(); c.n != 500 || c.mult != nil {
		t.Fatalf("compressed to %d rows", c.n)
	}
}
