package render

import (
	"strings"
	"testing"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// TestNearZeroScaleNote: the warning under the candidate models gives the
// reason of every candidate whose constraint group has g near zero
// (fit.Result.NearZeroScale), auxiliary fits left out, with phi_m and
// g_k shown literally in report.html; none without such a fit.
func TestNearZeroScaleNote(t *testing.T) {
	why := "phi of the constrained predictors is near non-identification: g is near zero (p = 0.9837, not below 0.05), where phi_1 = 1; the effects phi_m g_k remain estimated"
	near := &fit.Result{NearZeroScale: []fit.NearZeroScale{{Reason: why}}}
	or := &runner.OutcomeResult{Fits: []*runner.FitEntry{
		{ID: "adjacent/parallel/logit", Result: &fit.Result{}},
		{ID: "adjacent/constrained/logit", Result: near},
		{ID: "adjacent/only-x-parallel/logit", Auxiliary: true, Result: near},
	}}
	got := visibleText(goldmarkHTML(t, nearZeroScaleNote(or)))
	if want := "Warning, near non-identification. In adjacent/constrained/logit, " + why + "."; !strings.Contains(got, want) {
		t.Errorf("note shows\n%s\nwant\n%s", got, want)
	}
	if strings.Count(got, "In adjacent") != 1 {
		t.Errorf("an auxiliary fit is warned of:\n%s", got)
	}
	if nearZeroScaleNote(&runner.OutcomeResult{Fits: or.Fits[:1]}) != "" {
		t.Error("a note without a fit whose g is near zero")
	}
}
