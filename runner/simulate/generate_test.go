package simulate

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// termsPlan states an effect for every kind of term: a log-transformed
// column (per unit of the log), a categorical column under sum coding
// (levels against the reference), an interaction (per design column), a
// spline (values at points) and a treatment-coded 0/1 categorical.
var termsPlan = testsurvey.Plan{
	Seed:       913,
	Categories: `[a, b, c, d]`,
	Sections: `categorical:
  g: {levels: [r, s, t], coding: sum}
predictors:
  - {name: xlog, column: x, log: {shift: 1}}
  - g
  - z
  - {interact: [z, g]}
  - {name: ws, column: w, spline: {knots: [-1, 0, 1]}}
dictionary:
  x: {range: [0, 60]}
  z: {values: [0, 1]}
  w: {range: [-3, 3]}
  g: {}
`,
	Assumptions: `  predictors:
    x: {mean: 12, sd: 8}
    g: {proportions: [0.4, 0.35, 0.25]}
    z: {proportions: [0.5, 0.5]}
    w: {mean: 0, sd: 1}
  outcomes:
    y:
      proportions: [0.2, 0.3, 0.3, 0.2]
      effects:
        xlog: 0.6
        g: {s: 0.5, t: -0.3}
        z: 0.4
        z&g: {z&g.s: 0.45, z&g.t: -0.35}
        ws: {at: [-1.5, 0, 1.5], values: [0, 0.8, 0.4]}
`,
}.YAML()

// simulated is replicate rep of n rows of the plan, as CSV.
func simulated(t *testing.T, p *plan.Plan, n int, rep uint64) []byte {
	t.Helper()
	sim, err := New(p)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := sim.Write(&buf, n, rep); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// fitLarge simulates n rows of the plan and fits its first outcome with
// the given comparison, every term parallel except those in nonparallel.
func fitLarge(t *testing.T, p *plan.Plan, n int, cmp fit.Comparison, nonparallel []string) (*fit.Result, map[string]float64, map[string]float64, []float64) {
	t.Helper()
	csv := simulated(t, p, n, 1)
	path := filepath.Join(t.TempDir(), "sim.csv")
	if err := os.WriteFile(path, csv, 0o644); err != nil {
		t.Fatal(err)
	}
	oc := p.Outcomes[0]
	spec := p.DesignSpec(oc)
	res, _, err := runner.FitOne(runner.SingleFit{DataFile: path, Outcome: oc.Column, Categories: oc.Categories,
		Predictors: p.PredictorsOf(oc), Design: &spec, Approach: cmp, Link: fit.Logit, Nonparallel: nonparallel, Covariance: fit.Observed})
	if err != nil || !res.OK() {
		t.Fatalf("fit: %v", err)
	}
	rec := runner.Record(res)
	// Shares of each category.
	lines := strings.Split(strings.TrimSpace(string(csv)), "\n")
	counts := make([]float64, len(oc.Categories))
	for _, l := range lines[1:] {
		counts[slices.Index(oc.Categories, strings.SplitN(l, ",", 2)[0])]++
	}
	for j := range counts {
		counts[j] /= float64(n)
	}
	return res, rec.Estimates, rec.StdErrors, counts
}

// near checks an estimate against the stated value within 4 standard
// errors (the fit's own, which shrink as 1/sqrt(n)).
func near(t *testing.T, name string, got, se, want float64) {
	t.Helper()
	if !(se > 0) || math.Abs(got-want) > 4*se {
		t.Errorf("%s: estimate %.4f (se %.4f), stated %.4f", name, got, se, want)
	} else {
		t.Logf("%s: estimate %.4f (se %.4f), stated %.4f", name, got, se, want)
	}
}

// proportionsHold checks the simulated shares against the stated ones:
// the sample's binomial error plus the calibration sample's, 4 sds.
func proportionsHold(t *testing.T, got, want []float64, n int) {
	t.Helper()
	for j := range want {
		sd := math.Sqrt(want[j]*(1-want[j])/float64(n)) + math.Sqrt(want[j]*(1-want[j])/CalibrationRows)
		if math.Abs(got[j]-want[j]) > 4*sd {
			t.Errorf("share of category %d: %.4f, stated %.4f (4 sd = %.4f)", j+1, got[j], want[j], 4*sd)
		}
	}
}

// A very large sample recovers the stated effect of every kind of term.
// The coefficients the fit reports under sum coding are derived here by
// hand from the stated level effects: with columns g.s and g.t, level r
// is coded (-1, -1), s (1, 0), t (0, 1), so s - r = 2 b_s + b_t and
// t - r = b_s + 2 b_t; likewise for the interaction at z = 1.
func TestLargeSampleRecoversEveryKindOfTerm(t *testing.T) {
	if testing.Short() {
		t.Skip("200000 rows")
	}
	p := parsePlan(t, termsPlan)
	const n = 200_000
	res, est, se, shares := fitLarge(t, p, n, fit.Cumulative, nil)
	proportionsHold(t, shares, p.Assumptions.Outcomes[0].Proportions, n)
	near(t, "xlog", est["xlog"], se["xlog"], 0.6)
	near(t, "z", est["z"], se["z"], 0.4)
	solve2 := func(ds, dt float64) (float64, float64) { return (2*ds - dt) / 3, (2*dt - ds) / 3 }
	bs, bt := solve2(0.5, -0.3)
	near(t, "g.s", est["g.s"], se["g.s"], bs)
	near(t, "g.t", est["g.t"], se["g.t"], bt)
	near(t, "z&g.s", est["z&g.s"], se["z&g.s"], 0.45)
	near(t, "z&g.t", est["z&g.t"], se["z&g.t"], -0.35)
	// The spline: the fitted curve's differences at the stated points
	// (from the fit's own design), with their delta-method errors.
	k1, k2 := slices.Index(res.ParamNames, "ws.1"), slices.Index(res.ParamNames, "ws.2")
	if k1 < 0 || k2 < 0 {
		t.Fatalf("parameters %v", res.ParamNames)
	}
	basis := func(u float64) [2]float64 {
		// The natural cubic spline basis of runner/design with knots
		// -1, 0, 1, written out: u, and (d_1 - d_2) / (xi_3 - xi_1)^2
		// with d_k(u) = ((u - xi_k)_+^3 - (u - xi_3)_+^3) / (xi_3 - xi_k).
		pos := func(x float64) float64 { return math.Max(x, 0) }
		d := func(xk float64) float64 { return (math.Pow(pos(u-xk), 3) - math.Pow(pos(u-1), 3)) / (1 - xk) }
		return [2]float64{u, (d(-1) - d(0)) / 4}
	}
	P := res.NParams
	for j, at := range []float64{0, 1.5} {
		b0, b1 := basis(-1.5), basis(at)
		g := [2]float64{b1[0] - b0[0], b1[1] - b0[1]}
		got := g[0]*res.Estimates[k1] + g[1]*res.Estimates[k2]
		v := g[0]*g[0]*res.Cov[k1*P+k1] + 2*g[0]*g[1]*res.Cov[k1*P+k2] + g[1]*g[1]*res.Cov[k2*P+k2]
		near(t, "ws("+strconv.FormatFloat(at, 'g', -1, 64)+") - ws(-1.5)", got, math.Sqrt(v), []float64{0.8, 0.4}[j])
	}
}

var generatorPlan = testsurvey.Plan{
	Seed:       4711,
	Categories: `[a, b, c, d]`,
	Sections: `categorical:
  h: {levels: [no, yes]}
predictors: [x, h]
dictionary:
  x: {range: [-5, 5]}
  h: {}
`,
	Approaches: `[COMPARISON]`,
	Effects:    `[parallel, nonparallel]`,
	Assumptions: `  comparison: COMPARISON
  predictors:
    x: {mean: 0.3, sd: 1}
  outcomes:
    y:
      proportions: [0.25, 0.35, 0.25, 0.15]
      effects: {x: 0.7}
      nonparallel:
        h: [{yes: 0.2}, {yes: 0.6}, {yes: 1.0}]
`,
}.YAML()

// Stage and adjacent generating models: a very large sample keeps the
// stated category shares, and the fit of the same comparison, with h
// nonparallel, recovers the stated effects.
func TestStageAndAdjacentGenerators(t *testing.T) {
	if testing.Short() {
		t.Skip("200000 rows")
	}
	for _, cmp := range []fit.Comparison{fit.Stage, fit.Adjacent} {
		t.Run(cmp.String(), func(t *testing.T) {
			p := parsePlan(t, strings.ReplaceAll(generatorPlan, "COMPARISON", cmp.String()))
			const n = 200_000
			_, est, se, shares := fitLarge(t, p, n, cmp, []string{"h"})
			proportionsHold(t, shares, p.Assumptions.Outcomes[0].Proportions, n)
			near(t, "x", est["x"], se["x"], 0.7)
			for m, want := range []float64{0.2, 0.6, 1.0} {
				name := "h.yes[" + strconv.Itoa(m+1) + "]"
				near(t, name, est[name], se[name], want)
			}
		})
	}
}

var corrPlan = testsurvey.Plan{
	Seed:       99,
	Categories: `[a, b, c]`,
	Sections: `predictors: [u, v, w]
dictionary:
  u: {label: U}
  v: {label: V}
  w: {range: [0, 10]}
`,
	Assumptions: `  predictors:
    u: {mean: 5, sd: 2}
    v: {mean: -1, sd: 0.5}
  correlations:
    - {between: [u, v], r: 0.6}
    - {between: [v, w], r: -0.3}
  outcomes:
    y: {proportions: [0.3, 0.4, 0.3], effects: {u: 0.2}}
`,
}.YAML()

// Stated correlations: two normal columns without a range get the stated
// Pearson correlation (the copula keeps normal margins), within 4 of its
// large-sample standard errors (1 - r^2) / sqrt(n); their means and
// standard deviations stay the stated ones; the uniform column keeps its
// range.
func TestCorrelationsRecovered(t *testing.T) {
	const n = 50_000
	lines := strings.Split(strings.TrimSpace(string(simulated(t, parsePlan(t, corrPlan), n, 0))), "\n")
	if lines[0] != "y,u,v,w" {
		t.Fatalf("header %q", lines[0])
	}
	cols := make([][]float64, 3)
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		for k := range cols {
			x, _ := strconv.ParseFloat(f[k+1], 64)
			cols[k] = append(cols[k], x)
		}
	}
	mean := func(x []float64) float64 {
		s := 0.0
		for _, v := range x {
			s += v
		}
		return s / float64(len(x))
	}
	corr := func(a, b []float64) float64 {
		ma, mb := mean(a), mean(b)
		var sab, saa, sbb float64
		for i := range a {
			sab += (a[i] - ma) * (b[i] - mb)
			saa += (a[i] - ma) * (a[i] - ma)
			sbb += (b[i] - mb) * (b[i] - mb)
		}
		return sab / math.Sqrt(saa*sbb)
	}
	r, want := corr(cols[0], cols[1]), 0.6
	if tol := 4 * (1 - want*want) / math.Sqrt(n); math.Abs(r-want) > tol {
		t.Errorf("corr(u, v) = %.4f, stated %.4f (tolerance %.4f)", r, want, tol)
	}
	if m := mean(cols[0]); math.Abs(m-5) > 4*2/math.Sqrt(n) {
		t.Errorf("mean of u %.4f, stated 5", m)
	}
	if rvw := corr(cols[1], cols[2]); !(rvw < -0.2 && rvw > -0.35) {
		t.Errorf("corr(v, w) = %.4f: the normal scores have -0.3, so the uniform margin gives about -0.29", rvw)
	}
	if lo, hi := slices.Min(cols[2]), slices.Max(cols[2]); lo < 0 || hi > 10 {
		t.Errorf("w outside its range: [%g, %g]", lo, hi)
	}
	// Without correlations the draws are the independent ones.
	q := parsePlan(t, strings.Replace(corrPlan, "  correlations:\n    - {between: [u, v], r: 0.6}\n    - {between: [v, w], r: -0.3}\n", "", 1))
	s2, err := New(q)
	if err != nil || len(s2.Correlated) != 0 {
		t.Fatalf("%v %v", err, s2.Correlated)
	}
}

var subsetPlan = testsurvey.Plan{
	Seed:       5150,
	Categories: `[a, b, c]`,
	Sections: `predictors: [x]
subset:
  - {column: age, at_least: 30}
dictionary:
  x: {values: [0, 1]}
  age: {label: Age, unit: years}
`,
	Assumptions: `  predictors:
    age: {mean: 40, sd: 15}
  correlations:
    - {between: [x, age], r: 0.5}
  outcomes:
    y: {proportions: [0.3, 0.4, 0.3], effects: {x: 0.5}}
`,
}.YAML()

// A plan with a subset: the column the subset reads (not a predictor) is
// simulated, and the ordinary reader applies the condition to the
// simulated rows: it keeps P(age >= 30) = 1 - Phi(-2/3) = 0.7475 of
// them, within 4 binomial standard errors.
func TestSubsetAppliedToSimulatedRows(t *testing.T) {
	p := parsePlan(t, subsetPlan)
	const n = 4000
	q := *p
	q.Data.Path = filepath.Join(t.TempDir(), "sim.csv")
	if err := os.WriteFile(q.Data.Path, simulated(t, p, n, 0), 0o644); err != nil {
		t.Fatal(err)
	}
	res, err := runner.Run(&q, runner.Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	ds := res.Outcomes[0].Data
	want := 1 - normalCDF(-2.0/3)
	got := float64(ds.RowsRead-ds.RowsOutside) / n
	if ds.RowsRead != n || math.Abs(got-want) > 4*math.Sqrt(want*(1-want)/n) {
		t.Errorf("kept %d of %d rows (%.4f), want about %.4f", ds.RowsRead-ds.RowsOutside, ds.RowsRead, got, want)
	}
	if ds.N != ds.RowsRead-ds.RowsOutside {
		t.Errorf("used %d rows, kept %d", ds.N, ds.RowsRead-ds.RowsOutside)
	}
}
