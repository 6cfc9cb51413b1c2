package fit

import (
	"math"
	"strings"
	"testing"
)

// Sampling weights have no scale: weights normalized to sum to 1 describe
// the same sample as weights summing to the population, and the
// pseudo-likelihood's estimating equations sum_i w_i s_i = 0 are the same
// up to that constant, so the estimates and the sandwich errors are too.
// With Options.Sampling a fit counts rows, not the weights' sum: weights
// summing to 1 are fitted (frequency weights summing to 1 are one
// observation and are refused), and the calibration table has the groups
// of the rows (General Social Survey extract, Long 1997; weights
// invented).
func TestSamplingWeightsHaveNoScale(t *testing.T) {
	base := gssData(t)
	w, norm := make([]float64, base.N()), make([]float64, base.N())
	total := 0.0
	for i := range w {
		w[i] = 0.5 + float64(i%7)/3
		total += w[i]
	}
	for i := range w {
		norm[i] = w[i] / total
	}
	m := metaModels[0]
	fitWith := func(weights []float64, opt Options) (*Result, error) {
		d := *base
		d.Weights = weights
		return Fit(&d, m, opt)
	}
	a, err := fitWith(w, Options{Sampling: true})
	if err != nil || !a.OK() {
		t.Fatalf("weights as given: %v %v", a, err)
	}
	b, err := fitWith(norm, Options{Sampling: true})
	if err != nil || !b.OK() {
		t.Fatalf("weights summing to 1: %v %v", b, err)
	}
	if _, err := fitWith(norm, Options{}); err == nil || !strings.Contains(err.Error(), "parameters but only 1.0") {
		t.Errorf("frequency weights summing to 1: %v, want the refusal of one observation", err)
	}
	da, db := *base, *base
	da.Weights, db.Weights = w, norm
	va, _, err1 := SandwichEstimate(&da, a, Sandwich, nil, true)
	vb, _, err2 := SandwichEstimate(&db, b, Sandwich, nil, true)
	if err1 != nil || err2 != nil {
		t.Fatal(err1, err2)
	}
	P := len(a.Estimates)
	for j := range a.Estimates {
		if math.Abs(a.Estimates[j]-b.Estimates[j]) > 1e-8*math.Max(1, math.Abs(a.Estimates[j])) {
			t.Errorf("%s: %v with the weights, %v normalized", a.ParamNames[j], a.Estimates[j], b.Estimates[j])
		}
		if sa, sb := math.Sqrt(va[j*P+j]), math.Sqrt(vb[j*P+j]); math.Abs(sa-sb) > 1e-8*sa {
			t.Errorf("%s: sandwich error %v with the weights, %v normalized", a.ParamNames[j], sa, sb)
		}
	}
	la, err1 := LipsitzTest(&da, a, 0, Options{Sampling: true})
	lb, err2 := LipsitzTest(&db, b, 0, Options{Sampling: true})
	if err1 != nil || err2 != nil || la.Table.Groups != 10 || lb.Table.Groups != 10 {
		t.Errorf("calibration groups: %v %v (%v, %v), want 10 on %d rows either way", la.Table.Groups, lb.Table.Groups, err1, err2, base.N())
	}
}
