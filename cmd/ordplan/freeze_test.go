package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// A plan frozen, run as frozen, changed with a reason, and changed without
// one and forced: the report opens with the comparison each time.
func TestFreezeRunDeviations(t *testing.T) {
	dir, planPath, src := deviationStudy(t)
	out, errs, code := runCLI("freeze", planPath, "--registration", "REG 12")
	if code != 0 || !strings.Contains(out, "p.lock.json") {
		t.Fatalf("freeze: %d %s %s", code, out, errs)
	}
	report := func(args ...string) (string, string, int) {
		o := filepath.Join(dir, "out")
		os.RemoveAll(o)
		out, errs, code := runCLI(append([]string{"run", planPath, "--out", o, "--quiet"}, args...)...)
		md, _ := os.ReadFile(filepath.Join(o, "report.md"))
		return string(md), out + errs, code
	}
	opening := func(md string) string {
		lines := strings.SplitN(md, "\n", 4)
		if len(lines) < 3 {
			return md
		}
		return lines[2]
	}
	md, msg, code := report()
	if code != 0 || !strings.HasPrefix(opening(md), "**Registered plan: matches**") || !strings.Contains(msg, "registered plan: matches p.lock.json") {
		t.Fatalf("as frozen: %d %s\n%s", code, msg, md)
	}
	if !strings.Contains(opening(md), "registration REG 12") {
		t.Errorf("registration id missing: %s", opening(md))
	}
	// A changed rule with a stated reason: the Deviations section.
	os.WriteFile(planPath, []byte(strings.Replace(src, "{by: aic}", "{by: bic}", 1)+
		"deviations:\n  - key: rules[1].choose.by\n    reason: BIC, as the protocol's section 4 says\n"), 0o644)
	md, msg, code = report()
	if code != 0 || opening(md) != "## Deviations from the registered plan" ||
		!strings.Contains(md, "| `rules[1].choose.by` | `\"aic\"` | `\"bic\"` | BIC, as the protocol's section 4 says |") {
		t.Fatalf("with reason: %d %s\n%s", code, msg, md)
	}
	// The plan that fixed the models and rules is the one run, not the
	// one registered.
	if !strings.Contains(md, "The plan fixed the candidate models and the decision rules before the models were fitted (the plan as run, which departs from its registered form in 1 key, listed above);") {
		t.Errorf("the opening does not qualify the plan:\n%s", md)
	}
	// Without the reason: refused, then forced.
	os.WriteFile(planPath, []byte(strings.Replace(src, "{by: aic}", "{by: bic}", 1)), 0o644)
	if _, msg, code = report(); code != 1 || !strings.Contains(msg, `rules[1].choose.by: "aic" -> "bic"`) {
		t.Fatalf("without reason: %d %s", code, msg)
	}
	md, msg, code = report("--allow-unregistered-changes")
	if code != 0 || !strings.HasPrefix(opening(md), "**UNREGISTERED CHANGES: the 1 change from the registered plan has no reason") || !strings.Contains(md, "**no stated reason**") {
		t.Fatalf("forced: %d %s\n%s", code, msg, md)
	}
	if !strings.Contains(msg, "registered plan: UNREGISTERED CHANGES") {
		t.Errorf("stdout does not say so: %s", msg)
	}
	dec, _ := os.ReadFile(filepath.Join(dir, "out", "decisions.json"))
	if !strings.Contains(string(dec), `"state": "unexplained"`) || !strings.Contains(string(dec), `"allowed_unexplained": true`) {
		t.Errorf("decisions.json lacks the registration:\n%.600s", dec)
	}
}

// A rule moved and changed after freezing is one deviation: the report's
// table and decisions.json name its place then and now and each key that
// changed in it with both values, and a reason stated for the key that
// changed (at its place now) explains it.
func TestFreezeRunMovedAndChangedRule(t *testing.T) {
	dir, planPath, src := deviationStudy(t)
	src = strings.Replace(src, "  - choose: {by: aic}\n", "  - reject_if_sparse: {per_parameter: 5, smallest_category: 2}\n  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n  - choose: {by: aic}\n", 1)
	os.WriteFile(planPath, []byte(src), 0o644)
	if _, errs, code := runCLI("freeze", planPath); code != 0 {
		t.Fatalf("freeze: %d %s", code, errs)
	}
	moved := strings.Replace(src, "  - reject_if_sparse: {per_parameter: 5, smallest_category: 2}\n  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n", "  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n  - reject_if_sparse: {per_parameter: 4, smallest_category: 2}\n", 1)
	os.WriteFile(planPath, []byte(moved), 0o644)
	o := filepath.Join(dir, "out")
	if _, errs, code := runCLI("run", planPath, "--out", o, "--quiet"); code != 1 || !strings.Contains(errs, "in 1 key without a stated reason:\n  rules[2]: moved from rules[1], changed: reject_if_sparse.per_parameter 5 -> 4\n") {
		t.Fatalf("without a reason: %d %s", code, errs)
	}
	os.WriteFile(planPath, []byte(moved+"deviations:\n  - key: rules[2].reject_if_sparse.per_parameter\n    reason: four, as the protocol says\n"), 0o644)
	if _, errs, code := runCLI("run", planPath, "--out", o, "--quiet"); code != 0 {
		t.Fatalf("with a reason: %d %s", code, errs)
	}
	md, _ := os.ReadFile(filepath.Join(o, "report.md"))
	row := "| `rules[2]`, moved from `rules[1]` | `{\"reject_if_sparse\": {\"per_parameter\": 5, \"smallest_category\": 2}}` | `{\"reject_if_sparse\": {\"per_parameter\": 4, \"smallest_category\": 2}}`; changed in it: `reject_if_sparse.per_parameter`: `5` → `4` | four, as the protocol says |"
	if !strings.Contains(string(md), "in 1 key of the canonical form") || !strings.Contains(string(md), row) {
		t.Errorf("report lacks the row\n%s\n%s", row, md)
	}
	// The decision log says it at the rule, and decisions.json at its record.
	if !strings.Contains(string(md), "**Not as registered:** moved from `rules[1]` and changed after the plan was frozen (`reject_if_sparse.per_parameter`: `5` → `4`); stated reason: four, as the protocol says (see Deviations from the registered plan).") {
		t.Errorf("decision log lacks the rule's departure:\n%s", md)
	}
	var dec struct {
		Outcomes []struct {
			Rules []struct {
				Rule        string
				SinceFrozen []struct {
					Key       string
					MovedFrom string `json:"moved_from"`
				} `json:"since_frozen"`
			} `json:"rules"`
		} `json:"outcomes"`
		Registration struct {
			State   string `json:"state"`
			Changes []struct {
				Key, From, To, Reason string
				MovedFrom             string `json:"moved_from"`
				ChangedKeys           []struct {
					Key, From, To string
				} `json:"changed_keys"`
			} `json:"changes"`
		} `json:"registration"`
	}
	b, _ := os.ReadFile(filepath.Join(o, "decisions.json"))
	if err := json.Unmarshal(b, &dec); err != nil {
		t.Fatal(err)
	}
	g := dec.Registration
	if g.State != "deviations" || len(g.Changes) != 1 {
		t.Fatalf("registration: %+v", g)
	}
	for i, ru := range dec.Outcomes[0].Rules {
		if moved := i == 2; moved != (len(ru.SinceFrozen) == 1) || moved && (ru.SinceFrozen[0].Key != "rules[2]" || ru.SinceFrozen[0].MovedFrom != "rules[1]") {
			t.Errorf("rule %d %s: since_frozen %+v", i, ru.Rule, ru.SinceFrozen)
		}
	}
	c := g.Changes[0]
	if c.Key != "rules[2]" || c.MovedFrom != "rules[1]" || c.Reason != "four, as the protocol says" || len(c.ChangedKeys) != 1 ||
		c.ChangedKeys[0].Key != "reject_if_sparse.per_parameter" || c.ChangedKeys[0].From != "5" || c.ChangedKeys[0].To != "4" {
		t.Errorf("decisions.json change: %+v", c)
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// deviationStudy writes an invented three-category study of 90 rows
// (d.csv, a deterministic pattern) and its plan p.yaml, to be frozen and
// then changed: the folder, the plan's path and its text.
func deviationStudy(t *testing.T) (dir, planPath, src string) {
	t.Helper()
	dir = t.TempDir()
	var data strings.Builder
	data.WriteString("y,a,b\n")
	for i := 0; i < 90; i++ {
		a := float64(i%9) - 4
		b := i % 2
		y := 1 + (i*7+int(a)+3*b+20)%3
		data.WriteString(strings.Join([]string{itoa(y), itoa(int(a)), itoa(b)}, ",") + "\n")
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(data.String()), 0o644)
	planPath = filepath.Join(dir, "p.yaml")
	src = "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [a, b]\n" +
		"models: {approaches: [cumulative], effects: [parallel, nonparallel]}\ntests: {parallel_lines: [lr]}\n" +
		"rules:\n  - reject_unconverged: true\n  - choose: {by: aic}\n"
	os.WriteFile(planPath, []byte(src), 0o644)
	return dir, planPath, src
}

// A run that departs from the registered plan names the runs of the
// registered plan, unchanged, that its output folder already held (by
// the SHA-256 of their decisions.json, which stays the same when the run
// is kept under earlier/), so a reader knows the deviations may have been
// chosen after seeing them; a rerun of the deviated plan writes the same
// bytes; in a fresh folder the report says it held none.
func TestDeviationsNameEarlierRegisteredRuns(t *testing.T) {
	dir, planPath, src := deviationStudy(t)
	if out, errs, code := runCLI("freeze", planPath, "--registration", "REG 13"); code != 0 {
		t.Fatalf("freeze: %d %s %s", code, out, errs)
	}
	o := filepath.Join(dir, "out")
	run := func(out string) (string, string) {
		if o, errs, code := runCLI("run", planPath, "--out", out, "--quiet"); code != 0 {
			t.Fatalf("run: %d %s %s", code, o, errs)
		}
		md, _ := os.ReadFile(filepath.Join(out, "report.md"))
		dec, _ := os.ReadFile(filepath.Join(out, "decisions.json"))
		return string(md), string(dec)
	}
	_, registered := run(o)
	sum := sha256.Sum256([]byte(registered))
	want := hex.EncodeToString(sum[:])
	os.WriteFile(planPath, []byte(strings.Replace(src, "{by: aic}", "{by: bic}", 1)+
		"deviations:\n  - key: rules[1].choose.by\n    reason: BIC, as the protocol's section 4 says\n"), 0o644)
	md, dec := run(o)
	for _, s := range []string{"**This output folder already held 1 run of the registered plan unchanged**, on the same data as this run: its results existed before this run departed from the plan",
		"It is named by the SHA-256 of its decisions.json",
		"- decisions.json sha256 `" + want[:12] + "`, on the same data"} {
		if !strings.Contains(md, s) {
			t.Errorf("report.md lacks %q:\n%s", s, md)
		}
	}
	if !strings.Contains(dec, `"decisions_sha256": "`+want+`"`) || !strings.Contains(dec, `"same_data": true`) {
		t.Errorf("decisions.json lacks the earlier run:\n%.1500s", dec)
	}
	md2, dec2 := run(o) // the registered run is now under earlier/
	if md2 != md || dec2 != dec {
		t.Error("a rerun of the deviated plan changed the report or decisions.json")
	}
	if md, _ := run(filepath.Join(dir, "fresh")); !strings.Contains(md, "This output folder held no earlier run of the registered plan unchanged") {
		t.Errorf("a fresh folder:\n%s", md)
	}
}

// A registered sensitivity analysis removed after freezing is said not to
// be run, with its stated reason, in the summary, the sensitivity section,
// the limits and the methods draft (which no longer say the analyses shown
// are the only ones), and in decisions.json.
func TestRemovedSensitivityReported(t *testing.T) {
	dir, planPath, src := deviationStudy(t)
	sens := "sensitivity:\n  - {name: sw, why: robust errors, change: {covariance: sandwich}}\n  - {name: ex, why: expected information, change: {covariance: expected}}\n"
	os.WriteFile(planPath, []byte(src+sens), 0o644)
	if _, errs, code := runCLI("freeze", planPath); code != 0 {
		t.Fatalf("freeze: %d %s", code, errs)
	}
	os.WriteFile(planPath, []byte(src+"sensitivity:\n  - {name: ex, why: expected information, change: {covariance: expected}}\n"+
		"deviations:\n  - key: sensitivity[0]\n    reason: the reviewers asked for expected information only\n"), 0o644)
	o := filepath.Join(dir, "out")
	if out, errs, code := runCLI("run", planPath, "--out", o, "--quiet"); code != 0 {
		t.Fatalf("run: %d %s %s", code, out, errs)
	}
	md, _ := os.ReadFile(filepath.Join(o, "report.md"))
	note := "The registered sensitivity analysis sw is not run: it was removed (or renamed) after the plan was frozen (stated reason: the reviewers asked for expected information only; see Deviations from the registered plan)."
	if n := strings.Count(string(md), note); n != 4 || strings.Contains(string(md), "and only those") {
		t.Errorf("the note %d times (want 4: summary, section, limits, methods), or 'and only those' left:\n%s", n, md)
	}
	b, _ := os.ReadFile(filepath.Join(o, "decisions.json"))
	if !strings.Contains(string(b), `"sensitivity_removed": [
      {
        "name": "sw",
        "key": "sensitivity[0]",
        "reason": "the reviewers asked for expected information only"
      }
    ]`) {
		t.Errorf("decisions.json lacks sensitivity_removed:\n%.3000s", b)
	}
}

// A stated deviation that explains no change is listed in decisions.json
// as the report lists it, with the changed key it may misspell.
func TestUnusedDeviationsRecorded(t *testing.T) {
	dir, planPath, src := deviationStudy(t)
	if _, errs, code := runCLI("freeze", planPath); code != 0 {
		t.Fatalf("freeze: %d %s", code, errs)
	}
	os.WriteFile(planPath, []byte(strings.Replace(src, "{by: aic}", "{by: bic}", 1)+
		"deviations:\n  - key: rules[1].choose.bye\n    reason: BIC, as the protocol says\n"), 0o644)
	o := filepath.Join(dir, "out")
	if out, errs, code := runCLI("run", planPath, "--out", o, "--quiet", "--allow-unregistered-changes"); code != 0 {
		t.Fatalf("run: %d %s %s", code, out, errs)
	}
	md, _ := os.ReadFile(filepath.Join(o, "report.md"))
	if !strings.Contains(string(md), "`rules[1].choose.bye` (plan line 11): BIC, as the protocol says (a misspelling of `rules[1].choose.by`, which changed?)") {
		t.Errorf("report:\n%s", md)
	}
	var dec struct {
		Registration struct {
			Unused []struct {
				Key, Reason, Nearest string
				Line                 int
			} `json:"unused_deviations"`
		} `json:"registration"`
	}
	b, _ := os.ReadFile(filepath.Join(o, "decisions.json"))
	if err := json.Unmarshal(b, &dec); err != nil {
		t.Fatal(err)
	}
	u := dec.Registration.Unused
	if len(u) != 1 || u[0].Key != "rules[1].choose.bye" || u[0].Reason != "BIC, as the protocol says" || u[0].Line != 11 {
		t.Errorf("unused_deviations: %+v\n%s", u, b)
	}
	if !strings.Contains(string(b), `"nearest_changed_key": "rules[1].choose.by"`) {
		t.Errorf("decisions.json lacks the nearest changed key:\n%s", b)
	}
}

// A run of the registered plan, unchanged, whose output folder held runs
// of it on other data (more rows arrived) says so at its head, in its
// limits and methods, and in decisions.json: the data were analysed
// before; a rerun on the same data is not such a run, and a rerun writes
// the same bytes.
func TestEarlierLooksOfTheRegisteredPlan(t *testing.T) {
	dir, planPath, _ := deviationStudy(t)
	if _, errs, code := runCLI("freeze", planPath); code != 0 {
		t.Fatalf("freeze: %d %s", code, errs)
	}
	o := filepath.Join(dir, "out")
	run := func() (string, string) {
		if out, errs, code := runCLI("run", planPath, "--out", o, "--quiet"); code != 0 {
			t.Fatalf("run: %d %s %s", code, out, errs)
		}
		md, _ := os.ReadFile(filepath.Join(o, "report.md"))
		dec, _ := os.ReadFile(filepath.Join(o, "decisions.json"))
		return string(md), string(dec)
	}
	_, first := run()
	if md, dec := run(); strings.Contains(md, "on other data") || strings.Contains(dec, "earlier_registered_runs") {
		t.Errorf("a rerun on the same data names an earlier look:\n%s", md)
	}
	sum := sha256.Sum256([]byte(first))
	csv := filepath.Join(dir, "d.csv")
	b, _ := os.ReadFile(csv)
	lines := strings.SplitAfter(string(b), "\n")
	os.WriteFile(csv, []byte(string(b)+strings.Join(lines[1:31], "")), 0o644) // 30 rows more
	md, dec := run()
	for _, s := range []string{
		"**This output folder already held 1 run of this registered plan on other data**: its results of the same analysis existed before this run.",
		"- decisions.json sha256 `" + hex.EncodeToString(sum[:])[:12] + "`, on other data",
		"- This output folder held 1 run of the same registered plan on other data (listed at the head of the report). If these data extend those, this is another look at accumulating data",
		"; the output folder held 1 run of the same plan on other data, made before this one)",
	} {
		if !strings.Contains(md, s) {
			t.Errorf("report.md lacks %q:\n%s", s, md)
		}
	}
	if !strings.Contains(dec, `"decisions_sha256": "`+hex.EncodeToString(sum[:])+`"`) || !strings.Contains(dec, `"same_data": false`) {
		t.Errorf("decisions.json lacks the earlier run:\n%.1500s", dec)
	}
	if md2, dec2 := run(); md2 != md || dec2 != dec {
		t.Error("a rerun changed the report or decisions.json")
	}
}

// A plan frozen, run, frozen anew with a change (freeze --replace) and run
// again in the same folder: the runs made under the earlier lock are not
// runs of the registered plan. The second run's stdout, report and
// decisions.json name them, each with the lock it was run under (its
// canonical hash and time, the file freeze --replace kept it in), apart
// from the runs under the lock now; a run of the new lock that departs
// from it lists both; --previous says the plan was frozen anew between the
// two runs. Rerunning writes the same bytes.
func TestRunsUnderEarlierLocksListed(t *testing.T) {
	dir, planPath, src := deviationStudy(t)
	if out, errs, code := runCLI("freeze", planPath, "--registration", "REG 14"); code != 0 {
		t.Fatalf("freeze: %d %s %s", code, out, errs)
	}
	first, _ := os.ReadFile(filepath.Join(dir, "p.lock.json"))
	o := filepath.Join(dir, "out")
	run := studyRun(t, planPath, o)
	_, _, registered := run()
	sum := sha256.Sum256([]byte(registered))
	decHash := hex.EncodeToString(sum[:])
	firstHash := jsonField(t, first, "canonical_sha256")
	firstAt := jsonField(t, first, "frozen_at")
	kept := "p.lock.json.replaced-" + strings.NewReplacer("-", "", ":", "").Replace(firstAt)

	os.WriteFile(planPath, []byte(strings.Replace(src, "{by: aic}", "{by: bic}", 1)), 0o644)
	if out, errs, code := runCLI("freeze", planPath, "--replace"); code != 0 {
		t.Fatalf("freeze --replace: %d %s %s", code, out, errs)
	}
	second, _ := os.ReadFile(filepath.Join(dir, "p.lock.json"))
	secondAt := jsonField(t, second, "frozen_at")
	prev := filepath.Join(dir, "prev")
	os.CopyFS(prev, os.DirFS(o))
	out, md, dec := run("--previous", prev)
	for _, s := range []string{
		"note: the output folder held 1 run made under an earlier lock of this plan (frozen " + firstAt + ", kept as " + kept + "): its results existed before the plan was frozen anew, and it is not a run of the registered plan, which counts only from p.lock.json's time; the report lists it\n",
		"The plan was frozen anew between the two runs (the earlier run's lock is kept as " + kept + "): the earlier run is not a run of the plan as registered now, whose registration counts from " + secondAt + ".",
	} {
		if !strings.Contains(out, s) {
			t.Errorf("stdout lacks %q:\n%s", s, out)
		}
	}
	item := "- decisions.json sha256 `" + decHash[:12] + "`, on the same data; under the lock frozen at " + firstAt + ", canonical sha256 `" + firstHash + "`, registration REG 14, kept as `" + kept + "`; the plan then matched it"
	for _, s := range []string{
		"**This output folder already held 1 run made under an earlier lock of this plan**, on the same data as this run: its results existed before the plan was frozen anew as `p.lock.json`",
		"It is not a run of the registered plan, which counts only from the time of `p.lock.json`. It is named by the SHA-256 of its decisions.json (in this folder's run.json or under earlier/), with the lock its run.json records:",
		item,
	} {
		if !strings.Contains(md, s) {
			t.Errorf("report.md lacks %q:\n%s", s, md)
		}
	}
	for _, s := range []string{`"runs_outside_this_lock": [`, `"decisions_sha256": "` + decHash + `"`, `"lock_canonical_sha256": "` + firstHash + `"`,
		`"lock_frozen_at": "` + firstAt + `"`, `"lock_kept_as": "` + kept + `"`, `"lock_registration": "REG 14"`} {
		if !strings.Contains(dec, s) {
			t.Errorf("decisions.json lacks %s:\n%.3000s", s, dec)
		}
	}
	if strings.Contains(dec, "earlier_registered_runs") {
		t.Errorf("a run under the earlier lock is counted as a run of the registered plan:\n%.3000s", dec)
	}
	if _, md2, dec2 := run("--previous", prev); md2 != md || dec2 != dec {
		t.Error("a rerun changed the report or decisions.json")
	}
	// A departure from the new lock: the runs under it and those under the
	// earlier lock, each in its own list.
	os.WriteFile(planPath, []byte(strings.Replace(strings.Replace(src, "{by: aic}", "{by: bic}", 1), "[lr]", "[lr, brant]", 1)+
		"deviations:\n  - key: tests.parallel_lines\n    reason: the Brant test as well\n"), 0o644)
	_, md, _ = run()
	for _, s := range []string{"**This output folder already held 1 run of the registered plan unchanged**", "**This output folder already held 1 run made under an earlier lock of this plan**", item} {
		if !strings.Contains(md, s) {
			t.Errorf("departing run: report.md lacks %q:\n%s", s, md)
		}
	}
}

// studyRun runs the plan into the output folder o (with more arguments)
// and returns its stdout, report.md and decisions.json.
func studyRun(t *testing.T, planPath, o string) func(args ...string) (string, string, string) {
	return func(args ...string) (string, string, string) {
		t.Helper()
		out, errs, code := runCLI(append([]string{"run", planPath, "--out", o, "--quiet"}, args...)...)
		if code != 0 {
			t.Fatalf("run: %d %s %s", code, out, errs)
		}
		md, _ := os.ReadFile(filepath.Join(o, "report.md"))
		dec, _ := os.ReadFile(filepath.Join(o, "decisions.json"))
		return out, string(md), string(dec)
	}
}

// jsonField is a top-level string field of a JSON object.
func jsonField(t *testing.T, b []byte, key string) string {
	t.Helper()
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	s, _ := m[key].(string)
	if s == "" {
		t.Fatalf("no %s in %s", key, b)
	}
	return s
}

// Runs made before the plan was frozen (their run.json records no lock)
// are listed, once the plan is frozen, through the same list as the runs
// under an earlier lock: run notes them, the report says their results
// predate the registration, with their decisions.json's SHA-256 and
// whether they read the same data, and decisions.json has them (state
// none) under registration.runs_outside_this_lock.
func TestRunsBeforeRegistrationListed(t *testing.T) {
	dir, planPath, _ := deviationStudy(t)
	run := studyRun(t, planPath, filepath.Join(dir, "out"))
	_, md, unregistered := run()
	if strings.Contains(md, "before this plan was registered") {
		t.Errorf("a run with no lock lists runs before the registration:\n%s", md)
	}
	sum := sha256.Sum256([]byte(unregistered))
	decHash := hex.EncodeToString(sum[:])
	if out, errs, code := runCLI("freeze", planPath); code != 0 {
		t.Fatalf("freeze: %d %s %s", code, out, errs)
	}
	lockFile, _ := os.ReadFile(filepath.Join(dir, "p.lock.json"))
	at := jsonField(t, lockFile, "frozen_at")
	out, md, dec := run()
	note := "note: the output folder held 1 run made when the plan had no lock file: its results existed before the plan was registered as it is now (p.lock.json, frozen " + at + "), so the plan may have been written after seeing them, and it is not a run of the registered plan; the report lists it\n"
	if !strings.Contains(out, note) {
		t.Errorf("stdout lacks %q:\n%s", note, out)
	}
	for _, s := range []string{
		"**This output folder already held 1 run made before this plan was registered**, on the same data as this run: its results existed before the plan was registered as it is now (`p.lock.json`, frozen at " + at + "), so the registered plan may have been written after seeing them: its lock does not show that the analysis was fixed before these results were seen. It is not a run of the registered plan. It is named by the SHA-256 of its decisions.json",
		"- decisions.json sha256 `" + decHash[:12] + "`, on the same data; with no lock file, its run.json records no time",
		"; the output folder held 1 run of the plan made before it was frozen, whose results existed then, listed at the head of the report", // Methods
	} {
		if !strings.Contains(md, s) {
			t.Errorf("report.md lacks %q:\n%s", s, md)
		}
	}
	if strings.Contains(md, "made under an earlier lock") || strings.Contains(md, "Frozen anew") {
		t.Errorf("a run before the first lock is called a run under an earlier lock:\n%s", md)
	}
	for _, s := range []string{`"runs_outside_this_lock": [`, `"decisions_sha256": "` + decHash + `"`, `"state": "none"`} {
		if !strings.Contains(dec, s) {
			t.Errorf("decisions.json lacks %s:\n%.3000s", s, dec)
		}
	}
	if strings.Contains(dec, `"lock_frozen_at"`) {
		t.Errorf("a run with no lock is given a lock:\n%.3000s", dec)
	}
	if _, md2, dec2 := run(); md2 != md || dec2 != dec {
		t.Error("a rerun changed the report or decisions.json")
	}
}
