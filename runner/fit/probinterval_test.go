package fit

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"ordplan/internal/rscript"
)

// TestProbIntervalAgainstR: the interval of a predicted probability is made
// on its log-odds scale (ProbInterval). For two categories the cumulative
// logit is R's binary glm (checked in crosscheck_r_test.go), and the log
// odds of P(y = 2) is glm's linear predictor, so the interval must be R's
// plogis(eta -/+ z se(eta)) (predict(type = "link", se.fit = TRUE)); the
// probability and its standard error are predict(type = "response")'s.
// The new rows include points far out, where p -/+ z se passes 0 or 1.
func TestProbIntervalAgainstR(t *testing.T) {
	rscript.Require(t)
	const n, level = 80, 0.95
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(20261203, 9))
	x1, x2, y := make([]float64, n), make([]float64, n), make([]float64, n)
	X, Y := make([]float64, 2*n), make([]int, n)
	for i := range n {
		x1[i], x2[i] = rng.NormFloat64(), rng.Float64()
		if rng.Float64() < 1/(1+math.Exp(-(-0.3+1.2*x1[i]-0.8*x2[i]))) {
			y[i], Y[i] = 1, 1
		}
		X[2*i], X[2*i+1] = x1[i], x2[i]
	}
	newX := [][]float64{{0, 0.5}, {-3, 1}, {3.5, 0}, {-5, 0.9}, {1, 0.2}}
	rscript.WriteCSV(t, filepath.Join(dir, "data.csv"), []string{"y", "x1", "x2"}, [][]float64{y, x1, x2})
	var c1, c2 []float64
	var flat []float64
	for _, r := range newX {
		c1, c2, flat = append(c1, r[0]), append(c2, r[1]), append(flat, r...)
	}
	rscript.WriteCSV(t, filepath.Join(dir, "new.csv"), []string{"x1", "x2"}, [][]float64{c1, c2})
	if err := os.WriteFile(filepath.Join(dir, "level.txt"), []byte(strconv.FormatFloat(level, 'g', -1, 64)+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	vals := rscript.Run(t, dir, "testdata/rcheck/probinterval.R")
	model := Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Parallel, Parallel}}
	r, err := Fit(&Data{Y: Y, J: 2, X: X, Predictors: []string{"x1", "x2"}}, model, Options{})
	if err != nil || !r.OK() {
		t.Fatal(err, r)
	}
	pred, err := r.Predict(flat, nil)
	if err != nil {
		t.Fatal(err)
	}
	z := 1.959963984540054 // qnorm(0.975)
	passes := false
	for i := range newX {
		want := vals.Get(t, "row"+strconv.Itoa(i+1)) // P(y = 1) in glm's coding: category 2 here
		p, se := pred.Prob[i*2+1], pred.SE[i*2+1]
		lo, hi := ProbInterval(p, se, z)
		for _, c := range []struct {
			what      string
			got, want float64
		}{{"probability", p, want[0]}, {"standard error", se, want[1]}, {"low", lo, want[2]}, {"high", hi, want[3]}} {
			if d := math.Abs(c.got - c.want); !(d <= 1e-6*math.Abs(c.want)) {
				t.Errorf("row %d %s: %.12g, R %.12g", i+1, c.what, c.got, c.want)
			}
		}
		// The other category's interval is the same one seen from 1.
		lo1, hi1 := ProbInterval(pred.Prob[i*2], pred.SE[i*2], z)
		if math.Abs(lo1-(1-hi)) > 1e-12 || math.Abs(hi1-(1-lo)) > 1e-12 {
			t.Errorf("row %d: P(y = 1) interval [%g, %g], 1 - the other's [%g, %g]", i+1, lo1, hi1, 1-hi, 1-lo)
		}
		passes = passes || p-z*se < 0 || p+z*se > 1
		t.Logf("row %d: p %.6f, symmetric [%.6f, %.6f], log-odds [%.6f, %.6f]", i+1, p, p-z*se, p+z*se, lo, hi)
	}
	if !passes {
		t.Error("no row whose symmetric interval passes 0 or 1: the check does not reach the case it is for")
	}
}

// BoundedInterval by hand: the expected category 4.9 of five (place u =
// 0.975 in [1, 5]) with standard error 0.2 at z = 2: logit(u) = 3.6635616,
// error 0.2 / (4 u (1 - u)) = 2.0512821, so the bounds are 1 + 4
// plogis(3.6635616 -/+ 4.1025641) = 2.567914758 and 4.998305309 (R:
// 1+4*plogis(qlogis(3.9/4) + c(-1, 1) * 2 * 0.2 / (4*0.975*0.025))); then
// ends, zero error and values outside the range.
func TestBoundedInterval(t *testing.T) {
	u := 3.9 / 4
	h := 2 * 0.2 / (4 * u * (1 - u))
	eta := math.Log(u / (1 - u))
	wantLo, wantHi := 1+4/(1+math.Exp(-(eta-h))), 1+4/(1+math.Exp(-(eta+h)))
	lo, hi := BoundedInterval(4.9, 0.2, 2, 1, 5)
	if math.Abs(lo-wantLo) > 1e-12 || math.Abs(hi-wantHi) > 1e-12 || !(lo > 1 && hi < 5 && lo < 4.9 && hi > 4.9) {
		t.Errorf("[%g, %g], want [%g, %g]", lo, hi, wantLo, wantHi)
	}
	if math.Abs(lo-2.567914758) > 1e-9 || math.Abs(hi-4.998305309) > 1e-9 { // R's values above
		t.Errorf("hand values [%g, %g]", wantLo, wantHi)
	}
	for _, c := range []struct{ v, se, lo, hi float64 }{{0, 0.1, 0, 0}, {1, 0.1, 1, 1}, {0.3, 0, 0.3, 0.3}} {
		if lo, hi := ProbInterval(c.v, c.se, 1.96); lo != c.lo || hi != c.hi {
			t.Errorf("ProbInterval(%g, %g): [%g, %g]", c.v, c.se, lo, hi)
		}
	}
	if lo, hi := ProbInterval(-0.01, 0.02, 1.96); !math.IsNaN(lo) || !math.IsNaN(hi) {
		t.Errorf("a negative probability has an interval [%g, %g]", lo, hi)
	}
}

// TestSmallPValuesKeepTheirDigits: two-sided normal p-values far in the
// tail, against base R 4.2 (Debian r-base-core), options(digits = 17):
// 2 * pnorm(-c(8, 9.2, 30)) = 1.2441921148543570e-15,
// 3.5794976240281050e-20, 9.8134278542963744e-198. Computed as 1 minus
// the distribution function they were 1.22e-15 (2% off), 0 and 0.
func TestSmallPValuesKeepTheirDigits(t *testing.T) {
	for _, c := range []struct{ z, want float64 }{
		{8, 1.2441921148543570e-15}, {-9.2, 3.5794976240281050e-20}, {30, 9.8134278542963744e-198},
	} {
		if got := TSurvival2(c.z, math.Inf(1)); math.Abs(got-c.want) > 1e-11*c.want { // Go's Erfc: 1.2e-12 relative at z = 30
			t.Errorf("two-sided p of z = %g: %.17g, R gives %.17g", c.z, got, c.want)
		}
	}
}
