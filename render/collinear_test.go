package render

import (
	"strings"
	"testing"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// TestCollinearNotesEscapedOnce: the near-collinearity warning under the
// candidate models is one paragraph with a clause per flagged term
// naming every model that flags it (not one line per model), and term names holding Markdown
// ('*', '_') show literally in report.html (the reference is CommonMark's
// rendering by the converter report.html uses); so does the chosen
// model's note.
func TestCollinearNotesEscapedOnce(t *testing.T) {
	flag := func(f float64, terms ...string) *fit.Result {
		r := &fit.Result{}
		for _, n := range terms {
			r.Collinear = append(r.Collinear, fit.Inflation{Term: n, Factor: f})
		}
		return r
	}
	or := &runner.OutcomeResult{Fits: []*runner.FitEntry{
		{ID: "cumulative/parallel/logit", Result: flag(250, "dose*age", "_x_")},
		{ID: "cumulative/nonparallel/logit", Result: flag(400, "dose*age")},
		{ID: "cumulative/only-x-parallel/logit", Auxiliary: true, Result: flag(900, "dose*age")},
		{ID: "stage/parallel/probit", Result: flag(120, "z")},
	}}
	note := collinearNote(or)
	if strings.Count(note, "the slopes of") != 3 || strings.Count(note, fit.CollinearMeaning) != 1 {
		t.Fatalf("want one clause per term (3) and the meaning once:\n%s", note)
	}
	wants := []string{
		"the slopes of dose*age have variance inflation 250 to 400 in models cumulative/parallel/logit and cumulative/nonparallel/logit;",
		"the slopes of _x_ have variance inflation 250 in model cumulative/parallel/logit;",
		"the slopes of z have variance inflation 120 in model stage/parallel/probit;",
	}
	got := visibleText(goldmarkHTML(t, note))
	for _, w := range wants {
		if !strings.Contains(got, strings.TrimSuffix(w, ";")) {
			t.Errorf("note shows\n%s\nwant it to hold\n%s", got, w)
		}
	}
	if collinearNote(&runner.OutcomeResult{Fits: or.Fits[3:3]}) != "" {
		t.Error("a note without flagged terms")
	}
	r := flag(250, "dose*age", "_x_")
	r.Collinear[1].Sets = []int{1, 3}
	got = visibleText(goldmarkHTML(t, r.CollinearNote(mdCode)))
	if want := "the slopes of dose*age and _x_ have variance inflation 250, 250 (imputed sets 1 and 3);"; !strings.Contains(got, want) {
		t.Errorf("chosen note shows\n%s\nwant\n%s", got, want)
	}
}
