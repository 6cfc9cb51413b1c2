package runner

import (
	"strings"
	"testing"

	"ordplan/runner/fit"
)

// TestPoolNegativesCountsPooledEstimates: the pooled fit's rows with a
// negative category probability are counted at the pooled estimates on
// each imputed set's rows, not copied from set 1's own fit. The model is a
// nonparallel cumulative logit with boundaries -1 and 1 and slopes 1 and
// -1: its two linear predictors cross where 2 - 2sx < 0 (by hand, s = 1
// or -1 whichever sign the slopes enter with), i.e. sx > 1, at 2 of the
// rows x = -3, -2, 0, 2, 3 and at 3 of the rows x = -4, -3, -2, 0, 2, 3, 4
// for either s.
func TestPoolNegativesCountsPooledEstimates(t *testing.T) {
	set := func(xs ...float64) *fit.Data {
		y := make([]int, len(xs))
		for i := range y {
			y[i] = i % 3
		}
		return &fit.Data{Y: y, J: 3, X: xs, Predictors: []string{"x"}}
	}
	model := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{fit.Nonparallel}}
	pooled := func(status fit.Status, neg int) *fit.Result {
		return &fit.Result{Model: model, Estimates: []float64{-1, 1, 1, -1}, Status: status, NegativeRows: neg, NRows: 5,
			Message: "set 1's own message"}
	}
	// Set 1's own fit had 99 negative rows: that count must not survive.
	r := pooled(fit.StatusNegativeProbs, 99)
	if err := poolNegatives(r, []*fit.Data{set(-3, -2, 0, 2, 3), set(-4, -3, -2, 0, 2, 3, 4)}); err != nil {
		t.Fatal(err)
	}
	if r.Status != fit.StatusNegativeProbs || r.NegativeRows != 3 || r.NRows != 7 || !strings.Contains(r.Message, "imputed set 2") {
		t.Errorf("got status %s, %d of %d rows (%q); want ok_negative_probabilities, 3 of 7 rows in imputed set 2", r.Status, r.NegativeRows, r.NRows, r.Message)
	}
	// Set 1's fit crossed, the pooled estimates do not on any set's rows.
	r = pooled(fit.StatusNegativeProbs, 2)
	if err := poolNegatives(r, []*fit.Data{set(-1, -0.5, 0, 0.5, 1), set(-0.9, 0, 0.9)}); err != nil {
		t.Fatal(err)
	}
	if r.Status != fit.StatusOK || r.NegativeRows != 0 || r.Message != "" {
		t.Errorf("got status %s, %d rows (%q); want ok, 0 rows, no message", r.Status, r.NegativeRows, r.Message)
	}
	// Set 1's fit was fine, the pooled estimates cross on set 1's rows.
	r = pooled(fit.StatusOK, 0)
	r.Message = ""
	if err := poolNegatives(r, []*fit.Data{set(-3, 0, 3), set(0, 0.5, 0.2)}); err != nil {
		t.Fatal(err)
	}
	if r.Status != fit.StatusNegativeProbs || r.NegativeRows != 1 || r.NRows != 3 || !strings.Contains(r.Message, "imputed set 1") {
		t.Errorf("got status %s, %d of %d rows (%q); want ok_negative_probabilities, 1 of 3 rows in imputed set 1", r.Status, r.NegativeRows, r.NRows, r.Message)
	}
}
