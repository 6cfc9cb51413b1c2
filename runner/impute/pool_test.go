package impute

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/rscript"
	"ordplan/runner/fit"

	"gonum.org/v1/gonum/stat/distuv"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsInf(want, 0) && got == want {
		return
	}
	if d := math.Abs(got - want); !(d <= tol*math.Max(1, math.Abs(want))) {
		t.Errorf("%s: got %.12g, want %.12g (diff %.3g)", what, got, want, d)
	}
}

// TestIdenticalSets: when every imputed set gives the same analysis the
// pooled estimates and covariance are that analysis, the between variance
// is zero, the degrees of freedom are the complete-data ones adjusted by
// the Barnard-Rubin rule (or infinite), D1 is the Wald test over k and D3 the
// likelihood-ratio statistic over k.
func TestIdenticalSets(t *testing.T) {
	s := Set{Est: []float64{0.5, -1.25, 2}, Cov: []float64{0.04, 0.01, 0, 0.01, 0.09, 0.02, 0, 0.02, 0.25}}
	sets := []Set{s, s, s, s}
	p, err := Pool(sets, Complete{DF: math.Inf(1)})
	if err != nil {
		t.Fatal(err)
	}
	for j := range s.Est {
		near(t, "estimate", p.Estimate[j], s.Est[j], 1e-15)
		near(t, "se", p.SE[j], math.Sqrt(s.Cov[j*3+j]), 1e-15)
		if p.RIV[j] != 0 || p.FMI[j] != 0 || !math.IsInf(p.DF[j], 1) {
			t.Errorf("parameter %d: riv %g fmi %g df %g, want 0, 0, +Inf", j, p.RIV[j], p.FMI[j], p.DF[j])
		}
	}
	for j := range p.Between {
		if p.Between[j] != 0 {
			t.Fatalf("between variance %v, want 0", p.Between)
		}
		near(t, "total", p.Total[j], s.Cov[j], 1e-15)
	}
	// Barnard-Rubin with lambda = 0: df_obs = (n+1)/(n+3) n.
	p2, _ := Pool(sets, Complete{DF: 97})
	near(t, "df with 97 complete-data df", p2.DF[0], 98.0/100*97, 1e-14)
	// D1 of the last two parameters = the Wald statistic over 2, chi-square p.
	C := []float64{0, 1, 0, 0, 0, 1}
	d1, err := D1(p, C, nil)
	if err != nil {
		t.Fatal(err)
	}
	det := 0.09*0.25 - 0.02*0.02
	wald := (0.25*1.25*1.25 - 2*0.02*(-1.25)*2 + 0.09*4) / det
	near(t, "D1", d1.F, wald/2, 1e-13)
	near(t, "D1 p", d1.P, math.Exp(-wald/2), 1e-12) // chi-square(2) survival
	d3, _ := D3([]float64{5.2, 5.2, 5.2}, []float64{5.2, 5.2, 5.2}, 2)
	near(t, "D3", d3.F, 2.6, 1e-15)
	near(t, "D3 p", d3.P, math.Exp(-5.2/2), 1e-12)
}

// TestD1OneParameter: D1 of one parameter is the square of the pooled
// estimate over its pooled standard error (its r is that parameter's
// relative increase in variance).
func TestD1OneParameter(t *testing.T) {
	sets := []Set{
		{Est: []float64{1.1, 0.3}, Cov: []float64{0.05, 0.01, 0.01, 0.02}},
		{Est: []float64{0.9, 0.45}, Cov: []float64{0.06, 0.012, 0.012, 0.021}},
		{Est: []float64{1.3, 0.38}, Cov: []float64{0.055, 0.008, 0.008, 0.019}},
	}
	p, err := Pool(sets, Complete{DF: 120})
	if err != nil {
		t.Fatal(err)
	}
	for j := 0; j < 2; j++ {
		C := make([]float64, 2)
		C[j] = 1
		d1, err := D1(p, C, nil)
		if err != nil {
			t.Fatal(err)
		}
		z := p.Estimate[j] / p.SE[j]
		near(t, "D1 = pooled z^2", d1.F, z*z, 1e-13)
		near(t, "r = RIV", d1.RIV, p.RIV[j], 1e-13)
	}
}

func TestPoolErrors(t *testing.T) {
	s := Set{Est: []float64{1}, Cov: []float64{1}}
	if _, err := Pool([]Set{s}, Complete{DF: 10}); err == nil || err.Error() != "pooling needs at least two imputed data sets, got 1" {
		t.Errorf("one set: %v", err)
	}
	if _, err := Pool([]Set{s, {Est: []float64{1, 2}, Cov: []float64{1, 0, 0, 1}}}, Complete{DF: 10}); err == nil {
		t.Error("sets of different sizes pooled")
	}
	if _, err := Pool([]Set{s, {Est: []float64{math.NaN()}, Cov: []float64{1}}}, Complete{DF: 10}); err == nil {
		t.Error("NaN pooled")
	}
	if _, err := D3([]float64{1}, []float64{1}, 1); err == nil {
		t.Error("D3 of one set")
	}
}

// TestAgainstMice pools binary logistic fits of five imputed sets and
// checks every quantity against the general-purpose multiple-imputation
// package mice (pool.scalar: Rubin's rules with the Barnard-Rubin degrees
// of freedom; D3: the pooled likelihood-ratio test). The
// program's fits are the two-category cumulative logit model, whose slopes
// are glm's with the sign reversed (checked against glm in runner/fit).
func TestAgainstMice(t *testing.T) {
	rscript.RequirePackages(t, "mice")
	const m, n = 5, 120
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(20, 1))
	x1, x2, y := make([]float64, n), make([]float64, n), make([]float64, n)
	miss := make([]bool, n)
	for i := range n {
		x1[i] = rng.NormFloat64()
		x2[i] = 0.5*x1[i] + rng.NormFloat64()
		eta := -0.3 + 0.8*x1[i] - 0.6*x2[i]
		if rng.Float64() < 1/(1+math.Exp(-eta)) {
			y[i] = 1
		}
		miss[i] = rng.Float64() < 0.3
	}
	os.WriteFile(filepath.Join(dir, "m.txt"), []byte(strconv.Itoa(m)+"\n"), 0o644)
	var full, restricted []*fit.Result
	var datas []*fit.Data
	mFull := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{fit.Parallel, fit.Parallel}}
	mRestr := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{fit.Parallel}}
	for k := 1; k <= m; k++ {
		// An "imputation": x2 of the rows marked missing drawn anew.
		xi := make([]float64, n)
		for i := range n {
			xi[i] = x2[i]
			if miss[i] {
				xi[i] = 0.5*x1[i] + rng.NormFloat64()
			}
		}
		rscript.WriteCSV(t, filepath.Join(dir, "imp"+strconv.Itoa(k)+".csv"), []string{"y", "x1", "x2"}, [][]float64{y, x1, xi})
		yi := make([]int, n)
		X := make([]float64, 2*n)
		for i := range n {
			yi[i] = int(y[i])
			X[2*i], X[2*i+1] = x1[i], xi[i]
		}
		d := &fit.Data{Y: yi, J: 2, X: X, Predictors: []string{"x1", "x2"}}
		rf, err := fit.Fit(d, mFull, fit.Options{})
		if err != nil || !rf.OK() {
			t.Fatal(err, rf)
		}
		d0 := &fit.Data{Y: yi, J: 2, X: x1, Predictors: []string{"x1"}}
		r0, err := fit.Fit(d0, mRestr, fit.Options{})
		if err != nil || !r0.OK() {
			t.Fatal(err, r0)
		}
		full, restricted, datas = append(full, rf), append(restricted, r0), append(datas, d)
	}
	vals := rscript.Run(t, dir, "testdata/pool.R")

	sets := make([]Set, m)
	for k, r := range full {
		sets[k] = Set{Est: r.Estimates, Cov: r.Cov}
	}
	p, err := Pool(sets, Complete{DF: n - 3})
	if err != nil {
		t.Fatal(err)
	}
	pinf, _ := Pool(sets, Complete{DF: math.Inf(1)})
	// Parameter order here: tau, x1, x2; glm models P(y = 1), the upper
	// category, so its intercept is -tau and its slopes are these.
	sign := []float64{-1, 1, 1}
	for j := 0; j < 3; j++ {
		r := vals.Get(t, "coef"+strconv.Itoa(j+1))
		pp := p.P
		near(t, "qbar", sign[j]*p.Estimate[j], r[0], 1e-6)
		near(t, "ubar", p.Within[j*pp+j], r[1], 1e-6)
		near(t, "b", p.Between[j*pp+j], r[2], 1e-6)
		near(t, "t", p.Total[j*pp+j], r[3], 1e-6)
		near(t, "df", p.DF[j], r[4], 1e-6)
		near(t, "riv", p.RIV[j], r[5], 1e-6)
		near(t, "fmi", p.FMI[j], r[6], 1e-6)
		ri := vals.Get(t, "coefinf"+strconv.Itoa(j+1))
		near(t, "df (large sample)", pinf.DF[j], ri[0], 1e-6)
		near(t, "fmi (large sample)", pinf.FMI[j], ri[1], 1e-6)
	}
	// D3: statistics at each set's own estimates and at the pooled ones.
	s0 := make([]Set, m)
	for k, r := range restricted {
		s0[k] = Set{Est: r.Estimates, Cov: r.Cov}
	}
	p0, _ := Pool(s0, Complete{DF: n - 2})
	own, at := make([]float64, m), make([]float64, m)
	for k := range m {
		own[k] = 2 * (full[k].LogLik - restricted[k].LogLik)
		l1, err := fit.PartitionSums(datas[k], mFull, p.Estimate, 0)
		if err != nil {
			t.Fatal(err)
		}
		d0 := &fit.Data{Y: datas[k].Y, J: 2, X: x1, Predictors: []string{"x1"}}
		l0, err := fit.PartitionSums(d0, mRestr, p0.Estimate, 0)
		if err != nil {
			t.Fatal(err)
		}
		at[k] = 2 * (l1.LogLik - l0.LogLik)
	}
	// The likelihood-ratio statistics at each set's own estimates are
	// glm's deviance differences.
	dev1M, dev0M := vals.Get(t, "dev1M"), vals.Get(t, "dev0M")
	for k := range m {
		near(t, "LR statistic at own estimates", own[k], dev0M[k]-dev1M[k], 1e-6)
	}
	// mice evaluates the "pooled" deviances with the intercept re-estimated
	// at the pooled slopes, not at all pooled estimates as D3 is
	// defined; so its D3 is compared on its own deviances (the
	// combination formula), and ours is logged beside it.
	dev1L, dev0L := vals.Get(t, "dev1L"), vals.Get(t, "dev0L")
	miceAt := make([]float64, m)
	for k := range m {
		miceAt[k] = dev0L[k] - dev1L[k]
	}
	d3, err := D3(own, miceAt, 1)
	if err != nil {
		t.Fatal(err)
	}
	ours, err := D3(own, at, 1)
	if err != nil {
		t.Fatal(err)
	}
	r := vals.Get(t, "d3")
	near(t, "D3 statistic", d3.F, r[0], 1e-6)
	near(t, "D3 df1", float64(d3.DF1), r[1], 0)
	near(t, "D3 df2", d3.DF2, r[2], 1e-6)
	near(t, "D3 p", d3.P, r[3], 1e-6)
	near(t, "D3 r", d3.RIV, r[4], 1e-6)
	t.Logf("pooled x2: %.6g (se %.4g, df %.4g, fmi %.4g); D3 at the pooled estimates F(1, %.4g) = %.6g, p = %.4g; with mice's deviances F(1, %.4g) = %.6g", p.Estimate[2], p.SE[2], p.DF[2], p.FMI[2], ours.DF2, ours.F, ours.P, d3.DF2, d3.F)
}

// TestPoolScalar: one quantity pooled on its own is Pool of a one-parameter
// analysis; identical sets give zero between variance and the set's own
// normal interval (infinite degrees of freedom). Against mice's
// pool.scalar with finite complete-data degrees of freedom:
// TestRubinAgainstMiceFrozen (nhanes_test.go) and TestAgainstMice.
func TestPoolScalar(t *testing.T) {
	q, u := []float64{0.21, 0.26, 0.19, 0.24}, []float64{0.0009, 0.0011, 0.001, 0.0012}
	s, err := PoolScalar(q, u, 250)
	if err != nil {
		t.Fatal(err)
	}
	sets := make([]Set, len(q))
	for i := range q {
		sets[i] = Set{Est: []float64{q[i]}, Cov: []float64{u[i]}}
	}
	p, _ := Pool(sets, Complete{DF: 250})
	near(t, "estimate", s.Estimate, p.Estimate[0], 1e-15)
	near(t, "total", s.Total, p.Total[0], 1e-15)
	near(t, "df", s.DF, p.DF[0], 1e-15)
	near(t, "fmi", s.FMI, p.FMI[0], 1e-15)
	lo, hi, pv := s.Interval(0.95)
	h := fit.TQuantile(0.975, s.DF) * s.SE
	near(t, "interval", hi-lo, 2*h, 1e-14)
	near(t, "p", pv, fit.TSurvival2(s.Estimate/s.SE, s.DF), 1e-15)

	same, _ := PoolScalar([]float64{0.3, 0.3, 0.3}, []float64{0.01, 0.01, 0.01}, math.Inf(1))
	if same.Between != 0 || same.RIV != 0 || !math.IsInf(same.DF, 1) {
		t.Errorf("identical sets: %+v", same)
	}
	lo, hi, _ = same.Interval(0.95)
	near(t, "normal interval", hi, 0.3+1.959963984540054*0.1, 1e-12)
	near(t, "normal interval", lo, 0.3-1.959963984540054*0.1, 1e-12)
}

// TestD2: identical statistics give the chi-square test of one set (r = 0,
// infinite denominator degrees of freedom); statistics 1, 4, 9 on 1 df
// (square roots 1, 2, 3) give, worked by hand from the formula,
// r = (4/3) 1, D2 = (14/3 - 2 (4/3)) / (7/3) = 6/7 and v = 2 (7/4)^2 = 49/8;
// with identical sets D2 equals D1 of the same Wald statistic.
func TestD2(t *testing.T) {
	d, err := D2([]float64{7.3, 7.3, 7.3, 7.3}, 3)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "D2 of identical sets", d.F, 7.3/3, 1e-15)
	near(t, "p", d.P, distChi2Survival(7.3, 3), 1e-12)
	if !math.IsInf(d.DF2, 1) || d.RIV != 0 || d.Method != "D2" {
		t.Errorf("identical sets: %+v", d)
	}
	d, _ = D2([]float64{1, 4, 9}, 1)
	near(t, "r", d.RIV, 4.0/3, 1e-15)
	near(t, "D2", d.F, 6.0/7, 1e-15)
	near(t, "v", d.DF2, 49.0/8, 1e-14)
	near(t, "p", d.P, distFSurvival(6.0/7, 1, 49.0/8), 1e-15)

	s := Set{Est: []float64{0.4, -0.2}, Cov: []float64{0.02, 0.005, 0.005, 0.03}}
	p, _ := Pool([]Set{s, s, s}, Complete{DF: math.Inf(1)})
	d1, _ := D1(p, []float64{1, 0, 0, 1}, nil)
	wald := d1.F * 2
	d2, _ := D2([]float64{wald, wald, wald}, 2)
	near(t, "D2 = D1 on identical sets", d2.F, d1.F, 1e-14)
	near(t, "D2 p = D1 p", d2.P, d1.P, 1e-12)

	if d, _ := D2([]float64{0.01, 25, 0.01}, 1); d.F != 0 || d.P != 1 || d.Warnings == "" {
		t.Errorf("negative D2 not set to 0: %+v", d)
	}
	if _, err := D2([]float64{3}, 1); err == nil {
		t.Error("D2 of one set")
	}
	if _, err := D2([]float64{3, math.NaN()}, 1); err == nil {
		t.Error("D2 of a NaN")
	}
}

func distChi2Survival(x float64, k int) float64 {
	return distuv.ChiSquared{K: float64(k)}.Survival(x)
}
func distFSurvival(f float64, k int, v float64) float64 {
	return distuv.F{D1: float64(k), D2: v}.Survival(f)
}

// TestScalarWithoutWithinVariance: a quantity whose variance is 0 in every
// set (a standard error that underflowed) pools without NaN: no spread
// gives the complete-data answer, spread alone gives FMI 1.
func TestScalarWithoutWithinVariance(t *testing.T) {
	s, err := PoolScalar([]float64{0.5, 0.5, 0.5}, []float64{0, 0, 0}, 100)
	if err != nil {
		t.Fatal(err)
	}
	if s.RIV != 0 || s.Lambda != 0 || s.FMI != 2/(s.DF+3) || math.IsNaN(s.DF) || s.SE != 0 {
		t.Errorf("no variance at all: %+v", s)
	}
	s, err = PoolScalar([]float64{0.4, 0.5, 0.6}, []float64{0, 0, 0}, 100)
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsInf(s.RIV, 1) || s.Lambda != 1 || s.FMI != 1 || math.IsNaN(s.DF) || math.Abs(s.Total-(4.0/3)*0.01) > 1e-15 {
		t.Errorf("between variance only: %+v", s)
	}
}

// A linear combination r'theta - c of pooled parameters (a contrast of a
// plan's hypothesis) is Rubin's rules for the sets' own values of
// r'theta - c with their variances r'U_i r: PoolScalar on those, which
// TestAgainstMice checks against mice's pool.scalar.
func TestPooledLinearIsPoolScalar(t *testing.T) {
	sets := []Set{
		{Est: []float64{1.0, -0.5, 0.3}, Cov: []float64{0.04, 0.01, 0, 0.01, 0.09, -0.02, 0, -0.02, 0.05}},
		{Est: []float64{1.2, -0.4, 0.1}, Cov: []float64{0.05, 0.012, 0.001, 0.012, 0.08, -0.01, 0.001, -0.01, 0.06}},
		{Est: []float64{0.9, -0.7, 0.25}, Cov: []float64{0.045, 0.008, 0.002, 0.008, 0.1, -0.015, 0.002, -0.015, 0.055}},
	}
	p, err := Pool(sets, Complete{DF: 120})
	if err != nil {
		t.Fatal(err)
	}
	r, c := []float64{2, 0, -1}, 0.5
	var q, u []float64
	for _, s := range sets {
		v := -c
		for a := range r {
			v += r[a] * s.Est[a]
		}
		w := 0.0
		for a := range r {
			for b := range r {
				w += r[a] * s.Cov[a*3+b] * r[b]
			}
		}
		q, u = append(q, v), append(u, w)
	}
	want, err := PoolScalar(q, u, 120)
	if err != nil {
		t.Fatal(err)
	}
	got := p.Linear(r, c)
	for _, pair := range [][3]any{{"estimate", got.Estimate, want.Estimate}, {"se", got.SE, want.SE}, {"df", got.DF, want.DF}, {"fmi", got.FMI, want.FMI}} {
		if g, w := pair[1].(float64), pair[2].(float64); math.Abs(g-w) > 1e-12*math.Max(1, math.Abs(w)) {
			t.Errorf("%s: %.15g, want %.15g", pair[0], g, w)
		}
	}
}

// TestFSurvivalSmallP: the F tail far out, against base R 4.2 (Debian
// r-base-core): pf(200, 3, 20, lower.tail = FALSE) =
// 4.4477194934823165e-15 (as 1 minus the distribution function it was
// 4.44089e-15, the 20th ulp of 1), and pf(0.5, 3, 20, lower.tail =
// FALSE) = 0.68651861283640314.
func TestFSurvivalSmallP(t *testing.T) {
	for _, c := range []struct{ f, want float64 }{{200, 4.4477194934823165e-15}, {0.5, 0.68651861283640314}} {
		if got := fit.FSurvival(c.f, 3, 20); math.Abs(got-c.want) > 1e-12*c.want {
			t.Errorf("P(F(3, 20) > %g) = %.17g, R gives %.17g", c.f, got, c.want)
		}
	}
}

// TestD3NegativeBetweenPart: statistics at the pooled estimates above
// those at each set's own give a negative r, which D3 sets to 0: the test
// is then the mean statistic at the pooled estimates over k on infinite
// denominator degrees of freedom, and Warnings says so (by hand: r =
// (m+1)/(k(m-1)) (mean own - mean pooled) = 3/1 (1 - 3) = -6).
func TestD3NegativeBetweenPart(t *testing.T) {
	d, err := D3([]float64{1, 1}, []float64{3, 3}, 1)
	if err != nil || d.F != 3 || d.RIV != 0 || !math.IsInf(d.DF2, 1) || !strings.Contains(d.Warnings, "r = -6") {
		t.Errorf("%+v %v", d, err)
	}
	if d, _ := D3([]float64{3, 3}, []float64{1, 1}, 1); d.Warnings != "" {
		t.Errorf("a positive r warns: %q", d.Warnings)
	}
}

// TestD1DF: D1's small-sample denominator (d1DF) is nu* = (nu+1)/(nu+3) nu
// with no between-set variance, tends to the large-sample value as the
// complete-data degrees of freedom grow, is the Barnard-Rubin degrees of
// freedom with one restriction, and where its expression is not defined
// (t = k(m-1) <= 4, or nu* not above 4(1+a)) the smaller of the
// large-sample value and nu*. Values from the definitions (the check
// against mitml is TestRubinAgainstMiceFrozen).
func TestD1DF(t *testing.T) {
	if got, want := d1DF(2, 5, 0, 21), 22.0/24*21; math.Abs(got-want) > 1e-12 {
		t.Errorf("r = 0: %g, want nu* %g", got, want)
	}
	large := pooledTestDF(3, 10, 0.4)
	if got := d1DF(3, 10, 0.4, 1e9); math.Abs(got/large-1) > 1e-3 {
		t.Errorf("nu = 1e9: %g, large-sample %g", got, large)
	}
	if got := d1DF(3, 10, 0.4, 40); !(got < large && got < 40) {
		t.Errorf("nu = 40: %g, not below the large-sample %g and nu", got, large)
	}
	if got, want := d1DF(1, 5, 0.25, 30), BarnardRubinDF(5, 0.2, 30); got != want {
		t.Errorf("one restriction: %g, Barnard-Rubin %g", got, want)
	}
	// m = 3, k = 2: t = 4, undefined.
	if got, want := d1DF(2, 3, 0.5, 20), math.Min(pooledTestDF(2, 3, 0.5), 21.0/23*20); got != want {
		t.Errorf("t = 4: %g, want %g", got, want)
	}
	// nu = 5: nu* = 3.75, below 4(1+a).
	if got, want := d1DF(2, 6, 0.3, 5), math.Min(pooledTestDF(2, 6, 0.3), 6.0/8*5); got != want {
		t.Errorf("nu = 5: %g, want %g", got, want)
	}
	// Clustered: the factor (G-q)/(G-1) and G-q.
	if s, df := (Complete{DF: 11, Clusters: 12}).Joint(3); math.Abs(s-9.0/11) > 1e-15 || df != 9 {
		t.Errorf("Joint(3) of 12 clusters: %g, %g", s, df)
	}
	if s, df := (Complete{DF: 40}).Joint(3); s != 1 || df != 40 {
		t.Errorf("Joint(3) model-based: %g, %g", s, df)
	}
}
