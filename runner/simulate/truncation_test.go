package simulate

import (
	"bytes"
	"math"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"ordplan/internal/testsurvey"
	"ordplan/plan"
)

// truncPlan: one numeric predictor x drawn from the normal (mean 1, sd
// 2) with the dictionary range [-1, 4]: a = -1, b = 1.5, so Phi(-1) +
// 1 - Phi(1.5), about 22.5% of the normal, lies outside.
var truncPlan = testsurvey.Plan{
	Seed:       77,
	Data:       "none.csv",
	Categories: `["no", "yes"]`,
	Sections: `predictors: [x]
dictionary:
  x: {range: [-1, 4]}
`,
	Assumptions: `  predictors:
    x: {mean: 1, sd: 2}
  outcomes:
    y:
      proportions: [0.6, 0.4]
      effects: {x: 0.5}
`,
}.YAML()

// TestTruncatedNormalDraws: a normal column with a dictionary range is
// drawn from the normal truncated to the range. Every value drawn lies in
// the range; the share of draws drawn again (outside the range) is within
// 4 binomial standard deviations of the normal's tail probabilities
// below and above the range, taken from gonum's distuv; the column's mean
// and sd are within 4 standard errors of plan.TruncatedNormal's, which
// equal the truncated normal's moments integrated numerically from
// distuv's density (Simpson's rule, 1e-9); the draws, and the counts,
// are the same on a second writing (fixed seeds), and the record says
// what was drawn.
func TestTruncatedNormalDraws(t *testing.T) {
	const n = 100000
	mu, sd, lo, hi := 1.0, 2.0, -1.0, 4.0
	norm := distuv.Normal{Mu: mu, Sigma: sd}
	outside := norm.CDF(lo) + norm.Survival(hi)

	tr := plan.TruncatedNormal(mu, sd, lo, hi)
	// Moments of the truncated normal by Simpson's rule on distuv's density.
	const steps = 20000
	h := (hi - lo) / steps
	var m0, m1, m2 float64
	for i := 0; i <= steps; i++ {
		x := lo + float64(i)*h
		w := 2.0
		switch {
		case i == 0 || i == steps:
			w = 1
		case i%2 == 1:
			w = 4
		}
		f := w * norm.Prob(x) * h / 3
		m0, m1, m2 = m0+f, m1+x*f, m2+x*x*f
	}
	mean, sdNum := m1/m0, math.Sqrt(m2/m0-(m1/m0)*(m1/m0))
	if math.Abs(tr.Outside-outside) > 1e-12 || math.Abs(tr.Mean-mean) > 1e-9 || math.Abs(tr.SD-sdNum) > 1e-9 || math.Abs(m0-(1-outside)) > 1e-9 {
		t.Errorf("TruncatedNormal %+v; distuv: outside %.12g, mean %.12g, sd %.12g (mass %.12g)", tr, outside, mean, sdNum, m0)
	}

	sim, err := New(parsePlan(t, truncPlan))
	if err != nil {
		t.Fatal(err)
	}
	var buf, again bytes.Buffer
	w, err := sim.WriteCounted(&buf, n, 3)
	if err != nil {
		t.Fatal(err)
	}
	w2, err := sim.WriteCounted(&again, n, 3)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(buf.Bytes(), again.Bytes()) || !slices.Equal(w.Redrawn, w2.Redrawn) {
		t.Error("a second writing with the same seeds differs")
	}
	lines := strings.Split(strings.TrimSpace(buf.String()), "\n")
	k := slices.Index(strings.Split(lines[0], ","), "x")
	var xs []float64
	for _, l := range lines[1:] {
		x, err := strconv.ParseFloat(strings.Split(l, ",")[k], 64)
		if err != nil {
			t.Fatal(err)
		}
		xs = append(xs, x)
	}
	if a, b := slices.Min(xs), slices.Max(xs); a < lo || b > hi {
		t.Errorf("drawn x from %g to %g, outside the range [%g, %g]", a, b, lo, hi)
	}
	redrawn := w.Redrawn[slices.IndexFunc(sim.Predictors, func(p Predictor) bool { return p.Column == "x" })]
	draws := n + redrawn
	share := float64(redrawn) / float64(draws)
	if se := math.Sqrt(outside * (1 - outside) / float64(draws)); math.Abs(share-outside) > 4*se {
		t.Errorf("%d of %d draws drawn again (%.5f); the normal's tails outside the range %.5f (4 se %.5f)", redrawn, draws, share, outside, 4*se)
	}
	var s1, s2 float64
	for _, x := range xs {
		s1 += x
		s2 += x * x
	}
	smean := s1 / float64(n)
	ssd := math.Sqrt(s2/float64(n) - smean*smean)
	if math.Abs(smean-tr.Mean) > 4*tr.SD/math.Sqrt(n) || math.Abs(ssd-tr.SD) > 4*tr.SD/math.Sqrt(2*n) {
		t.Errorf("drawn mean %.5f sd %.5f; truncated normal %.5f %.5f", smean, ssd, tr.Mean, tr.SD)
	}
	rec := sim.TruncationRecord(&w, n)
	if len(rec) != 1 || rec[0].Column != "x" || rec[0].Redrawn == nil || *rec[0].Redrawn != redrawn || rec[0].Drawn != draws || rec[0].Outside != tr.Outside || rec[0].Mean != tr.Mean || rec[0].Copula {
		t.Errorf("record %+v", rec)
	}
	// The record gives, beside the truncated normal's moments, those of
	// the values the file holds (sd with n - 1).
	if v := rec[0]; v.Values != n || v.ValuesMean == nil || v.ValuesSD == nil || math.Abs(*v.ValuesMean-smean) > 1e-9*math.Abs(smean) ||
		math.Abs(*v.ValuesSD-ssd*math.Sqrt(float64(n)/float64(n-1))) > 1e-7*ssd {
		t.Errorf("record of the values drawn: %d values, mean %v sd %v; the file's %d values: mean %.9g sd %.9g", v.Values, v.ValuesMean, v.ValuesSD, n, smean, ssd*math.Sqrt(float64(n)/float64(n-1)))
	}
	t.Logf("%d of %d draws drawn again (%.5f), tails %.5f; mean %.5f sd %.5f, truncated normal %.5f %.5f", redrawn, draws, share, outside, smean, ssd, tr.Mean, tr.SD)
}

// A range that leaves out more than half of the stated normal is refused
// by the plan's check: the column drawn would be another than the one
// stated. At the limit (exactly half, the mean at the range's edge) it is
// drawn.
func TestTruncationLeavingOutMostRefused(t *testing.T) {
	src := strings.Replace(truncPlan, "x: {range: [-1, 4]}", "x: {range: [1.5, 9]}", 1)
	_, err := plan.Parse([]byte(src), "trunc.yaml")
	if err == nil || !strings.Contains(err.Error(), `assumptions.predictors.x: a normal distribution with mean 1 and sd 2 lies within "x"'s range [1.5, 9] in the dictionary (dictionary.x.range) only 40.1% of the time`) {
		t.Errorf("got %v", err)
	}
	edge := strings.Replace(truncPlan, "x: {range: [-1, 4]}", "x: {range: [1, 40]}", 1)
	if _, err := New(parsePlan(t, edge)); err != nil {
		t.Errorf("half the normal in the range: %v", err)
	}
}
