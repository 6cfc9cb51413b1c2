package fit

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// A finite maximum that the signs of divergence took for separation: the
// nonparallel probit fits of tinyStudy(42) (22 rows, 4 categories, x1
// and x2 normal, x3 binary), cumulative and stage, converge (max |score|
// 6e-10 and 3e-9) with x3[3] near 11 and its standard error 1.6e4 and
// 7.4e3: its covariance column, stepped 5 units of the linear predictor,
// leaves the log-likelihood where it was (the probit's tail: the rows it
// moves have probabilities within 1e-11 of 1), so the fits were reported
// as having no finite maximum, "the log-likelihood keeps rising as
// parameters diverge (separation)". It does not: the same column stepped
// 20 units lowers it by hundreds, and the programme finds no direction of
// recession, which for these models (concave log-likelihoods,
// programmeDecides) proves the maximum finite; R's lpSolve agrees and R's
// glm reaches the stage model's log-likelihood
// (TestRecessionAgainstLPSolve). The fits now say so: a flat maximum,
// its log-likelihood kept, x3[3] named as not determined. The same
// happened to tinyStudySpread(155, 4) (19 rows, 4 categories, x1 normal,
// x2 binary), cumulative nonparallel probit and cloglog: x2[2] near 40
// and 60, errors 1.2e4 and 6.9e4, max |score| 1e-9 and 2e-10, no
// direction of recession (R's lpSolve agrees).
func TestFlatMaximumIsFinite(t *testing.T) {
	for _, c := range []struct {
		name  string
		d     *Data
		cmp   Comparison
		link  Link
		param string  // the flat parameter
		ll    float64 // the fit's own maximum, to 1e-6 (stage: R glm's too)
	}{
		{"tinyStudy(42)", tinyStudy(42), Cumulative, Probit, "x3[3]", -17.251820},
		{"tinyStudy(42)", tinyStudy(42), Stage, Probit, "x3[3]", -18.373002},
		{"tinyStudySpread(155, 4)", tinyStudySpread(155, 4), Cumulative, Probit, "x2[2]", -9.838494},
		{"tinyStudySpread(155, 4)", tinyStudySpread(155, 4), Cumulative, Cloglog, "x2[2]", -9.704864},
	} {
		d := c.d
		m := Model{Comparison: c.cmp, Link: c.link, Effects: allEffects(len(d.Predictors), Nonparallel)}
		r, err := Fit(d, m, Options{Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		name := c.name + " " + m.Name()
		if r.Status != StatusFlatMaximum || r.Separation != nil || r.Flat == nil || !slices.Contains(r.Flat.Parameters, c.param) {
			t.Fatalf("%s: status %s, flat %+v, separation %+v: %s", name, r.Status, r.Flat, r.Separation, r.Message)
		}
		if math.Abs(r.LogLik-c.ll) > 1e-6 || !r.Converged || r.OK() || !r.MaximumKnown() || !r.LikelihoodUsable() {
			t.Errorf("%s: log-likelihood %v, want %v; converged %v", name, r.LogLik, c.ll, r.Converged)
		}
		for _, w := range []string{"the maximum likelihood estimate is finite", "nearly flat", c.param, "is the maximum"} {
			if !strings.Contains(r.Message, w) {
				t.Errorf("%s: message %q lacks %q", name, r.Message, w)
			}
		}
		if strings.Contains(r.Message, "keeps rising as") || strings.Contains(r.Message, "no finite maximum") {
			t.Errorf("%s: message %q says the log-likelihood keeps rising", name, r.Message)
		}
		// The programme's answer on the rows: no direction.
		ly, err := newLayout(m, d.J, d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		vars := lpVariables(ly, make([]float64, len(ly.params)), m, phiHeld)
		if dir, settled := recessionSolve(recessionRows(d, distinctRows(d, math.MaxInt), m, ly, vars)); dir != nil || !settled {
			t.Errorf("%s: the programme found %v (settled %v), want no direction", name, dir, settled)
		}
		// The profile along the covariance column of the flat parameter
		// (the ridge the sign followed), in units of the linear
		// predictor: level within 1e-9 at 5 units one way, then turning
		// down: far below at 20 units either way (or no valid point: a
		// probability of an observed category not positive).
		P := r.NParams
		w := slices.Index(r.ParamNames, c.param)
		col := make([]float64, P)
		most := 0.0
		sd := predictorSD(d)
		for j, pa := range ly.params {
			col[j] = r.Cov[j*P+w]
			unit := 1.0
			if pa.kind != pCut {
				unit = sd[pa.k]
			}
			most = math.Max(most, math.Abs(col[j])*unit)
		}
		pr := newProblem(d.design(), m, ly, 1)
		at := func(units float64) (float64, bool) {
			a := pr.evaluator(false)(addScaled(r.Estimates, col, units/most), 0)
			return a.ll, a.bad
		}
		level := false
		for _, units := range []float64{5, -5} {
			ll, bad := at(units)
			level = level || (!bad && math.Abs(ll-r.LogLik) <= 1e-9)
		}
		if !level {
			t.Errorf("%s: the log-likelihood is not level 5 units along the ridge", name)
		}
		for _, units := range []float64{20, -20} {
			if ll, bad := at(units); !bad && !(ll < r.LogLik-1) {
				t.Errorf("%s: %g units along the ridge: log-likelihood %v, want far below %v", name, units, ll, r.LogLik)
			}
		}
	}
}
