package runner

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A model whose verdict changed reads in order: what it was in the earlier
// run, then what it is now, each with its reason.
func TestChangesWording(t *testing.T) {
	dir := t.TempDir()
	prev := &Decisions{Outcomes: []OutcomeDecisions{{Outcome: "y", Final: map[string]Verdict{
		"cumulative/partial/logit": {Model: "cumulative/partial/logit", Kept: false, Reason: "rejected: likelihood-ratio test against cumulative/nonparallel/logit: chi2(3) = 20.1, p < 0.0001 < alpha 0.05"},
	}}}}
	b, err := MarshalStable(prev)
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "decisions.json"), b, 0o644)
	cur := &Decisions{Outcomes: []OutcomeDecisions{{Outcome: "y", Final: map[string]Verdict{
		"cumulative/partial/logit": {Model: "cumulative/partial/logit", Kept: true, Reason: "chosen: BIC 901.010 (smallest 901.010), 12 parameters"},
	}}}}
	lines, err := Changes(dir, cur)
	if err != nil {
		t.Fatal(err)
	}
	want := "y: cumulative/partial/logit: in the earlier run rejected (likelihood-ratio test against cumulative/nonparallel/logit: chi2(3) = 20.1, p < 0.0001 < alpha 0.05); in this run chosen (BIC 901.010 (smallest 901.010), 12 parameters)."
	if !strings.Contains(strings.Join(lines, "\n"), want) {
		t.Errorf("got:\n%s\nwant a line:\n%s", strings.Join(lines, "\n"), want)
	}
}
