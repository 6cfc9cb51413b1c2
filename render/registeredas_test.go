package render

import (
	"fmt"
	"strings"
	"testing"

	"ordplan/plan/lock"
	"ordplan/runner"
)

// TestMethodsNameTheRegistration: the methods paragraph's sentence on the
// plan says whether it was frozen, and when, under which registration and
// canonical hash, and how the run departs from it; a plan without a lock
// is not presented as registered.
func TestMethodsNameTheRegistration(t *testing.T) {
	f := &lock.File{FrozenAt: "2026-01-02T03:04:05Z", Registration: "REG-7", SHA256: "0123456789abcdef0123"}
	for _, tc := range []struct {
		st   *lock.Status
		want string
	}{
		{nil, ""},
		{&lock.Status{State: lock.StateNone, LockFile: "p.lock.json"}, "; the plan was not frozen in a lock file, so the report cannot show when it was written"},
		{&lock.Status{State: lock.StateMatches, Lock: f}, "; frozen on 2026-01-02T03:04:05Z, registration REG-7, canonical SHA-256 0123456789ab"},
		{&lock.Status{State: lock.StateDeviations, Lock: f, Changes: []lock.Explained{{Change: lock.Change{Path: "seed"}, Reason: "why"}}},
			"; frozen on 2026-01-02T03:04:05Z, registration REG-7, canonical SHA-256 0123456789ab; the plan run departs from the frozen one in 1 key (seed), each with a stated reason listed at the head of the report"},
		{&lock.Status{State: lock.StateUnexplained, Lock: f, Changes: []lock.Explained{{Change: lock.Change{Path: "seed"}, Reason: "why"}, {Change: lock.Change{Path: "title"}}}},
			"; the plan run departs from the frozen one in 2 keys (seed; title), 1 of them without a stated reason"},
		{&lock.Status{State: lock.StateMatches, Lock: f, Replaced: []lock.Replaced{{File: "p.lock.json.replaced-x", Error: "edited by hand"},
			{File: "p.lock.json.replaced-y", FrozenAt: "2025-12-01T00:00:00Z", Registration: "REG-6", Changed: []string{"seed", "title"}}}},
			"; frozen on 2026-01-02T03:04:05Z, registration REG-7, canonical SHA-256 0123456789ab; the plan was first frozen on 2025-12-01T00:00:00Z (registration REG-6) and frozen anew since (the plan run differs from that form in 2 keys; listed at the head of the report)"},
		{&lock.Status{State: lock.StateNone, LockFile: "p.lock.json", Replaced: []lock.Replaced{{File: "p.lock.json.replaced-y", FrozenAt: "2025-12-01T00:00:00Z", Changed: []string{}}}},
			"; its lock file is missing, though a lock of an earlier form of the plan, frozen on 2025-12-01T00:00:00Z, lies beside it (the plan run has that form, key for key)"},
	} {
		got := registeredAs(&runner.Result{Registration: tc.st})
		if tc.want == "" && got != "" || !strings.HasSuffix(got, tc.want) {
			t.Errorf("%+v: got %q, want it to end %q", tc.st, got, tc.want)
		}
	}
	// The keys that changed are named (an item moved, with its place in
	// the frozen plan), at most maxMethodsKeys of them, and the runs of
	// the registered plan the folder held before the plan was changed.
	var many []lock.Explained
	for i := range maxMethodsKeys + 2 {
		many = append(many, lock.Explained{Change: lock.Change{Path: fmt.Sprintf("k%d", i)}, Reason: "why"})
	}
	many[0].Moved, many[0].Path = "rules[2]", "rules[3]"
	got := registeredAs(&runner.Result{Registration: &lock.Status{State: lock.StateDeviations, Lock: f, Changes: many}, EarlierRegistered: []runner.EarlierRun{{}}})
	if want := "; the plan run departs from the frozen one in 10 keys (rules[3], moved from rules[2]; k1; k2; k3; k4; k5; k6; k7; 2 more), each with a stated reason listed at the head of the report; the output folder held 1 run of the registered plan unchanged, whose results existed before the plan was changed, so the departures may have been chosen after seeing them"; !strings.HasSuffix(got, want) {
		t.Errorf("got %q, want it to end %q", got, want)
	}
	// Runs made before the plan was frozen are said after the lock.
	before := []runner.EarlierLockRun{{State: lock.StateNone}, {State: lock.StateMatches, LockSHA256: "aa"}, {State: lock.StateNone}}
	got = registeredAs(&runner.Result{Registration: &lock.Status{State: lock.StateMatches, Lock: f}, UnderEarlierLocks: before})
	if want := "; frozen on 2026-01-02T03:04:05Z, registration REG-7, canonical SHA-256 0123456789ab; the output folder held 2 runs of the plan made before it was frozen, whose results existed then, listed at the head of the report"; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
}

// A rehearsal's report calls what it shows the registered analysis only
// when the plan matches its lock.
func TestRehearsedAnalysis(t *testing.T) {
	for _, tc := range []struct {
		st   *lock.Status
		want string
	}{
		{&lock.Status{State: lock.StateMatches}, "the registered analysis"},
		{&lock.Status{State: lock.StateDeviations}, "the analysis of this plan, as changed since it was registered (see Deviations from the registered plan),"},
		{&lock.Status{State: lock.StateUnexplained}, "the analysis of this plan, as changed since it was registered (see Deviations from the registered plan),"},
		{&lock.Status{State: lock.StateNone}, "the analysis of this plan (not registered: it has no lock)"},
		{nil, "the analysis of this plan"},
	} {
		if got := rehearsedAnalysis(tc.st); got != tc.want {
			t.Errorf("%+v: %q, want %q", tc.st, got, tc.want)
		}
	}
}

// Under the deviations table the report says that key paths count from
// 0, with a rule as example when one changed: rules[3] is rule 4.
func TestFromZero(t *testing.T) {
	ch := func(paths ...string) []lock.Explained {
		var out []lock.Explained
		for _, p := range paths {
			out = append(out, lock.Explained{Change: lock.Change{Path: p}})
		}
		return out
	}
	for _, tc := range []struct {
		changes []lock.Explained
		want    string
	}{
		{ch("seed", "models.links"), ""},
		{ch("outcomes[0].categories", "rules[3].reject_if_test_rejects.alpha"), "Key paths count the items of a list from 0: `rules[3]` is rule 4 in this report's lists of rules."},
		{ch("predictors[5]"), "Key paths count the items of a list from 0: `predictors[5]` is item 6 of the plan's `predictors`."},
		{[]lock.Explained{{Change: lock.Change{Path: "sensitivity[1]", Moved: "sensitivity[0]"}}}, "Key paths count the items of a list from 0: `sensitivity[1]` is item 2 of the plan's `sensitivity`."},
	} {
		if got := fromZero(tc.changes); got != tc.want {
			t.Errorf("%v: %q, want %q", tc.changes, got, tc.want)
		}
	}
}

// The decision log says how a rule departs from the registered plan (a key
// changed, moved, added, or put in a registered rule's place), and which
// registered rules were removed and so not applied.
func TestRuleDeparturesInTheDecisionLog(t *testing.T) {
	ex := func(c lock.Change, reason string) lock.Explained { return lock.Explained{Change: c, Reason: reason} }
	for _, tc := range []struct {
		changes []lock.Explained
		want    string
	}{
		{nil, ""},
		{[]lock.Explained{ex(lock.Change{Path: "rules[3].reject_if_test_rejects.alpha", From: "0.05", To: "0.01"}, "stricter.")},
			" **Not as registered:** changed after the plan was frozen (`rules[3].reject_if_test_rejects.alpha`: `0.05` → `0.01`); stated reason: stricter (see Deviations from the registered plan)."},
		{[]lock.Explained{ex(lock.Change{Path: "rules[2]", From: "{}", To: "{}", Moved: "rules[1]", Keys: []lock.Change{{Path: "a", From: "1", To: "2"}}}, "")},
			" **Not as registered:** moved from `rules[1]` and changed after the plan was frozen (`a`: `1` → `2`); no stated reason (see Deviations from the registered plan)."},
		{[]lock.Explained{ex(lock.Change{Path: "rules[1].choose", From: `{"by": "aic"}`, To: lock.Absent}, "r"), ex(lock.Change{Path: "rules[1].prefer_simpler", From: lock.Absent, To: `{"by": "bic"}`}, "r")},
			" **Not as registered:** put after the plan was frozen in the place of the registered rule `{\"choose\": {\"by\": \"aic\"}}`; stated reason: r (see Deviations from the registered plan)."},
	} {
		if got := ruleSinceFrozen(tc.changes); got != tc.want {
			t.Errorf("%+v:\n got %q\nwant %q", tc.changes, got, tc.want)
		}
	}
	st := &lock.Status{Changes: []lock.Explained{
		ex(lock.Change{Path: "rules[2]", From: `{"reject_unconverged": true}`, To: lock.Absent}, "not needed."),
		ex(lock.Change{Path: "rules[3]", From: `{"x": 1}`, To: `{"x": 1}`, Moved: "rules[0]"}, ""),
		ex(lock.Change{Path: "rules[4]", From: lock.Absent, To: `{"y": 1}`}, ""),
	}}
	if got, want := removedRules(st), "**Not applied: a rule of the registered plan, removed after the plan was frozen** (see Deviations from the registered plan): `{\"reject_unconverged\": true}` (`rules[2]` of the registered plan; stated reason: not needed)."; got != want {
		t.Errorf("removedRules:\n got %q\nwant %q", got, want)
	}
}
