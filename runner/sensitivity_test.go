package runner

import (
	"strings"
	"testing"
)

// A rerun with --previous says which sensitivity analyses are new or
// gone, and under which one the chosen model changed or it could not be
// run.
func TestSensitivityChanges(t *testing.T) {
	a, b := "cumulative/parallel/logit", "adjacent/parallel/logit"
	rec := func(name, err string, chosen *string) SensitivityRecord {
		return SensitivityRecord{Name: name, Error: err, Outcomes: []SensitivityOutcomeRecord{{Outcome: "y", Chosen: chosen}}}
	}
	prev := []SensitivityRecord{rec("s1", "", &a), rec("s2", "", &a), rec("gone", "", &a), rec("s3", "", &a)}
	cur := []SensitivityRecord{rec("s1", "", &a), rec("s2", "", &b), rec("s3", "no rows", nil), rec("new", "", &a)}
	got := strings.Join(sensitivityChanges(prev, cur), "\n")
	want := strings.Join([]string{
		"Sensitivity analysis s2: y: the chosen model changed from cumulative/parallel/logit to adjacent/parallel/logit.",
		"Sensitivity analysis s3 could not be run this time.",
		"Sensitivity analysis new is new.",
		"Sensitivity analysis gone is no longer in the plan.",
	}, "\n")
	if got != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
}
