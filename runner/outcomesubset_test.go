package runner

import (
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/data"
)

// A subset condition on an outcome's own column is said for that outcome
// alone, with its key and condition; a condition on another column, or on
// another outcome's column, is not.
func TestOutcomeSubsetWarnings(t *testing.T) {
	p := &plan.Plan{Path: "p.yaml",
		Outcomes: []plan.Outcome{{Column: "y"}, {Column: "v"}},
		Subset: []data.Condition{
			{Column: "age", Op: ">=", Number: 18, Key: "subset[0]"},
			{Column: "y", Op: "not_in", Values: []string{"r4"}, Key: "subset[1]"},
		}}
	got := OutcomeSubsetWarnings(p)
	if len(got) != 1 || !strings.HasPrefix(got[0], "outcomes[0] (y): subset[1] (y not in {r4}) chooses rows by the value of the outcome y itself: ") {
		t.Fatalf("warnings %q", got)
	}
	p.Subset[0] = data.Condition{Column: "v", Op: "<", Number: 3, Key: "subset[0]"}
	got = OutcomeSubsetWarnings(p)
	if len(got) != 2 || !strings.HasPrefix(got[1], "outcomes[1] (v): subset[0] (v < 3) chooses rows") || strings.Contains(got[0], "v < 3") {
		t.Fatalf("warnings %q", got)
	}
}
