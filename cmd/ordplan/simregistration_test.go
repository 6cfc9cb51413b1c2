package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// rehearse and power record the plan's registration in run.json as run
// does (the same comparison with the lock, registration, and the same
// record, runner.RegistrationRecord): the state, and the canonical SHA-256
// and time of the lock, which are the lock file's own; a plan changed
// after freezing without a stated reason is refused as run refuses it, and
// simulated with --allow-unregistered-changes, which run.json, the
// rehearsal's first lines and the power study's opening say.
func TestSimulationRecordsRegistration(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(filepath.Join("..", "..", "plans", "kneepain.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	planPath := filepath.Join(dir, "knee.yaml")
	if err := os.WriteFile(planPath, src, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, errs, code := runCLI("freeze", planPath); code != 0 {
		t.Fatalf("freeze: %s", errs)
	}
	var lk struct {
		SHA256   string `json:"canonical_sha256"`
		FrozenAt string `json:"frozen_at"`
	}
	b, err := os.ReadFile(filepath.Join(dir, "knee.lock.json"))
	if err != nil || json.Unmarshal(b, &lk) != nil || lk.SHA256 == "" {
		t.Fatalf("lock: %v %s", err, b)
	}
	type reg struct {
		State    string `json:"state"`
		SHA256   string `json:"canonical_sha256"`
		FrozenAt string `json:"frozen_at"`
		Allowed  bool   `json:"allowed_unexplained"`
	}
	registration := func(folder string) reg {
		t.Helper()
		var rec struct {
			Registration *reg `json:"registration"`
		}
		b, err := os.ReadFile(filepath.Join(folder, "run.json"))
		if err != nil || json.Unmarshal(b, &rec) != nil || rec.Registration == nil {
			t.Fatalf("%s/run.json: %v, no registration in %s", folder, err, b)
		}
		return *rec.Registration
	}
	rehearse := func(name string, extra ...string) (string, string, int) {
		return runCLI(append([]string{"rehearse", planPath, "--n", "120", "--quiet", "--out", filepath.Join(dir, name)}, extra...)...)
	}
	power := func(name string, extra ...string) (string, string, int) {
		return runCLI(append([]string{"power", planPath, "--n", "60", "--replicates", "2", "--quiet", "--out", filepath.Join(dir, name)}, extra...)...)
	}
	want := reg{State: "matches", SHA256: lk.SHA256, FrozenAt: lk.FrozenAt}
	for name, cmd := range map[string]func(string, ...string) (string, string, int){"r1": rehearse, "p1": power} {
		out, errs, code := cmd(name)
		if code != 0 || !strings.HasPrefix(out, "registered plan: matches knee.lock.json (frozen "+lk.FrozenAt+")") {
			t.Fatalf("%s: exit %d\n%s%s", name, code, out, errs)
		}
		if got := registration(filepath.Join(dir, name)); got != want {
			t.Errorf("%s: registration %+v, want %+v", name, got, want)
		}
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "p1", "power.md")); !strings.Contains(string(b), "**Registered plan: matches** (`knee.lock.json`, frozen at "+lk.FrozenAt) || !strings.Contains(string(b), "canonical sha256 `"+lk.SHA256+"`") {
		t.Errorf("power.md does not name the registration:\n%.1500s", b)
	}

	// A change without a reason.
	if err := os.WriteFile(planPath, []byte(strings.Replace(string(src), "alpha: 0.01}", "alpha: 0.05}", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	want = reg{State: "unexplained", SHA256: lk.SHA256, FrozenAt: lk.FrozenAt, Allowed: true}
	for name, cmd := range map[string]func(string, ...string) (string, string, int){"r2": rehearse, "p2": power} {
		if _, errs, code := cmd(name); code != 1 || !strings.Contains(errs, "rules[2].reject_if_test_rejects.alpha: 0.01 -> 0.05") {
			t.Errorf("%s without the flag: exit %d: %s", name, code, errs)
		}
		out, errs, code := cmd(name, "--allow-unregistered-changes")
		if code != 0 || !strings.HasPrefix(out, "registered plan: UNREGISTERED CHANGES: the 1 change from") {
			t.Fatalf("%s: exit %d\n%s%s", name, code, out, errs)
		}
		if got := registration(filepath.Join(dir, name)); got != want {
			t.Errorf("%s: registration %+v, want %+v", name, got, want)
		}
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "r2", "report.md")); !strings.Contains(string(b), "**UNREGISTERED CHANGES: the 1 change from the registered plan has no reason") {
		t.Errorf("the rehearsal's report does not say so")
	} else if !strings.Contains(string(b), "the rehearsal was forced with `--allow-unregistered-changes`.** This rehearsal, on simulated data,") ||
		!strings.Contains(string(b), "The plan rehearsed here departs from it") || strings.Contains(string(b), "before the data were seen") {
		// A rehearsal sees no data: the run's words (results "not fixed
		// before the data were seen", "this run") were untrue of it.
		t.Errorf("the rehearsal's report speaks of a run on data:\n%.2500s", b)
	} else if u, n := strings.Index(string(b), "UNREGISTERED CHANGES"), strings.Index(string(b), "Numeric columns with a range in the dictionary"); n < 0 || u > n {
		// As in the power report, the registration comes before the
		// paragraphs on how the columns were drawn.
		t.Errorf("the rehearsal's report says UNREGISTERED CHANGES at byte %d, after how the columns were drawn (byte %d)", u, n)
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "p2", "power.md")); !strings.Contains(string(b), "**UNREGISTERED CHANGES: the 1 change from the registered plan has no reason") || !strings.Contains(string(b), "| `rules[2].reject_if_test_rejects.alpha` | `0.01` | `0.05` | **no stated reason** |") {
		t.Errorf("the power study does not say so:\n%.2500s", b)
	}
}
