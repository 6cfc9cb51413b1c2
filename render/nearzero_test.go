package render

import (
	"strings"
	"testing"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// TestNearZeroScaleNote: the warning under the candidate models names
// every candidate whose constraint group has g near zero
// (fit.Result.NearZeroScale), auxiliary fits left out, in one clause each,
// then says once what it means, with phi_m and g_k shown literally in
// report.html; none without such a fit.
func TestNearZeroScaleNote(t *testing.T) {
	nz := fit.NearZeroScale{Predictors: []string{"arm", "sex_F"}, Test: fit.Test{OK: true, Chi2: 0.0327, DF: 2, P: 0.98377}, PhiAt: 4, LargestPhi: 16.17, LargestPhiSE: 89.44}
	grouped := nz
	grouped.Group = "g_1"
	or := &runner.OutcomeResult{Fits: []*runner.FitEntry{
		{ID: "adjacent/parallel/logit", Result: &fit.Result{}},
		{ID: "adjacent/constrained/logit", Result: &fit.Result{NearZeroScale: []fit.NearZeroScale{nz}}},
		{ID: "adjacent/only-x-parallel/logit", Auxiliary: true, Result: &fit.Result{NearZeroScale: []fit.NearZeroScale{nz}}},
		{ID: "cumulative/constrained/logit", Result: &fit.Result{NearZeroScale: []fit.NearZeroScale{grouped}}},
	}}
	got := visibleText(goldmarkHTML(t, nearZeroScaleNote(or)))
	want := "Warning, phi near non-identification: in adjacent/constrained/logit, g of arm and sex_F is near zero (Wald test of g = 0: chi-square 0.033 on 2 df, p = 0.9838; phi_4 = 16.2, standard error 89.4); " +
		"in cumulative/constrained/logit, g of group g_1 (arm and sex_F) is near zero (Wald test of g = 0: chi-square 0.033 on 2 df, p = 0.9838; phi_4 = 16.2, standard error 89.4). A constraint group's g, its slopes in equation 1 (where phi_1 = 1), counts as near zero when the Wald test of g = 0 does not reject at 0.05;"
	if !strings.Contains(got, want) || strings.Count(got, "only-x") != 0 || !strings.Contains(got, "phi_m g_k remain estimated.") {
		t.Errorf("note shows\n%s\nwant it to hold\n%s", got, want)
	}
	if nearZeroScaleNote(&runner.OutcomeResult{Fits: or.Fits[:1]}) != "" {
		t.Error("a note without a fit whose g is near zero")
	}
}
