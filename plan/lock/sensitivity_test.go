package lock

import (
	"errors"
	"strings"
	"testing"
)

const withSensitivity = basePlan + `sensitivity:
  - name: sandwich_errors
    why: The observed information may understate the errors.
    change:
      covariance: sandwich
  - name: without_low_b
    why: Rows with b below 0 were measured otherwise.
    change:
      subset:
        - {column: b, at_least: 0}
`

// The sensitivity analyses are part of the registered plan: a change to
// one after registration is a deviation like any other, named at its key
// and refused without a stated reason.
func TestSensitivityChangesAreDeviations(t *testing.T) {
	src := strings.Replace(withSensitivity, "at_least: 0", "at_least: 1", 1)
	p, _ := setupFrom(t, withSensitivity, src)
	st, err := Check(p, false)
	var ue *UnexplainedError
	if !errors.As(err, &ue) {
		t.Fatalf("want an UnexplainedError, got %v", err)
	}
	if len(st.Changes) != 1 || st.Changes[0].Path != "sensitivity[1].change.subset[0].at_least" || st.Changes[0].From != "0" || st.Changes[0].To != "1" {
		t.Fatalf("changes %+v", st.Changes)
	}
	// With a stated reason it is a deviation.
	p, _ = setupFrom(t, withSensitivity, src+"deviations:\n  - key: sensitivity[1]\n    reason: the cut-off was misread\n")
	if st, err = Check(p, false); err != nil || st.State != StateDeviations || st.Changes[0].Reason != "the cut-off was misread" {
		t.Fatalf("%v %+v", err, st)
	}
	// An analysis added after registration, or one removed, is a change too.
	p, _ = setup(t, withSensitivity)
	st, _ = Check(p, true)
	if len(st.Changes) != 1 || st.Changes[0].Path != "sensitivity" || st.Changes[0].From != "(absent)" {
		t.Fatalf("added: %+v", st.Changes)
	}
	p, _ = setupFrom(t, withSensitivity, basePlan)
	st, _ = Check(p, true)
	if len(st.Changes) != 1 || st.Changes[0].Path != "sensitivity" || st.Changes[0].To != "(absent)" {
		t.Fatalf("removed: %+v", st.Changes)
	}
	// Two analyses that changed places are the same analyses, moved: the
	// list's order is a change, but neither analysis is added or changed
	// since the plan was frozen (one read as added was called not
	// registered in the report). A stated reason may name either place.
	swapped := strings.Replace(withSensitivity, "  - name: sandwich_errors\n    why: The observed information may understate the errors.\n    change:\n      covariance: sandwich\n", "", 1) + "  - name: sandwich_errors\n    why: The observed information may understate the errors.\n    change:\n      covariance: sandwich\n"
	p, _ = setupFrom(t, withSensitivity, swapped+"deviations:\n  - key: sensitivity[0]\n    reason: the subset first\n")
	st, err = Check(p, false)
	if err != nil || len(st.Changes) != 1 || st.Changes[0].Path != "sensitivity[1]" || st.Changes[0].Moved != "sensitivity[0]" || st.Changes[0].Reason != "the subset first" {
		t.Fatalf("moved: %v %+v", err, st.Changes)
	}
	for i := range 2 {
		if got := st.SensitivityChanges(i); len(got) != 0 {
			t.Errorf("moved analysis %d: changes %+v", i, got)
		}
	}
	// Moved and changed, it is the same analysis changed since the plan
	// was frozen (not one added): its changes are those of its keys.
	p, _ = setupFrom(t, withSensitivity, strings.Replace(swapped, "covariance: sandwich\n", "covariance: sandwich_plain\n", 1))
	st, _ = Check(p, true)
	if len(st.Changes) != 1 || st.Changes[0].Moved != "sensitivity[0]" || len(st.Changes[0].Keys) != 1 || st.Changes[0].Keys[0].Path != "change.covariance" {
		t.Fatalf("moved and changed: %+v", st.Changes)
	}
	if got := st.SensitivityChanges(1); len(got) != 1 || SensitivityAdded(got) {
		t.Errorf("moved and changed analysis: changes %+v", got)
	}
	if got := st.SensitivityChanges(0); len(got) != 0 {
		t.Errorf("the analysis that kept its place: changes %+v", got)
	}
	// Its why is part of it.
	p, _ = setupFrom(t, withSensitivity, strings.Replace(withSensitivity, "otherwise.", "otherwise", 1))
	st, _ = Check(p, true)
	if len(st.Changes) != 1 || st.Changes[0].Path != "sensitivity[1].why" {
		t.Fatalf("why: %+v", st.Changes)
	}
}

// SensitivityChanges takes, for the analysis at an index of the plan, the
// whole list added, its item added or a key of it changed; an item
// removed is named by its index in the frozen list and is left out, and
// without a lock there is nothing.
func TestSensitivityChangesOfAnAnalysis(t *testing.T) {
	st := &Status{Lock: &File{}, Changes: []Explained{
		{Change: Change{Path: "sensitivity[0]", From: `{"name": "a"}`, To: Absent}},
		{Change: Change{Path: "sensitivity[0].why", From: `"x"`, To: `"y"`}, Reason: "typo"},
		{Change: Change{Path: "sensitivity[1]", From: Absent, To: `{"name": "c"}`}},
		{Change: Change{Path: "sensitivity[10].name", From: `"d"`, To: `"e"`}},
	}}
	if got := st.SensitivityChanges(0); len(got) != 1 || got[0].Path != "sensitivity[0].why" || SensitivityAdded(got) {
		t.Errorf("analysis 0: %+v", got)
	}
	if got := st.SensitivityChanges(1); len(got) != 1 || !SensitivityAdded(got) {
		t.Errorf("analysis 1: %+v", got)
	}
	if got := st.SensitivityChanges(2); len(got) != 0 {
		t.Errorf("analysis 2: %+v", got)
	}
	whole := &Status{Lock: &File{}, Changes: []Explained{{Change: Change{Path: "sensitivity", From: Absent, To: `[{"name": "a"}]`}}}}
	if got := whole.SensitivityChanges(0); len(got) != 1 || !SensitivityAdded(got) {
		t.Errorf("the list added: %+v", got)
	}
	var none *Status
	if got := none.SensitivityChanges(0); got != nil {
		t.Errorf("no status: %+v", got)
	}
}

// RuleChanges takes, for the rule at an index of the plan, the rule added
// there, moved there (changed or not) or a key of it changed; a rule
// removed (named by its frozen index) is left out.
func TestRuleChanges(t *testing.T) {
	st := &Status{Lock: &File{}, Changes: []Explained{
		{Change: Change{Path: "rules[0]", From: `{"a": 1}`, To: Absent}},
		{Change: Change{Path: "rules[1].choose.by", From: `"aic"`, To: `"bic"`}},
		{Change: Change{Path: "rules[2]", From: Absent, To: `{"b": 1}`}},
		{Change: Change{Path: "rules[3]", From: `{"c": 1}`, To: `{"c": 1}`, Moved: "rules[4]"}},
		{Change: Change{Path: "rules[10].x", From: "1", To: "2"}},
	}}
	for i, want := range []string{"", "rules[1].choose.by", "rules[2]", "rules[3]", ""} {
		got := st.RuleChanges(i)
		if want == "" && len(got) != 0 || want != "" && (len(got) != 1 || got[0].Path != want) {
			t.Errorf("rule %d: %+v, want %q", i, got, want)
		}
	}
	var none *Status
	if got := none.RuleChanges(0); got != nil {
		t.Errorf("no status: %+v", got)
	}
}

// A registered sensitivity analysis the plan no longer has under its name
// (removed, or renamed) is named with the reason stated for its key in the
// frozen plan; one that moved or changed is not.
func TestRemovedSensitivity(t *testing.T) {
	removed := strings.Replace(withSensitivity, "  - name: sandwich_errors\n    why: The observed information may understate the errors.\n    change:\n      covariance: sandwich\n", "", 1)
	p, _ := setupFrom(t, withSensitivity, removed+"deviations:\n  - key: sensitivity[0]\n    reason: not needed\n")
	st, err := Check(p, false)
	if err != nil || len(st.RemovedSensitivity) != 1 || st.RemovedSensitivity[0] != (RemovedAnalysis{Name: "sandwich_errors", Key: "sensitivity[0]", Reason: "not needed"}) {
		t.Fatalf("removed: %v %+v", err, st.RemovedSensitivity)
	}
	renamed := strings.Replace(withSensitivity, "name: without_low_b", "name: b_at_least_0", 1)
	p, _ = setupFrom(t, withSensitivity, renamed)
	st, _ = Check(p, true)
	if len(st.RemovedSensitivity) != 1 || st.RemovedSensitivity[0].Name != "without_low_b" || st.RemovedSensitivity[0].Reason != "" {
		t.Fatalf("renamed: %+v", st.RemovedSensitivity)
	}
	p, _ = setupFrom(t, withSensitivity, strings.Replace(withSensitivity, "at_least: 0", "at_least: 1", 1))
	st, _ = Check(p, true)
	if len(st.RemovedSensitivity) != 0 {
		t.Fatalf("changed: %+v", st.RemovedSensitivity)
	}
}
