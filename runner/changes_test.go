package runner

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/plan/lock"
)

// A model whose verdict changed reads in order: what it was in the earlier
// run, then what it is now, each with its reason.
func TestChangesWording(t *testing.T) {
	dir := t.TempDir()
	prev := &Decisions{Program: "ordplan", Outcomes: []OutcomeDecisions{{Outcome: "y", Final: map[string]Verdict{
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

// TestChangesOfData: the data of a plan are updated (one value fixed, a
// category recoded in some rows) and the plan run again with --previous.
// The choice stays; the list says how the category counts changed and how
// far the chosen model's estimates moved, in the earlier run's standard
// errors, and the hypotheses' p-values. The largest move is found here by
// hand from the two runs' estimates; the counts are counted from the files.
func TestChangesOfData(t *testing.T) {
	dir := t.TempDir()
	write := func(recode int) {
		var b strings.Builder
		b.WriteString("x,g,y\n")
		for i := range 200 {
			y := 1 + (i*7+i%11)%3
			if i < recode && y == 2 {
				y = 3
			}
			fmt.Fprintf(&b, "%d,%d,%d\n", i%11, i%2, y)
		}
		if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	src := `version: 1
data: {file: d.csv}
outcomes: [{column: y, categories: ["1", "2", "3"]}]
predictors: [x, g]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
tests: {parallel_lines: [wald]}
rules:
  - reject_unconverged: true
  - choose: {by: aic}
inference: {hypotheses: ["g = 0"]}
`
	write(0)
	p := planIn(t, dir, src)
	before := BuildDecisions(runPlan(t, p, 1))
	prev := filepath.Join(dir, "prev")
	os.Mkdir(prev, 0o755)
	b, err := MarshalStable(before)
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(prev, "decisions.json"), b, 0o644)
	write(30)
	after := BuildDecisions(runPlan(t, planIn(t, dir, src), 1))
	lines, err := Changes(prev, after)
	if err != nil {
		t.Fatal(err)
	}
	got := strings.Join(lines, "\n")
	// Counts: rows 0..29 with y = 2 became 3.
	var moved int
	for i := range 30 {
		if 1+(i*7+i%11)%3 == 2 {
			moved++
		}
	}
	c0, c1 := before.Outcomes[0].Counts, after.Outcomes[0].Counts
	if c1[1] != c0[1]-float64(moved) || c1[2] != c0[2]+float64(moved) {
		t.Fatalf("counts %v -> %v, %d rows recoded", c0, c1, moved)
	}
	want := fmt.Sprintf("y: counts per category 1 %g, 2 %g, 3 %g (was %g, %g, %g).", c1[0], c1[1], c1[2], c0[0], c0[1], c0[2])
	if !strings.Contains(got, want) {
		t.Errorf("no line %q in:\n%s", want, got)
	}
	id := "cumulative/parallel/logit"
	pf, of := fitDecision(before.Outcomes[0], id), fitDecision(after.Outcomes[0], id)
	worst, at := 0.0, ""
	for name, e := range of.Estimates {
		if d := math.Abs(e-pf.Estimates[name]) / pf.StdErrors[name]; d > worst {
			worst, at = d, name
		}
	}
	if !strings.Contains(got, fmt.Sprintf("y: %s, chosen in both runs: its estimates moved by at most %.3f standard errors (of the earlier run), the most %s (", id, worst, at)) {
		t.Errorf("no line on the chosen model's estimates (largest move %.3f at %s) in:\n%s", worst, at, got)
	}
	if !strings.Contains(got, `y: hypothesis "g = 0" in `+id+": p ") {
		t.Errorf("no line on the hypothesis in:\n%s", got)
	}
	// The same data again: nothing changed.
	same, err := Changes(prev, before)
	if err != nil {
		t.Fatal(err)
	}
	if len(same) != 1 || same[0] != "No decision changed." {
		t.Errorf("the same decisions: %q", same)
	}
}

// A parameter without a positive standard error in the earlier run (a
// fixed or aliased one) has no scale to count its move in: it is left out
// rather than reported as a raw difference in "standard errors". Expected
// by hand: b moved 0.3 with se 0.1, i.e. 3 standard errors; c moved 50 with
// se 0.
func TestChosenChangesSkipsParametersWithoutScale(t *testing.T) {
	ll0, ll1 := -100.0, -99.0
	mk := func(b, c float64, ll *float64) OutcomeDecisions {
		return OutcomeDecisions{Fits: []FitDecision{{ID: "m", FitRecord: FitRecord{LogLik: ll,
			Estimates: map[string]float64{"b": b, "c": c}, StdErrors: map[string]float64{"b": 0.1, "c": 0}}}}}
	}
	lines := chosenChanges("y", "m", mk(1, 0, &ll0), mk(1.3, 50, &ll1), false)
	if len(lines) != 1 || !strings.Contains(lines[0], "at most 3.000 standard errors") || !strings.Contains(lines[0], "the most b ") {
		t.Errorf("got %q", lines)
	}
}

// RecordChanges names every input file of run.json that changed (the data
// file or each part, the new-rows file, each imputed set), and the
// program, command line and time, and says nothing of what is the same or
// what the earlier record did not hold.
func TestRecordChangesNamesEachInput(t *testing.T) {
	ref := func(file, h string) DataRef { return DataRef{File: file, SHA256: h} }
	base := func() *RunRecord {
		return &RunRecord{Version: "1", Plan: PlanRef{SHA256: "p"}, Seed: 1, GoVersion: "go1", Platform: "linux/amd64", Command: "ordplan run a.yaml",
			Data:    &DataRef{SHA256: "d", Parts: []DataRef{ref("p1.csv", "1"), ref("p2.csv", "2")}},
			NewRows: &DataRef{File: "nr.csv", SHA256: "n"}, Imputed: []DataRef{ref("i1.csv", "a"), ref("i2.csv", "b")}}
	}
	cases := []struct {
		name string
		edit func(r *RunRecord)
		want string
	}{
		{"same", func(*RunRecord) {}, ""},
		{"a part", func(r *RunRecord) { r.Data.SHA256, r.Data.Parts[1].SHA256 = "d2", "x" }, "the part p2.csv changed"},
		{"a part added", func(r *RunRecord) {
			r.Data.SHA256 = "d3"
			r.Data.Parts = append(r.Data.Parts, ref("p3.csv", "3"))
		}, "the part p3.csv is new"},
		{"parts dropped", func(r *RunRecord) { r.Data.SHA256, r.Data.Parts = "d4", r.Data.Parts[:0] }, "the parts p1.csv and p2.csv are no longer read"},
		{"parts in another order", func(r *RunRecord) {
			r.Data.SHA256 = "d5"
			r.Data.Parts[0], r.Data.Parts[1] = r.Data.Parts[1], r.Data.Parts[0]
		}, "the parts are read in another order"},
		{"a file for parts", func(r *RunRecord) { r.Data = &DataRef{File: "all.csv", SHA256: "w"} }, "the data changed from parts p1.csv, p2.csv to the file all.csv"},
		{"new rows", func(r *RunRecord) { r.NewRows.SHA256 = "n2" }, "the new-rows file nr.csv changed"},
		{"no new rows", func(r *RunRecord) { r.NewRows = nil }, "the new-rows file nr.csv is no longer read"},
		{"an imputed set", func(r *RunRecord) { r.Imputed[0].SHA256 = "z" }, "the imputed set i1.csv changed"},
		{"the program and command", func(r *RunRecord) { r.Version, r.Command = "2", "ordplan run a.yaml --previous x" },
			"the program version changed (1 -> 2); the command line changed (ordplan run a.yaml -> ordplan run a.yaml --previous x)"},
		{"the time", func(r *RunRecord) { r.Timestamp = "2026-12-04T00:00:00Z" }, "the time of the run, which report.timestamp writes into the outputs"},
	}
	for _, c := range cases {
		now := base()
		c.edit(now)
		if got := strings.Join(RecordChanges(base(), now), "; "); got != c.want {
			t.Errorf("%s: %q, want %q", c.name, got, c.want)
		}
	}
	// A data file, by name; an earlier record without a command line (an
	// older program's) is not said to differ in it.
	was, now := base(), base()
	was.Data, now.Data = &DataRef{File: "d.csv", SHA256: "1"}, &DataRef{File: "d.csv", SHA256: "2"}
	was.Command = ""
	if got := strings.Join(RecordChanges(was, now), "; "); got != "the data file d.csv changed" {
		t.Errorf("data file: %q", got)
	}
	// Two plans without a lock (base.yaml, then base2.yaml) have no
	// registration to differ in: it was said to have changed, as the
	// names of their absent lock files differ. A plan frozen since has.
	was, now = base(), base()
	was.Registration = &RegistrationRecord{State: "none", LockFile: "base.lock.json"}
	now.Registration = &RegistrationRecord{State: "none", LockFile: "base2.lock.json"}
	if got := RecordChanges(was, now); len(got) != 0 {
		t.Errorf("two plans without a lock: %q", got)
	}
	now.Registration = &RegistrationRecord{State: "matches", LockFile: "base.lock.json", CanonicalSHA256: "c"}
	if got := strings.Join(RecordChanges(was, now), "; "); got != "the plan's registration (its comparison with the lock file) changed" {
		t.Errorf("a plan frozen since: %q", got)
	}
}

// A move under 0.001 standard errors is "in the last digits only" when it
// can be rounding alone (the same rows and counts, the log-likelihood the
// same to 1e-9); a real change of the data that moves the estimates as
// little is not called rounding: the log-likelihoods are given instead.
// Expected by hand: b moves 1e-5 with se 0.1, i.e. 1e-4 standard errors.
func TestChosenChangesRoundingOrTinyChange(t *testing.T) {
	mk := func(ll float64, rows int) OutcomeDecisions {
		return OutcomeDecisions{RowsUsed: rows, Counts: []float64{4, 6}, Fits: []FitDecision{{ID: "m", FitRecord: FitRecord{LogLik: &ll,
			Estimates: map[string]float64{"b": 1}, StdErrors: map[string]float64{"b": 0.1}}}}}
	}
	moved := func(ll float64, rows int) OutcomeDecisions {
		o := mk(ll, rows)
		o.Fits[0].Estimates = map[string]float64{"b": 1.00001}
		return o
	}
	if lines := chosenChanges("y", "m", mk(-100, 10), moved(-100-1e-12, 10), true); len(lines) != 1 || !strings.HasSuffix(lines[0], "in the last digits only.") {
		t.Errorf("rounding: %q", lines)
	}
	for name, now := range map[string]OutcomeDecisions{"value changed": moved(-100.25, 10), "row added": moved(-100-1e-12, 11)} {
		lines := chosenChanges("y", "m", mk(-100, 10), now, true)
		if len(lines) != 1 || strings.Contains(lines[0], "last digits") || !strings.Contains(lines[0], "less than 0.001 standard errors (of the earlier run); log-likelihood -100 -> ") {
			t.Errorf("%s: %q", name, lines)
		}
	}
	// A value changed in its last digits (5.2 made 5.2000001): the same
	// number of rows and counts, the log-likelihood the same to 1e-9,
	// but the fingerprints show other rows: not rounding, and the two
	// log-likelihoods are written with the digits that tell them apart.
	lines := chosenChanges("y", "m", mk(-100, 10), moved(-100-1e-11, 10), false)
	if len(lines) != 1 || strings.Contains(lines[0], "last digits") || !strings.HasSuffix(lines[0], "log-likelihood -100 -> -100.00000000001.") {
		t.Errorf("a value changed in its last digits: %q", lines)
	}
}

// A plan changed between two runs: --previous names each key of the
// canonical form (run.json's plan.canonical) that changed with both
// values, as a lock's comparison does (the command's test:
// TestPreviousNamesPlanKeys); a plan whose canonical form is the same (a comment added) is
// said to differ in its wording only; an earlier record without the
// canonical form (an older program's) gives the hashes alone. Expected
// by hand from the two forms.
func TestPlanKeyChanges(t *testing.T) {
	was := json.RawMessage(`{"title": "T", "tests": {"alpha": 0.05}, "rules": [{"choose": {"by": "aic"}}]}`)
	now := json.RawMessage(`{"title": "T", "tests": {"alpha": 0.01}, "rules": [{"choose": {"by": "bic"}}]}`)
	if got := planKeyChanges(was, now); got != `: tests.alpha 0.05 -> 0.01; rules[0].choose.by "aic" -> "bic"` {
		t.Errorf("keys: %q", got)
	}
	if got := planKeyChanges(was, was); !strings.Contains(got, "only its wording changed") {
		t.Errorf("the same form: %q", got)
	}
	if got := planKeyChanges(nil, now); got != "" {
		t.Errorf("an older record: %q", got)
	}
	// The same in the words a rerun into the folder says (RecordChanges).
	rec := func(sum string, canon json.RawMessage) *RunRecord {
		return &RunRecord{Version: "1", Plan: PlanRef{SHA256: sum, Canonical: canon}}
	}
	for _, c := range []struct {
		was, now *RunRecord
		want     string
	}{
		{rec("a", was), rec("b", now), `the plan changed (tests.alpha 0.05 -> 0.01; rules[0].choose.by "aic" -> "bic")`},
		{rec("a", was), rec("b", was), "the plan's wording changed (not its canonical form)"},
		{rec("a", nil), rec("b", now), "the plan changed"},
	} {
		if got := strings.Join(RecordChanges(c.was, c.now), "; "); got != c.want {
			t.Errorf("RecordChanges: %q, want %q", got, c.want)
		}
	}
}

// The list of --previous says when the plan's registration changed: a lock
// removed or added, a plan that departs from its lock where it matched
// it, a lock frozen anew; two runs without a lock, or alike, say nothing.
func TestChangesOfRegistration(t *testing.T) {
	none := &RegistrationRecord{State: "none", LockFile: "p.lock.json"}
	matches := &RegistrationRecord{State: "matches", LockFile: "p.lock.json", FrozenAt: "2026-12-01T09:00:00Z", CanonicalSHA256: "aaaaaaaaaaaaaaaa"}
	departs := &RegistrationRecord{State: "deviations", LockFile: "p.lock.json", FrozenAt: "2026-12-01T09:00:00Z", CanonicalSHA256: "aaaaaaaaaaaaaaaa",
		Changes: []lock.Explained{{Change: lock.Change{Path: "predictors"}, Reason: "renamed"}, {Change: lock.Change{Path: "report.title", Follows: "title"}}}}
	forced := &RegistrationRecord{State: "unexplained", LockFile: "p.lock.json", FrozenAt: "2026-12-01T09:00:00Z", CanonicalSHA256: "aaaaaaaaaaaaaaaa",
		Changes: []lock.Explained{{Change: lock.Change{Path: "rules[1].choose.by"}}}, AllowedUnexplained: true}
	anew := &RegistrationRecord{State: "matches", LockFile: "p.lock.json", FrozenAt: "2026-12-01T09:00:00Z", CanonicalSHA256: "bbbbbbbbbbbbbbbb"}
	anewKept := &RegistrationRecord{State: "matches", LockFile: "p.lock.json", FrozenAt: "2026-12-02T10:00:00Z", CanonicalSHA256: "bbbbbbbbbbbbbbbb",
		ReplacedLocks: []lock.Replaced{{File: "p.lock.json.replaced-20261201T090000Z", FrozenAt: "2026-12-01T09:00:00Z", SHA256: "aaaaaaaaaaaaaaaa"}}}
	for _, c := range []struct {
		was, now *RegistrationRecord
		want     string
	}{
		{matches, none, "The plan's registration changed: in the earlier run the plan matched its lock p.lock.json (frozen 2026-12-01T09:00:00Z); in this run the plan had no lock file (p.lock.json)."},
		{none, departs, "The plan's registration changed: in the earlier run the plan had no lock file (p.lock.json); in this run the plan departed from its lock p.lock.json (frozen 2026-12-01T09:00:00Z) in 2 keys (predictors, report.title), each with a stated reason."},
		{departs, forced, "in this run the plan departed from its lock p.lock.json (frozen 2026-12-01T09:00:00Z) in 1 key (rules[1].choose.by), 1 without a stated reason (let through by --allow-unregistered-changes)."},
		{matches, anew, "in the earlier run the plan matched its lock p.lock.json (frozen 2026-12-01T09:00:00Z), canonical sha256 aaaaaaaaaaaa...; in this run the plan matched its lock p.lock.json (frozen 2026-12-01T09:00:00Z), canonical sha256 bbbbbbbbbbbb..."},
		{matches, anewKept, "in this run the plan matched its lock p.lock.json (frozen 2026-12-02T10:00:00Z). The plan was frozen anew between the two runs (the earlier run's lock is kept as p.lock.json.replaced-20261201T090000Z): the earlier run is not a run of the plan as registered now, whose registration counts from 2026-12-02T10:00:00Z."},
		{matches, matches, ""},
		{none, &RegistrationRecord{State: "none", LockFile: "q.lock.json"}, ""},
		{nil, matches, ""}, // an earlier run that did not record it
	} {
		got := registrationChange(c.was, c.now)
		if c.want == "" && got != "" || !strings.Contains(got, c.want) {
			t.Errorf("got  %q\nwant %q", got, c.want)
		}
	}
	// Through the list: the line comes after the plan's own changes.
	lines := ChangesFrom(&Decisions{Program: "ordplan", Registration: matches}, nil, &Decisions{Registration: none}, nil)
	if len(lines) == 0 || !strings.HasPrefix(lines[0], "The plan's registration changed:") {
		t.Errorf("ChangesFrom: %q", lines)
	}
}

// EarlierLockRuns lists, when the plan has a lock, the folder's runs made
// with none: before the plan was first frozen (the earliest of its lock
// and the kept locks) or after, while its lock was missing, when their
// run.json records a time; with no time recorded, neither is claimed.
// With no lock now, runs without one are not listed.
func TestEarlierLockRunsBeforeRegistration(t *testing.T) {
	rec := func(dec, at string) RunRecord {
		return RunRecord{MadeBy: "run", Timestamp: at, Data: &DataRef{SHA256: "d1"}, Outputs: map[string]string{"decisions.json": dec},
			Registration: &RegistrationRecord{State: lock.StateNone, LockFile: "p.lock.json"}}
	}
	records := []RunRecord{rec("c", "2026-12-01T08:59:59Z"), rec("b", "2026-12-01T10:00:00Z"), rec("a", ""),
		{MadeBy: "rehearse", Outputs: map[string]string{"decisions.json": "e"}, Registration: &RegistrationRecord{State: lock.StateNone}}}
	st := &lock.Status{State: lock.StateMatches, LockFile: "p.lock.json", Lock: &lock.File{SHA256: "bbbb", FrozenAt: "2026-12-02T09:00:00Z"},
		Replaced: []lock.Replaced{{File: "p.lock.json.replaced-20261201T090000Z", FrozenAt: "2026-12-01T09:00:00Z", SHA256: "aaaa"}}}
	got := EarlierLockRuns(st, "d1", records)
	var desc []string
	for _, r := range got {
		s := r.DecisionsSHA256 + " " + r.State + fmt.Sprint(" same=", r.SameData)
		if r.BeforeFirstLock != nil {
			s += fmt.Sprint(" before=", *r.BeforeFirstLock)
		}
		desc = append(desc, s)
	}
	want := "a none same=true; b none same=true before=false; c none same=true before=true"
	if g := strings.Join(desc, "; "); g != want {
		t.Errorf("got %s, want %s", g, want)
	}
	if got := EarlierLockRuns(&lock.Status{State: lock.StateNone, LockFile: "p.lock.json"}, "d1", records); len(got) != 0 {
		t.Errorf("with no lock now, runs without one are listed: %+v", got)
	}
}
