package lock

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"ordplan/plan"
)

const basePlan = `version: 1
data:
  file: d.csv
  missing_values: ["", "NA"]
outcomes:
  - column: y
    categories: [low, mid, high]
predictors: [a, b]
models:
  approaches: [cumulative]
  effects: [parallel, nonparallel]
tests: {parallel_lines: [lr]}
rules:
  - reject_unconverged: true
  - reject_if_test_rejects: {test: lr, alpha: 0.05}
  - choose: {by: aic}
`

var frozenAt = time.Date(2026, 12, 1, 9, 30, 0, 0, time.UTC)

// setup writes the plan text src as DIR/p.yaml, freezes basePlan beside
// it and returns the parsed current plan.
func setup(t *testing.T, src string) (*plan.Plan, string) {
	t.Helper()
	return setupFrom(t, basePlan, src)
}

// setupFrom is setup with the frozen plan's text.
func setupFrom(t *testing.T, frozen, src string) (*plan.Plan, string) {
	t.Helper()
	dir := t.TempDir()
	path := filepath.Join(dir, "p.yaml")
	base, err := plan.Parse([]byte(frozen), path)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := Write(New(base, "REG-7", frozenAt, "test"), path, false); err != nil {
		t.Fatal(err)
	}
	p, err := plan.Parse([]byte(src), path)
	if err != nil {
		t.Fatal(err)
	}
	return p, path
}

func TestMatches(t *testing.T) {
	// Comments, key order and spelled-out defaults do not change the
	// canonical form.
	same := strings.Replace(basePlan, "version: 1\n", "version: 1 # registered\ncovariance: observed\n", 1)
	p, _ := setup(t, same)
	st, err := Check(p, false)
	if err != nil {
		t.Fatal(err)
	}
	if st.State != StateMatches || len(st.Changes) != 0 || st.Lock.Registration != "REG-7" {
		t.Fatalf("state %s, changes %v", st.State, st.Changes)
	}
}

func TestChangedRuleWithoutReason(t *testing.T) {
	p, _ := setup(t, strings.Replace(basePlan, "alpha: 0.05}", "alpha: 0.01}", 1))
	st, err := Check(p, false)
	var ue *UnexplainedError
	if !errors.As(err, &ue) {
		t.Fatalf("want an UnexplainedError, got %v", err)
	}
	want := []Explained{{Change: Change{Path: "rules[1].reject_if_test_rejects.alpha", From: "0.05", To: "0.01"}}}
	if len(st.Changes) != 1 || !reflect.DeepEqual(st.Changes[0], want[0]) {
		t.Fatalf("changes %+v, want %+v", st.Changes, want)
	}
	if !strings.Contains(err.Error(), "rules[1].reject_if_test_rejects.alpha: 0.05 -> 0.01") {
		t.Errorf("message does not show the change:\n%v", err)
	}
	// Allowed by the command line: the status says so.
	st, err = Check(p, true)
	if err != nil || st.State != StateUnexplained || !st.Allowed || st.Unexplained() != 1 {
		t.Fatalf("allowed: %v %+v", err, st)
	}
}

// A stated deviation whose key is a misspelling of the changed key is
// pointed out where the run stops, with the key it may mean; a key like
// no changed one gets no guess.
func TestMisspeltDeviationKey(t *testing.T) {
	src := strings.Replace(basePlan, "alpha: 0.05}", "alpha: 0.01}", 1) +
		"deviations:\n  - key: rules[1].reject_if_test_reject.alpha\n    reason: stricter\n  - key: outcomes\n    reason: not changed\n"
	p, _ := setup(t, src)
	_, err := Check(p, false)
	var ue *UnexplainedError
	if !errors.As(err, &ue) {
		t.Fatalf("want an UnexplainedError, got %v", err)
	}
	for _, want := range []string{
		"rules[1].reject_if_test_rejects.alpha: 0.05 -> 0.01",
		`deviations: "rules[1].reject_if_test_reject.alpha" (line 18) explains no change from the frozen plan; did you mean "rules[1].reject_if_test_rejects.alpha", which changed?`,
		`deviations: "outcomes" (line 20) explains no change from the frozen plan` + "\n",
	} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("message lacks %q:\n%v", want, err)
		}
	}
	// A misspelt enclosing key is matched against the changed keys'
	// enclosing keys.
	dv := plan.Deviation{Key: "rule[1]", Line: 3}
	if k := ue.Status.NearestChanged(dv); k != "rules[1]" {
		t.Errorf("nearest changed key to rule[1]: %q, want rules[1]", k)
	}
}

func TestChangedRuleWithReason(t *testing.T) {
	src := strings.Replace(basePlan, "alpha: 0.05}", "alpha: 0.01}", 1) +
		"deviations:\n  - key: rules[1]\n    reason: the registry asked for a stricter test\n  - key: predictors\n    reason: not changed\n"
	p, _ := setup(t, src)
	st, err := Check(p, false)
	if err != nil {
		t.Fatal(err)
	}
	if st.State != StateDeviations || len(st.Changes) != 1 || st.Changes[0].Reason != "the registry asked for a stricter test" {
		t.Fatalf("%+v", st)
	}
	if len(st.Unused) != 1 || st.Unused[0].Key != "predictors" {
		t.Errorf("unused deviations: %+v", st.Unused)
	}
}

func TestInsertedRuleAndListChanges(t *testing.T) {
	src := strings.Replace(basePlan, "  - choose: {by: aic}\n", "  - prefer_simpler: {by: bic}\n", 1)
	src = strings.Replace(src, "[a, b]", "[a, b, c]", 1)
	p, _ := setup(t, src)
	st, _ := Check(p, true)
	var got []string
	for _, c := range st.Changes {
		got = append(got, c.Path+": "+c.From+" -> "+c.To)
	}
	want := []string{
		`predictors: ["a", "b"] -> ["a", "b", "c"]`,
		`rules[2].choose: {"by": "aic", "margin": 0, "otherwise": "stop"} -> (absent)`,
		`rules[2].prefer_simpler: (absent) -> {"by": "bic", "margin": 2, "otherwise": "stop"}`,
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("changes\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

func TestChangedDataDictionary(t *testing.T) {
	// The outcome's categories and the missing-value codes are part of the
	// data's description: changing them is a deviation.
	src := strings.Replace(basePlan, "[low, mid, high]", "[low, high]", 1)
	src = strings.Replace(src, `["", "NA"]`, `["", "NA", "-9"]`, 1)
	p, _ := setup(t, src)
	st, err := Check(p, false)
	if err == nil {
		t.Fatal("a changed data description ran without a stated reason")
	}
	var got []string
	for _, c := range st.Changes {
		got = append(got, c.Path)
	}
	if strings.Join(got, ",") != "data.missing_values,outcomes[0].categories" {
		t.Errorf("changed keys %v", got)
	}
}

func TestChangedDictionaryEntry(t *testing.T) {
	withDict := basePlan + "dictionary:\n  a: {range: [0, 10], unit: mg}\n  b: {values: [0, 1]}\n"
	dir := t.TempDir()
	path := filepath.Join(dir, "p.yaml")
	base, err := plan.Parse([]byte(withDict), path)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := Write(New(base, "", frozenAt, "test"), path, false); err != nil {
		t.Fatal(err)
	}
	changed := strings.Replace(withDict, "[0, 10]", "[0, 20]", 1) +
		"deviations:\n  - key: dictionary.a.range\n    reason: the assay's upper limit was raised before data collection\n"
	p, err := plan.Parse([]byte(changed), path)
	if err != nil {
		t.Fatal(err)
	}
	st, err := Check(p, false)
	if err != nil {
		t.Fatal(err)
	}
	if len(st.Changes) != 1 || st.Changes[0].Path != "dictionary.a.range" || st.Changes[0].From != "[0, 10]" || st.Changes[0].To != "[0, 20]" || st.Changes[0].Reason == "" {
		t.Fatalf("%+v", st.Changes)
	}
}

func TestNoLock(t *testing.T) {
	path := filepath.Join(t.TempDir(), "p.yaml")
	p, err := plan.Parse([]byte(basePlan), path)
	if err != nil {
		t.Fatal(err)
	}
	st, err := Check(p, false)
	if err != nil || st.State != StateNone || st.LockFile != "p.lock.json" {
		t.Fatalf("%v %+v", err, st)
	}
	// A deviation stated without a lock: nothing is frozen (it was said
	// to explain "no change from the frozen plan").
	note := st.UnusedNote(plan.Deviation{Key: "title", Line: 20})
	if want := `deviations: "title" (line 20) explains a change, but nothing is frozen: the plan has no lock file (p.lock.json) whose plan it could depart from; the list is for changes made after ordplan freeze`; note != want {
		t.Errorf("note %q, want %q", note, want)
	}
}

func TestLockNotOverwrittenSilently(t *testing.T) {
	p, path := setup(t, basePlan)
	lp := PathFor(path)
	before, _ := os.ReadFile(lp)
	_, _, err := Write(New(p, "OTHER", frozenAt.Add(time.Hour), "test"), path, false)
	var ee *ExistsError
	if !errors.As(err, &ee) || ee.Old == nil || ee.Old.Registration != "REG-7" {
		t.Fatalf("want an ExistsError naming the old lock, got %v", err)
	}
	after, _ := os.ReadFile(lp)
	if string(before) != string(after) {
		t.Fatal("the lock changed")
	}
	// With replace, the old lock is kept under a new name.
	_, kept, err := Write(New(p, "OTHER", frozenAt.Add(time.Hour), "test"), path, true)
	if err != nil {
		t.Fatal(err)
	}
	if filepath.Base(kept) != "p.lock.json.replaced-20261201T093000Z" {
		t.Errorf("kept as %s", kept)
	}
	if old, _ := os.ReadFile(kept); string(old) != string(before) {
		t.Error("the old lock was not kept byte for byte")
	}
	if f, err := Read(lp); err != nil || f.Registration != "OTHER" {
		t.Errorf("new lock: %v %+v", err, f)
	}
}

// Locks replaced again and again within one second (their frozen_at the
// same) are each kept, under the time and -2, -3: the third replacement
// once failed with "cannot keep the old lock: ... already exists".
func TestLockReplacedWithinOneSecond(t *testing.T) {
	p, path := setup(t, basePlan)
	var kept []string
	for i := range 3 {
		_, k, err := Write(New(p, "R"+string(rune('a'+i)), frozenAt, "test"), path, true)
		if err != nil {
			t.Fatalf("replacement %d: %v", i+1, err)
		}
		kept = append(kept, filepath.Base(k))
	}
	want := []string{"p.lock.json.replaced-20261201T093000Z", "p.lock.json.replaced-20261201T093000Z-2", "p.lock.json.replaced-20261201T093000Z-3"}
	if !slices.Equal(kept, want) {
		t.Errorf("kept as %v, want %v", kept, want)
	}
	for i, k := range kept {
		f, err := Read(filepath.Join(filepath.Dir(path), k))
		if reg := []string{"REG-7", "Ra", "Rb"}[i]; err != nil || f.Registration != reg {
			t.Errorf("%s: %v, want the lock of %s", k, err, reg)
		}
	}
}

// A lock file that is a symbolic link to a file that does not exist is a
// registration lost, said as such, not a plan never frozen.
func TestDanglingLockLink(t *testing.T) {
	path := filepath.Join(t.TempDir(), "p.yaml")
	p, err := plan.Parse([]byte(basePlan), path)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink("gone.json", PathFor(path)); err != nil {
		t.Fatal(err)
	}
	want := "p.lock.json is a symbolic link to gone.json, which does not exist: the plan's registration cannot be read"
	if _, err := Check(p, false); err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("check: %v", err)
	}
	_, _, err = Write(New(p, "", frozenAt, "test"), path, false)
	var ee *ExistsError
	if !errors.As(err, &ee) || !strings.Contains(err.Error(), want) {
		t.Errorf("freeze: %v", err)
	}
}

func TestHandEditedLock(t *testing.T) {
	for _, tc := range []struct{ name, old, new, want string }{
		{"a rule in the canonical form", `"alpha": 0.05`, `"alpha": 0.01`, "lock_checksum does not match"},
		{"the registration", `"REG-7"`, `"REG-8"`, "lock_checksum does not match"},
		{"the time", `09:30:00Z`, `08:30:00Z`, "lock_checksum does not match"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p, path := setup(t, basePlan)
			lp := PathFor(path)
			b, _ := os.ReadFile(lp)
			if !strings.Contains(string(b), tc.old) {
				t.Fatalf("%q not in the lock", tc.old)
			}
			os.WriteFile(lp, []byte(strings.Replace(string(b), tc.old, tc.new, 1)), 0o644)
			_, err := Check(p, true)
			if err == nil || !strings.Contains(err.Error(), "edited by hand") || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("got %v", err)
			}
		})
	}
	// Re-indenting the lock (e.g. by a JSON tool) is not an edit.
	p, path := setup(t, basePlan)
	lp := PathFor(path)
	b, _ := os.ReadFile(lp)
	os.WriteFile(lp, []byte(strings.ReplaceAll(string(b), "  ", "\t")), 0o644)
	if st, err := Check(p, false); err != nil || st.State != StateMatches {
		t.Fatalf("re-indented lock: %v", err)
	}
}

func TestLockBytesAreStable(t *testing.T) {
	p, err := plan.Parse([]byte(basePlan), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	a := New(p, "", frozenAt, "v").Encode()
	b := New(p, "", frozenAt, "v").Encode()
	if string(a) != string(b) {
		t.Fatal("two locks of one plan differ")
	}
	if !strings.Contains(string(a), `"frozen_at": "2026-12-01T09:30:00Z"`) {
		t.Errorf("time not in UTC RFC 3339:\n%s", a)
	}
}

// A rule removed from (or inserted into) the registered list reads as that
// one rule removed (added), not as a change of every rule after it; a rule
// changed after the removal is named by its place in the plan as run.
func TestRemovedAndInsertedRules(t *testing.T) {
	for _, tc := range []struct {
		name, src string
		want      []string
	}{
		{"removed", strings.Replace(basePlan, "  - reject_unconverged: true\n", "", 1), []string{
			`rules[0]: {"reject_unconverged": true} -> (absent)`,
		}},
		{"inserted", strings.Replace(basePlan, "  - choose: {by: aic}\n", "  - reject_negative_probabilities: true\n  - choose: {by: aic}\n", 1), []string{
			`rules[2]: (absent) -> {"reject_negative_probabilities": true}`,
		}},
		{"removed, and a later rule changed", strings.Replace(strings.Replace(basePlan, "  - reject_unconverged: true\n", "", 1), "alpha: 0.05}", "alpha: 0.01}", 1), []string{
			`rules[0].reject_if_test_rejects.alpha: 0.05 -> 0.01`,
			`rules[0]: {"reject_unconverged": true} -> (absent)`,
		}},
		// Moved, the rule is the same rule in another place: one change,
		// not a rule removed and another added.
		{"moved", strings.Replace(basePlan, "  - reject_unconverged: true\n  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n", "  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n  - reject_unconverged: true\n", 1), []string{
			`rules[1]: moved from rules[0], unchanged: {"reject_unconverged": true}`,
		}},
		// Moved and changed, it is the same rule: one change saying where
		// it was and which of its keys changed.
		{"moved and changed", strings.Replace(basePlan, "  - reject_unconverged: true\n  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n", "  - reject_if_test_rejects: {test: lr, alpha: 0.01}\n  - reject_unconverged: true\n", 1), []string{
			`rules[0]: moved from rules[1], changed: reject_if_test_rejects.alpha 0.05 -> 0.01`,
		}},
	} {
		p, _ := setup(t, tc.src)
		st, _ := Check(p, true)
		var got []string
		for _, c := range st.Changes {
			got = append(got, c.Path+": "+c.Transition())
		}
		slices.Sort(got)
		slices.Sort(tc.want)
		if strings.Join(got, "\n") != strings.Join(tc.want, "\n") {
			t.Errorf("%s: changes\n%s\nwant\n%s", tc.name, strings.Join(got, "\n"), strings.Join(tc.want, "\n"))
		}
	}
}

// An item of a list that moved and changed is matched to its old self:
// by its name when it has one (a sensitivity analysis), otherwise by its
// kind and the values it kept, when they are at least as many as those
// that changed and no other item is as close. Two similar rules swapped
// and each changed are two moves; a rule removed and another of its kind
// added elsewhere, or a rule as close to two others, are not matched.
func TestMovedAndChangedItems(t *testing.T) {
	const frozen = `version: 1
data:
  file: d.csv
  missing_values: ["", "NA"]
outcomes:
  - column: y
    categories: [low, mid, high]
predictors: [a, b]
models:
  approaches: [cumulative]
  effects: [parallel, nonparallel]
tests: {parallel_lines: [lr, wald]}
rules:
  - reject_unconverged: true
  - reject_if_test_rejects: {test: lr, alpha: 0.05, against: least_constrained}
  - reject_if_test_rejects: {test: wald, alpha: 0.05, against: next_less_constrained}
  - reject_if_sparse: {per_parameter: 10, smallest_category: 5}
  - choose: {by: aic}
sensitivity:
  - {name: s1, why: one, change: {covariance: sandwich}}
  - {name: s2, why: two, change: {covariance: expected}}
`
	rules := func(list string) string {
		i, j := strings.Index(frozen, "rules:\n"), strings.Index(frozen, "sensitivity:\n")
		return frozen[:i] + "rules:\n" + list + frozen[j:]
	}
	const (
		unconv = "  - reject_unconverged: true\n"
		lr     = "  - reject_if_test_rejects: {test: lr, alpha: 0.05, against: least_constrained}\n"
		wald   = "  - reject_if_test_rejects: {test: wald, alpha: 0.05, against: next_less_constrained}\n"
		sparse = "  - reject_if_sparse: {per_parameter: 10, smallest_category: 5}\n"
		choose = "  - choose: {by: aic}\n"
	)
	for _, tc := range []struct {
		name, src string
		want      []string
	}{
		{"moved past two and changed", rules(unconv + strings.Replace(sparse, "10", "8", 1) + lr + wald + choose), []string{
			`rules[1]: moved from rules[3], changed: reject_if_sparse.per_parameter 10 -> 8`,
		}},
		{"two similar rules swapped, each changed", rules(unconv + strings.Replace(wald, "0.05", "0.01", 1) + strings.Replace(lr, "0.05", "0.01", 1) + sparse + choose), []string{
			`rules[1]: moved from rules[2], changed: reject_if_test_rejects.alpha 0.05 -> 0.01`,
			`rules[2]: moved from rules[1], changed: reject_if_test_rejects.alpha 0.05 -> 0.01`,
		}},
		{"two similar rules swapped, one changed", rules(unconv + wald + strings.Replace(lr, "0.05", "0.01", 1) + sparse + choose), []string{
			`rules[2]: moved from rules[1], changed: reject_if_test_rejects.alpha 0.05 -> 0.01`,
		}},
		{"a rule removed and another of its kind added elsewhere", rules(unconv + wald + sparse + "  - reject_if_test_rejects: {test: score, alpha: 0.01, against: least_constrained}\n" + choose), []string{
			`rules[1]: {"reject_if_test_rejects": {"against": "least_constrained", "alpha": 0.05, "test": "lr"}} -> (absent)`,
			`rules[3]: (absent) -> {"reject_if_test_rejects": {"against": "least_constrained", "alpha": 0.01, "test": "score"}}`,
		}},
		{"a rule removed and one of another kind added elsewhere", rules(unconv + wald + sparse + "  - reject_negative_probabilities: true\n" + choose), []string{
			`rules[1]: {"reject_if_test_rejects": {"against": "least_constrained", "alpha": 0.05, "test": "lr"}} -> (absent)`,
			`rules[3]: (absent) -> {"reject_negative_probabilities": true}`,
		}},
		{"as close to two rules", rules(unconv + sparse + "  - reject_if_test_rejects: {test: lr, alpha: 0.05, against: next_less_constrained}\n" + choose), []string{
			`rules[1]: {"reject_if_test_rejects": {"against": "least_constrained", "alpha": 0.05, "test": "lr"}} -> (absent)`,
			`rules[2]: (absent) -> {"reject_if_test_rejects": {"against": "next_less_constrained", "alpha": 0.05, "test": "lr"}}`,
			`rules[2]: {"reject_if_test_rejects": {"against": "next_less_constrained", "alpha": 0.05, "test": "wald"}} -> (absent)`,
		}},
		{"a named item moved and changed", strings.Replace(frozen, "  - {name: s1, why: one, change: {covariance: sandwich}}\n  - {name: s2, why: two, change: {covariance: expected}}\n", "  - {name: s2, why: two, change: {covariance: expected}}\n  - {name: s1, why: first, change: {covariance: sandwich_plain}}\n", 1), []string{
			`sensitivity[1]: moved from sensitivity[0], changed: why "one" -> "first"; change.covariance "sandwich" -> "sandwich_plain"`,
		}},
		{"a named item renamed and moved", strings.Replace(frozen, "  - {name: s1, why: one, change: {covariance: sandwich}}\n  - {name: s2, why: two, change: {covariance: expected}}\n", "  - {name: s2, why: two, change: {covariance: expected}}\n  - {name: s3, why: one, change: {covariance: sandwich}}\n", 1), []string{
			`sensitivity[0]: {"name": "s1", "why": "one", "change": {"covariance": "sandwich"}} -> (absent)`,
			`sensitivity[1]: (absent) -> {"name": "s3", "why": "one", "change": {"covariance": "sandwich"}}`,
		}},
	} {
		p, _ := setupFrom(t, frozen, tc.src)
		st, err := Check(p, true)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		var got []string
		for _, c := range st.Changes {
			got = append(got, c.Path+": "+c.Transition())
		}
		slices.Sort(got)
		slices.Sort(tc.want)
		if strings.Join(got, "\n") != strings.Join(tc.want, "\n") {
			t.Errorf("%s: changes\n%s\nwant\n%s", tc.name, strings.Join(got, "\n"), strings.Join(tc.want, "\n"))
		}
	}
}

// A key the plan does not write that takes its value from another
// (report.title from title, an outcome's label from its column) changes
// with it: it takes that key's reason, is listed as following it, and is
// no change of its own to explain; the message names only the key the
// plan writes. Written in the plan, it is a change of its own.
func TestDerivedKeyFollowsItsKey(t *testing.T) {
	base := "title: first\n" + basePlan
	changed := strings.Replace(base, "title: first", "title: second", 1)
	changed = strings.Replace(changed, "column: y", "column: y2", 1)
	freeze := func(src string) (*plan.Plan, string) { return setupFrom(t, base, src) }
	p, _ := freeze(changed + "deviations:\n  - key: title\n    reason: a typo\n  - key: outcomes[0].column\n    reason: renamed\n")
	st, err := Check(p, false)
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, c := range st.Changes {
		got = append(got, c.Path+" ("+c.ReasonText("none")+")")
	}
	want := []string{"title (a typo)", "outcomes[0].column (renamed)", "outcomes[0].label (follows outcomes[0].column: renamed)", "report.title (follows title: a typo)"}
	if st.State != StateDeviations || !slices.Equal(got, want) {
		t.Fatalf("state %s, changes %q, want %q", st.State, got, want)
	}
	// No reason: the message lists the keys the plan writes, once each.
	p, _ = freeze(changed)
	_, err = Check(p, false)
	if err == nil || !strings.Contains(err.Error(), "in 2 keys without a stated reason:\n  title: \"first\" -> \"second\"\n  outcomes[0].column: \"y\" -> \"y2\"\nstate the reason") {
		t.Errorf("message: %v", err)
	}
	// report.title written in the plan: a change of its own.
	p, _ = freeze(strings.Replace(base, "title: first", "title: second\nreport: {title: second}", 1) + "deviations:\n  - key: title\n    reason: a typo\n")
	_, err = Check(p, false)
	if err == nil || !strings.Contains(err.Error(), "in 1 key without a stated reason:\n  report.title: \"first\" -> \"second\"\n") {
		t.Errorf("report.title written: %v", err)
	}
}

// TestSelectionStabilityIsRegistered: selection_stability is part of the
// frozen form: added after freezing, or with other resamples or another
// seed, it is a change that needs a reason; a plan without it keeps the
// canonical bytes it had before the key existed (omitted when absent).
func TestSelectionStabilityIsRegistered(t *testing.T) {
	withStability := basePlan + "selection_stability: {resamples: 200, seed: 5}\n"
	p, _ := setup(t, withStability)
	st, err := Check(p, false)
	if err == nil || len(st.Changes) != 1 || st.Changes[0].Path != "selection_stability" || st.Changes[0].From != "(absent)" {
		t.Fatalf("added after freezing: %v %+v", err, st.Changes)
	}
	p, _ = setupFrom(t, withStability, strings.Replace(withStability, "seed: 5", "seed: 6", 1))
	st, err = Check(p, false)
	if err == nil || len(st.Changes) != 1 || st.Changes[0].Path != "selection_stability.seed" {
		t.Fatalf("seed changed: %v %+v", err, st.Changes)
	}
	p, _ = setupFrom(t, withStability, withStability)
	if st, err := Check(p, false); err != nil || st.State != StateMatches {
		t.Fatalf("unchanged: %v %+v", err, st)
	}
	base, err := plan.Parse([]byte(basePlan), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(base.Canonical()), "selection_stability") {
		t.Error("a plan without selection_stability writes it in its canonical form")
	}
}

// TestStabilityDrawIsRegistered: selection_stability.draw is part of the
// frozen form: chosen_model after freezing the bootstrap is a change that
// needs a reason, while draw: bootstrap written out is the default and
// keeps the canonical bytes of a plan frozen before the key existed.
func TestStabilityDrawIsRegistered(t *testing.T) {
	withStability := basePlan + "selection_stability: {resamples: 200, seed: 5}\n"
	p, _ := setupFrom(t, withStability, strings.Replace(withStability, "seed: 5}", "seed: 5, draw: chosen_model}", 1))
	st, err := Check(p, false)
	if err == nil || len(st.Changes) != 1 || st.Changes[0].Path != "selection_stability.draw" {
		t.Fatalf("draw changed: %v %+v", err, st.Changes)
	}
	p, _ = setupFrom(t, withStability, strings.Replace(withStability, "seed: 5}", "seed: 5, draw: bootstrap}", 1))
	if st, err := Check(p, false); err != nil || st.State != StateMatches {
		t.Fatalf("draw: bootstrap written out: %v %+v", err, st)
	}
}

// The count of changes without a stated reason reads with its verb: the
// one change, all of several, or some of them.
func TestUnexplainedOf(t *testing.T) {
	ch := func(reason, follows string) Explained {
		return Explained{Change: Change{Path: "k", Follows: follows}, Reason: reason}
	}
	for _, c := range []struct {
		changes     []Explained
		count, verb string
	}{
		{[]Explained{ch("", "")}, "the 1 change", "has"},
		{[]Explained{ch("", ""), ch("", "")}, "all 2 changes", "have"},
		{[]Explained{ch("", ""), ch("why", ""), ch("", "title"), ch("why", "")}, "1 of the 4 changes", "has"},
		{[]Explained{ch("", ""), ch("", ""), ch("why", "")}, "2 of the 3 changes", "have"},
	} {
		st := &Status{Changes: c.changes}
		if count, verb := st.UnexplainedOf(); count != c.count || verb != c.verb {
			t.Errorf("got %q %q, want %q %q", count, verb, c.count, c.verb)
		}
	}
}

// A plan frozen anew (freeze --replace) carries the replaced locks in its
// status, oldest first, each with the keys in which the plan differs from
// it; with the lock gone, the kept one still says the plan was frozen; a
// kept lock edited by hand is named as unreadable (R16).
func TestReplacedLocksInStatus(t *testing.T) {
	changed := strings.Replace(basePlan, "[a, b]", "[a, b2]", 1)
	p, path := setup(t, changed) // the lock holds basePlan, REG-7
	later := frozenAt.Add(time.Hour)
	if _, _, err := Write(New(p, "REG-8", later, "test"), path, true); err != nil {
		t.Fatal(err)
	}
	st, err := Check(p, false)
	if err != nil || st.State != StateMatches || len(st.Replaced) != 1 {
		t.Fatalf("status %+v: %v", st, err)
	}
	r := st.Replaced[0]
	if r.File != "p.lock.json.replaced-20261201T093000Z" || r.FrozenAt != "2026-12-01T09:30:00Z" || r.Registration != "REG-7" || !slices.Equal(r.Changed, []string{"predictors"}) || r.Error != "" {
		t.Errorf("replaced lock: %+v", r)
	}
	want := "p.lock.json was frozen anew (ordplan freeze --replace): it replaced the lock kept as p.lock.json.replaced-20261201T093000Z (frozen 2026-12-01T09:30:00Z, registration REG-7); the plan run differs from it in 1 key (predictors). The plan counts as registered only from p.lock.json's time; the report says so"
	if got := st.ReplacedNote(r); got != want {
		t.Errorf("note:\n%s\nwant\n%s", got, want)
	}
	// The lock removed: none, but the kept lock is still named.
	os.Remove(PathFor(path))
	st, err = Check(p, false)
	if err != nil || st.State != StateNone || len(st.Replaced) != 1 {
		t.Fatalf("without the lock: %+v: %v", st, err)
	}
	if got := st.ReplacedNote(st.Replaced[0]); !strings.HasPrefix(got, "the plan has no lock file (p.lock.json), but an earlier lock of it is kept beside it: p.lock.json.replaced-20261201T093000Z (frozen 2026-12-01T09:30:00Z, registration REG-7); the plan run differs from it in 1 key (predictors). Was the lock removed?") {
		t.Errorf("note without the lock: %s", got)
	}
	// A kept lock edited by hand.
	kept := filepath.Join(filepath.Dir(path), st.Replaced[0].File)
	b, _ := os.ReadFile(kept)
	os.WriteFile(kept, []byte(strings.Replace(string(b), "REG-7", "REG-9", 1)), 0o644)
	st, _ = Check(p, false)
	if len(st.Replaced) != 1 || !strings.HasPrefix(st.Replaced[0].Error, "the lock file was edited by hand") || !strings.HasPrefix(st.ReplacedNote(st.Replaced[0]), "p.lock.json.replaced-20261201T093000Z, a lock of this plan that ordplan freeze --replace kept, cannot be read: the lock file was edited by hand") {
		t.Errorf("an edited kept lock: %+v", st.Replaced)
	}
}

// A lock saved again by an editor that adds a byte order mark, or turns
// the line ends into CRLF (a Windows checkout), is read as the same lock;
// a change of its content is still an edit (R2).
func TestLockSavedWithBOMAndCRLF(t *testing.T) {
	p, path := setup(t, basePlan)
	lp := PathFor(path)
	b, _ := os.ReadFile(lp)
	saved := "\ufeff" + strings.ReplaceAll(string(b), "\n", "\r\n")
	if err := os.WriteFile(lp, []byte(saved), 0o644); err != nil {
		t.Fatal(err)
	}
	if st, err := Check(p, false); err != nil || st.State != StateMatches {
		t.Fatalf("a lock with a BOM and CRLF: %+v %v", st, err)
	}
	os.WriteFile(lp, []byte(strings.Replace(saved, "REG-7", "REG-8", 1)), 0o644)
	if _, err := Check(p, false); err == nil || !strings.Contains(err.Error(), "edited by hand") {
		t.Errorf("an edited lock with a BOM: %v", err)
	}
}

// A rule moved and changed takes a reason stated for it under either of
// its keys, or one for each key that changed in it (at its place now or
// then); with a key of it left without one, it has no reason.
func TestMovedAndChangedRuleReasons(t *testing.T) {
	frozen := strings.Replace(basePlan, "{test: lr, alpha: 0.05}", "{test: lr, alpha: 0.05, applies_to: [parallel]}", 1)
	moved := strings.Replace(frozen, "  - reject_unconverged: true\n  - reject_if_test_rejects: {test: lr, alpha: 0.05, applies_to: [parallel]}\n", "  - reject_if_test_rejects: {test: lr, alpha: 0.01, against: next_less_constrained, applies_to: [parallel]}\n  - reject_unconverged: true\n", 1)
	for _, tc := range []struct{ name, devs, want string }{
		{"the item now", "  - {key: \"rules[0]\", reason: R}\n", "R"},
		{"the item then", "  - {key: \"rules[1]\", reason: R}\n", "R"},
		{"each key", "  - {key: \"rules[0].reject_if_test_rejects.alpha\", reason: A}\n  - {key: \"rules[1].reject_if_test_rejects.against\", reason: B}\n", "B; A"},
		{"one key of two", "  - {key: \"rules[0].reject_if_test_rejects.alpha\", reason: A}\n", ""},
	} {
		p, _ := setupFrom(t, frozen, moved+"deviations:\n"+tc.devs)
		st, _ := Check(p, true)
		if len(st.Changes) != 1 || st.Changes[0].Moved != "rules[1]" || len(st.Changes[0].Keys) != 2 || st.Changes[0].Reason != tc.want {
			t.Errorf("%s: %+v", tc.name, st.Changes)
		}
		if tc.want != "" && len(st.Unused) != 0 {
			t.Errorf("%s: unused %+v", tc.name, st.Unused)
		}
	}
}
