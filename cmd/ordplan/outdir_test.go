package main

import (
	"os"
	"os/signal"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"
)

// A write that fails for one file leaves every file of the previous run as
// it was, and no temporary file behind.
func TestWriteAllIsAllOrNothing(t *testing.T) {
	dir := t.TempDir()
	if err := writeAll(dir, []string{"a.txt", "run.json"}, map[string][]byte{"a.txt": []byte("old a"), "run.json": []byte("old run")}); err != nil {
		t.Fatal(err)
	}
	// Names that are not plain file names are refused before any write.
	for _, names := range [][]string{{"a.txt", "sub/x"}, {"a.txt", ".hidden"}} {
		files := map[string][]byte{}
		for _, n := range names {
			files[n] = []byte("new")
		}
		if err := writeAll(dir, names, files); err == nil {
			t.Fatalf("%v: no error", names)
		}
		if b, _ := os.ReadFile(filepath.Join(dir, "a.txt")); string(b) != "old a" {
			t.Errorf("%v: a.txt is %q", names, b)
		}
	}
	// A failure while writing, after the first file's temporary copy is
	// complete: a name the file system refuses (too long).
	long := strings.Repeat("x", 300)
	if err := writeAll(dir, []string{"a.txt", long}, map[string][]byte{"a.txt": []byte("new"), long: []byte("new")}); err == nil {
		t.Fatal("no error for a name too long")
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "a.txt")); string(b) != "old a" {
		t.Errorf("a.txt is %q after a failed write", b)
	}
	left, _ := filepath.Glob(filepath.Join(dir, ".*tmp-*"))
	if len(left) > 0 {
		t.Errorf("temporary files left: %v", left)
	}
}

// Two locks on one folder: the second is refused with a message; released,
// the folder can be locked again.
func TestLockOutput(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	l1, err := lockOutput(dir)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := lockOutput(dir); err == nil || !strings.Contains(err.Error(), "another ordplan run is writing there") {
		t.Fatalf("second lock: %v", err)
	}
	l1.Unlock()
	l2, err := lockOutput(dir)
	if err != nil {
		t.Fatal(err)
	}
	l2.Unlock()
	f := filepath.Join(t.TempDir(), "file")
	os.WriteFile(f, nil, 0o644)
	if _, err := lockOutput(f); err == nil || !strings.Contains(err.Error(), "not a folder") {
		t.Errorf("a file as output folder: %v", err)
	}
}

// Outputs of the previous run that this run does not write are removed
// once the new files are in place; other files of the folder are not.
func TestStaleOutputsRemoved(t *testing.T) {
	dir := t.TempDir()
	// old.csv is as the previous run wrote it (sha256 of "old"); edited.csv
	// was changed by the user since, so it is theirs and stays.
	os.WriteFile(filepath.Join(dir, "run.json"), []byte(`{"program": "ordplan", "outputs_sha256": {"old.csv": "`+
		sha256Hex([]byte("old"))+
		`", "edited.csv": "`+sha256Hex([]byte("as written"))+`", "keep.md": "y", "../escape": "z"}}`), 0o644)
	os.WriteFile(filepath.Join(dir, "old.csv"), []byte("old"), 0o644)
	os.WriteFile(filepath.Join(dir, "edited.csv"), []byte("changed by the user"), 0o644)
	os.WriteFile(filepath.Join(dir, "mine.txt"), []byte("user"), 0o644)
	files := map[string][]byte{"keep.md": []byte("new"), "run.json": []byte("{}")}
	stale := staleOutputs(dir, files)
	if len(stale) != 1 || stale[0] != "old.csv" {
		t.Fatalf("stale %v", stale)
	}
}

// ordplan power keeps the record run and rehearse keep: run.json with the
// SHA-256 of power.md, power.html and power.json. A second study replaces
// its own outputs; a power.md edited since is the user's and stops the
// next study, which leaves every file as it was.
func TestPowerOutputsRecorded(t *testing.T) {
	dir := t.TempDir()
	planPath := filepath.Join(dir, "p.yaml")
	os.WriteFile(planPath, []byte(powerQueuePlan), 0o644)
	out := filepath.Join(dir, "out")
	args := []string{"power", planPath, "--n", "60", "--replicates", "2", "--quiet", "--out", out}
	for i := 0; i < 2; i++ {
		if o, e, code := runCLI(args...); code != 0 {
			t.Fatalf("study %d: exit %d %s %s", i+1, code, o, e)
		}
	}
	rec := previousOutputs(out)
	for _, n := range []string{"power.md", "power.html", "power.json"} {
		b, err := os.ReadFile(filepath.Join(out, n))
		if err != nil || rec[n] != sha256Hex(b) {
			t.Errorf("run.json records %q for %s (%v)", rec[n], n, err)
		}
	}
	if len(rec) != 3 {
		t.Errorf("run.json records %v", rec)
	}
	run, _ := os.ReadFile(filepath.Join(out, "run.json"))
	if !strings.Contains(string(run), `"command_line": "ordplan power `) || strings.Contains(string(run), `"data"`) {
		t.Errorf("run.json of a power study:\n%s", run)
	}
	os.WriteFile(filepath.Join(out, "power.md"), []byte("my edits\n"), 0o644)
	o, e, code := runCLI(args...)
	if code != exitFail || o != "" || !strings.Contains(e, "power.md is not as an earlier ordplan run there left it") {
		t.Errorf("edited power.md: exit %d %q %q", code, o, e)
	}
	if b, _ := os.ReadFile(filepath.Join(out, "power.md")); string(b) != "my edits\n" {
		t.Errorf("the edited power.md was overwritten: %q", b)
	}
	if after, _ := os.ReadFile(filepath.Join(out, "run.json")); string(after) != string(run) {
		t.Error("the refused study changed run.json")
	}
}

// The early check (claimOutput) refuses every file not recorded, even one
// whose bytes the run would write (it cannot know them yet); the check
// when writing lets such a file be replaced.
func TestClaimOutputChecksFixedNames(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "report.md"), []byte("same"), 0o644)
	if _, err := claimOutput(dir, "run", []string{"decisions.json", "report.md"}); err == nil || !strings.Contains(err.Error(), "holds report.md but no run.json") {
		t.Fatalf("claim: %v", err)
	}
	// The refusal released the lock.
	l, err := claimOutput(dir, "run", []string{"decisions.json"})
	if err != nil {
		t.Fatal(err)
	}
	l.Unlock()
	if mine := usersFiles(dir, []string{"report.md"}, map[string][]byte{"report.md": []byte("same")}); len(mine) != 0 {
		t.Errorf("a file with the bytes the run writes: %v", mine)
	}
}

// An interrupt that arrives while the outputs are written is held until
// every file is in place, then delivered again: the folder is complete and
// no temporary file is left.
func TestInterruptHeldDuringWrite(t *testing.T) {
	dir := t.TempDir()
	got := make(chan os.Signal, 4)
	signal.Notify(got, os.Interrupt) // so that the interrupt does not stop the test
	defer signal.Stop(got)
	sent := false
	afterTemp = func() {
		if !sent {
			sent = true
			p, _ := os.FindProcess(os.Getpid())
			p.Signal(os.Interrupt)
			time.Sleep(50 * time.Millisecond) // let it arrive while writing
		}
	}
	defer func() { afterTemp = nil }()
	files := map[string][]byte{"a.md": []byte("a\n"), "b.md": []byte("b\n"), "run.json": []byte("{}\n")}
	if err := writeAll(dir, []string{"a.md", "b.md", "run.json"}, files); err != nil {
		t.Fatal(err)
	}
	for n, c := range files {
		if b, err := os.ReadFile(filepath.Join(dir, n)); err != nil || string(b) != string(c) {
			t.Errorf("%s: %q %v", n, b, err)
		}
	}
	if left, _ := filepath.Glob(filepath.Join(dir, ".*.tmp-*")); len(left) > 0 {
		t.Errorf("temporary files left: %v", left)
	}
	// The interrupt itself, and the one delivered again after the write.
	for i := 0; i < 2; i++ {
		select {
		case <-got:
		case <-time.After(5 * time.Second):
			t.Fatalf("interrupt %d not delivered", i+1)
		}
	}
}

// The temporary files a killed run left in its output folder are removed
// when the next run claims it; other files that merely look alike stay.
func TestClaimRemovesTemporaries(t *testing.T) {
	dir := t.TempDir()
	stale := []string{".report.md.tmp-123456", ".table-models-y.csv.tmp-9"}
	kept := []string{".notes.tmp-draft", "report.md.tmp-1", ".tmp-12"}
	for _, n := range append(slices.Clone(stale), kept...) {
		os.WriteFile(filepath.Join(dir, n), []byte("x"), 0o644)
	}
	l, err := claimOutput(dir, "run", []string{"report.md"})
	if err != nil {
		t.Fatal(err)
	}
	l.Unlock()
	for _, n := range stale {
		if _, err := os.Lstat(filepath.Join(dir, n)); err == nil {
			t.Errorf("%s left", n)
		}
	}
	for _, n := range kept {
		if _, err := os.Lstat(filepath.Join(dir, n)); err != nil {
			t.Errorf("%s removed: %v", n, err)
		}
	}
}
