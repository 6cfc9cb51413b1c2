package fit

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// Tolerances of the project: log-likelihood 1e-6 absolute; estimates and
// standard errors 1e-5 relative (or 1e-7 absolute near zero).
const (
	tolLL  = 1e-6
	tolRel = 1e-5
	tolAbs = 1e-7
)

func near(got, want, rel, abs float64) bool {
	return math.Abs(got-want) <= math.Max(abs, rel*math.Abs(want))
}

// TestReferenceUnconstrained reproduces every reference record whose model
// has no constrained predictor: parallel, partial and nonparallel fits of
// the three comparisons, other links, and the baseline-category form.
// Sources: see refSources (each data set's published source).
func TestReferenceUnconstrained(t *testing.T) {
	for _, rec := range refRecords(t, false) {
		name, rs, rm := rec.name, rec.rs, rec.rm
		t.Run(name+"/"+rm.ID, func(t *testing.T) {
			t.Logf("data: %s", refSources[name])
			checkUnconstrained(t, rs, &rm, Options{})
		})
	}
}

// TestReferenceSubsampleStage reproduces the same records with the
// subsample stage at any size (Options.SubsampleAbove 1): where the
// subsample holds every category, the full-data iterations start at its
// maximum, and the result must still be the reference's to the project's
// tolerances. It fails if no record takes the stage. Sources: refSources.
func TestReferenceSubsampleStage(t *testing.T) {
	opt := Options{SubsampleAbove: 1}
	staged := 0
	for _, rec := range refRecords(t, false) {
		name, rs, rm := rec.name, rec.rs, rec.rm
		d := rs.data(rm.Predictors)
		if d.design().compressed().subsample(d.J, opt.SubsampleAbove) != nil {
			staged++
		}
		t.Run(name+"/"+rm.ID, func(t *testing.T) {
			t.Logf("data: %s", refSources[name])
			checkUnconstrained(t, rs, &rm, opt)
		})
	}
	if staged == 0 {
		t.Fatal("no reference record takes the subsample stage")
	}
	t.Logf("%d records take the subsample stage", staged)
}

func checkUnconstrained(t *testing.T, rs *refSet, rm *refModel, opt Options) {
	m := rm.modelOf(t)
	res, err := Fit(rs.data(rm.Predictors), m, opt)
	if err != nil {
		t.Fatal(err)
	}
	if rm.Status == "failed" {
		if res.Status != StatusNoFiniteMaximum {
			t.Fatalf("reference has no finite maximum; got status %s ll %v", res.Status, res.LogLik)
		}
		if !math.IsNaN(res.LogLik) {
			t.Errorf("failed fit must not report a log-likelihood, got %v", res.LogLik)
		}
		if res.Separation == nil || len(res.Separation.Predictors) == 0 {
			t.Errorf("separation should name predictors: %s", res.Message)
		}
		t.Logf("message: %s", res.Message)
		return
	}
	if !res.OK() {
		t.Fatalf("status %s: %s", res.Status, res.Message)
	}
	wantNeg := rm.Status == "ok_negative_probabilities"
	if (res.Status == StatusNegativeProbs) != wantNeg {
		t.Errorf("status %s, reference %s", res.Status, rm.Status)
	}
	if math.Abs(res.LogLik-*rm.LogLik) > tolLL {
		t.Errorf("loglik %.10f, want %.10f", res.LogLik, *rm.LogLik)
	}
	if res.NParams != rm.NParams || res.NObs != rm.NObs {
		t.Errorf("n_params %d nobs %g, want %d %g", res.NParams, res.NObs, rm.NParams, rm.NObs)
	}
	if math.Abs(res.AIC-*rm.AIC) > 2*tolLL || math.Abs(res.BIC-*rm.BIC) > 2*tolLL {
		t.Errorf("aic/bic %.8f %.8f, want %.8f %.8f", res.AIC, res.BIC, *rm.AIC, *rm.BIC)
	}
	if rm.Comparison == "multinomial" {
		b, err := res.Baseline(0)
		if err != nil {
			t.Fatal(err)
		}
		for i, n := range b.Names {
			// The reference files key the baseline-category intercepts
			// like boundary parameters (mapped to tau[m] on loading).
			ref := n
			var j int
			if _, err := fmt.Sscanf(n, "alpha[%d]", &j); err == nil {
				ref = TauName(j)
			}
			want, ok := rm.Estimates[ref]
			if !ok {
				t.Fatalf("no reference for %s", n)
			}
			if !near(b.Estimates[i], want, tolRel, tolAbs) {
				t.Errorf("%s = %.10g, want %.10g", n, b.Estimates[i], want)
			}
			if se := rm.SEOIM[ref]; !near(b.StdErrors[i], se, tolRel, tolAbs) {
				t.Errorf("se(%s) = %.10g, want %.10g", n, b.StdErrors[i], se)
			}
		}
		return
	}
	for j, c := range rm.Cutpoints {
		if !near(res.Cutpoints[j], c, tolRel, tolAbs) {
			t.Errorf("tau[%d] = %.10g, want %.10g", j+1, res.Cutpoints[j], c)
		}
	}
	for k, p := range rm.Predictors {
		for j, want := range rm.Effects[p] {
			if !near(res.Effects[j][k], want, tolRel, tolAbs) {
				t.Errorf("effect %s eq %d = %.10g, want %.10g", p, j+1, res.Effects[j][k], want)
			}
		}
	}
	for i, n := range res.ParamNames {
		want, ok := rm.Estimates[n]
		if !ok {
			t.Errorf("parameter %s not in reference (%v)", n, keys(rm.Estimates))
			continue
		}
		if !near(res.Estimates[i], want, tolRel, tolAbs) {
			t.Errorf("%s = %.10g, want %.10g", n, res.Estimates[i], want)
		}
		if se := rm.SEOIM[n]; !near(res.StdErrors[i], se, tolRel, tolAbs) {
			t.Errorf("se_oim(%s) = %.10g, want %.10g", n, res.StdErrors[i], se)
		}
	}
}

func keys(m map[string]float64) string {
	var ks []string
	for k := range m {
		ks = append(ks, k)
	}
	return strings.Join(ks, ",")
}
