package fit

import (
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"testing"
)

// readHeavyRow reads testdata/cauchy_heavy_row.csv (120 rows simulated by
// us: a 4-category outcome from a latent logistic-like score of x1, x2,
// x3, row 8 of category 1 weighted 1e6, the others 1). With copies, the
// heavy row is repeated instead of weighted, its weight copies ones.
func readHeavyRow(t *testing.T, copies int) *Data {
	t.Helper()
	f, err := os.Open("testdata/cauchy_heavy_row.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	d := &Data{J: 4, Predictors: []string{"x1", "x2", "x3"}}
	for _, r := range recs[1:] {
		v := make([]float64, len(r))
		for i, s := range r {
			if v[i], err = strconv.ParseFloat(s, 64); err != nil {
				t.Fatal(err)
			}
		}
		n, w := 1, v[4]
		if copies > 0 && w > 1 {
			n, w = copies, 1
		}
		for k := 0; k < n; k++ {
			d.Y = append(d.Y, int(v[0])-1)
			d.X = append(d.X, v[1:4]...)
			d.Weights = append(d.Weights, w)
		}
	}
	return d
}

// TestCauchyHeavyRowFinite: with the Cauchy link, one row weighted 1e6
// among rows of weight 1 has a finite maximum (the separation programme
// finds no direction of recession, and for the cumulative comparison that
// proves a maximum, concave or not: programmeDecides); Newton from the usual start
// stopped at a local maximum (log-likelihood -846.480) beside a much
// higher point, which the checks once read as no finite maximum. The fit
// must reach a stationary point above it, and equal the fit of the data
// with the row repeated 1e6 times (frequency weights are copies: the
// log-likelihood is the same sum term by term).
func TestCauchyHeavyRowFinite(t *testing.T) {
	m := Model{Comparison: Cumulative, Link: Cauchy, Effects: []Effect{Parallel, Parallel, Parallel}}
	r, err := Fit(readHeavyRow(t, 0), m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != StatusOK {
		t.Fatalf("status %s: %s", r.Status, r.Message)
	}
	if r.LogLik <= -846.48 || r.MaxAbsScore > 1e-6 {
		t.Fatalf("log-likelihood %.6f, max |score| %g: not the higher maximum", r.LogLik, r.MaxAbsScore)
	}
	if testing.Short() {
		return
	}
	c, err := Fit(readHeavyRow(t, 1000000), m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if c.Status != StatusOK || math.Abs(c.LogLik-r.LogLik) > 1e-6*math.Abs(r.LogLik) {
		t.Fatalf("copies: status %s, log-likelihood %.9f against %.9f", c.Status, c.LogLik, r.LogLik)
	}
	for i := range r.Estimates {
		if d := math.Abs(c.Estimates[i] - r.Estimates[i]); d > 1e-5*math.Max(math.Abs(r.Estimates[i]), r.StdErrors[i]) {
			t.Errorf("%s: copies %g, weight %g", r.ParamNames[i], c.Estimates[i], r.Estimates[i])
		}
	}
}

// A thresholds-only model whose maximum is finite but flat (with the
// Cauchy link, cutpoints far in the tails when one row weighs 1e7) enters
// the likelihood-ratio test with its log-likelihood (LRTest), and the
// overall fit then states that log-likelihood and the pseudo-R2 measures
// made from it rather than n/a beside a statistic computed from it
// (McFadden 1 - ll/ll0 by hand).
func TestOverallFlatNullStatesLogLik(t *testing.T) {
	full := &Result{Name: "full", Status: StatusOK, LogLik: -100, NObs: 50, NParams: 4}
	null := &Result{Name: "null", Status: StatusFlatMaximum, LogLik: -130, NObs: 50, NParams: 3}
	o := OverallFitSpread(full, null, &EtaSpread{})
	if o.NullLogLik != -130 || math.Abs(o.LR.Chi2-60) > 1e-12 || math.Abs(o.McFadden-(1-100.0/130)) > 1e-12 {
		t.Errorf("null log-likelihood %g, LR %g, McFadden %g", o.NullLogLik, o.LR.Chi2, o.McFadden)
	}
}
