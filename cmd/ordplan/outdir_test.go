package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/signal"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"
)

// A write that fails for one file leaves every file of the previous run as
// it was, and no temporary file behind.
func TestWriteFilesIsAllOrNothing(t *testing.T) {
	dir := t.TempDir()
	if err := writeFiles(dir, []string{"a.txt", "run.json"}, map[string][]byte{"a.txt": []byte("old a"), "run.json": []byte("old run")}); err != nil {
		t.Fatal(err)
	}
	// Names that are not plain file names are refused before any write.
	for _, names := range [][]string{{"a.txt", "sub/x"}, {"a.txt", ".hidden"}} {
		files := map[string][]byte{}
		for _, n := range names {
			files[n] = []byte("new")
		}
		if err := writeFiles(dir, names, files); err == nil {
			t.Fatalf("%v: no error", names)
		}
		if b, _ := os.ReadFile(filepath.Join(dir, "a.txt")); string(b) != "old a" {
			t.Errorf("%v: a.txt is %q", names, b)
		}
	}
	// A failure while writing, after the first file's temporary copy is
	// complete: a name the file system refuses (too long).
	long := strings.Repeat("x", 300)
	if err := writeFiles(dir, []string{"a.txt", long}, map[string][]byte{"a.txt": []byte("new"), long: []byte("new")}); err == nil {
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
	if b, _ := os.ReadFile(filepath.Join(dir, lockFile)); !strings.HasPrefix(string(b), "process ") {
		t.Errorf("a held lock names its holder: %q", b)
	}
	l1.Unlock()
	// Released, the lock leaves nothing: neither its file nor the folder
	// (and the one above it) it made, empty.
	if _, err := os.Lstat(filepath.Dir(dir)); err != nil {
		t.Fatal(err)
	}
	os.Remove(filepath.Dir(dir))
	l2, err := lockOutput(dir)
	if err != nil {
		t.Fatal(err)
	}
	l2.Unlock()
	if _, err := os.Lstat(filepath.Dir(dir)); err == nil {
		t.Errorf("a released lock left the folders it made")
	}
	// A folder that existed keeps everything but the lock file; a folder
	// it made that now holds files stays.
	dir = t.TempDir()
	out := filepath.Join(dir, "new", "out")
	l3, err := lockOutput(out)
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(out, "report.md"), []byte("x"), 0o644)
	l3.Unlock()
	if names, _ := os.ReadDir(out); len(names) != 1 || names[0].Name() != "report.md" {
		t.Errorf("the folder holds %v after the lock is released", names)
	}
	// A lock taken on a lock file that its holder removed meanwhile is
	// taken again on the file now at the path.
	old, _ := os.OpenFile(filepath.Join(out, lockFile), os.O_RDWR|os.O_CREATE, 0o644)
	os.Remove(filepath.Join(out, lockFile))
	if isFileAt(old, filepath.Join(out, lockFile)) {
		t.Errorf("a removed lock file is still at its path")
	}
	old.Close()
	l4, err := lockOutput(out)
	if err != nil || !isFileAt(l4.f, filepath.Join(out, lockFile)) {
		t.Fatalf("lock after a removed lock file: %v", err)
	}
	l4.Unlock()
	f := filepath.Join(t.TempDir(), "file")
	os.WriteFile(f, nil, 0o644)
	if _, err := lockOutput(f); err == nil || !strings.HasSuffix(err.Error(), ": is a file, not a folder; nothing was computed or written, and the file is untouched: give --out a folder (a new one, or an earlier run's)") {
		t.Errorf("a file as output folder: %v", err)
	}
}

// An output folder that cannot be written (a read-only file system, no
// permission) is named with the system's reason and what to do (O15);
// the reasons root cannot meet here are made by hand.
func TestNotWritableSaysWhatToDo(t *testing.T) {
	for _, c := range []struct {
		err  error
		want string
	}{
		{&fs.PathError{Op: "open", Path: "o/.ordplan.lock", Err: syscall.EROFS}, "output folder o: cannot write there (open o/.ordplan.lock: read-only file system); nothing was computed or written: give --out a folder you can write to, or make this one writable"},
		{&fs.PathError{Op: "mkdir", Path: "o", Err: syscall.EACCES}, "output folder o: cannot write there (mkdir o: permission denied); nothing was computed or written: give --out a folder you can write to, or make this one writable"},
		{&fs.PathError{Op: "mkdir", Path: "o", Err: syscall.ENOTDIR}, "output folder o: cannot write there (mkdir o: not a directory); nothing was computed or written: give --out another folder"},
	} {
		if got := notWritable("o", c.err).Error(); got != c.want {
			t.Errorf("got  %s\nwant %s", got, c.want)
		}
	}
	if os.Geteuid() == 0 {
		t.Skip("as root every folder is writable: the folder of a user without permission is not tested")
	}
	ro := filepath.Join(t.TempDir(), "ro")
	os.Mkdir(ro, 0o555)
	_, err := lockOutput(ro)
	if err == nil || !strings.Contains(err.Error(), "permission denied); nothing was computed or written: give --out a folder you can write to") {
		t.Errorf("a folder without permission: %v", err)
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
	if _, err := claimOutput(dir, "run", []string{"decisions.json", "report.md"}, io.Discard); err == nil || !strings.Contains(err.Error(), "holds report.md but no run.json") {
		t.Fatalf("claim: %v", err)
	}
	// The refusal released the lock.
	l, err := claimOutput(dir, "run", []string{"decisions.json"}, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	l.Unlock()
	if mine := usersFiles(dir, []string{"report.md"}, map[string][]byte{"report.md": []byte("same")}); len(mine) != 0 {
		t.Errorf("a file with the bytes the run writes: %v", mine)
	}
}

// testRecord is a run.json as writeOutputs expects it: the SHA-256 of
// each output.
func testRecord(files map[string][]byte) ([]byte, error) {
	sums := map[string]string{}
	for n, c := range files {
		sums[n] = sha256Hex(c)
	}
	return json.Marshal(map[string]any{"program": "ordplan", "made_by": "run", "outputs_sha256": sums})
}

// catchInterrupts makes an interrupt that reaches the test process
// harmless (it would otherwise end the tests once no watch holds it) and
// replaces stopOnInterrupt: the returned channel receives each interrupt
// that would have stopped the command.
func catchInterrupts(t *testing.T) <-chan os.Signal {
	t.Helper()
	got := make(chan os.Signal, 4)
	signal.Notify(got, os.Interrupt)
	stops := make(chan os.Signal, 4)
	stopOnInterrupt = func(s os.Signal) { stops <- s }
	t.Cleanup(func() {
		stopOnInterrupt = stopByDefault
		afterTemp = nil
		signal.Stop(got)
	})
	return stops
}

var stopByDefault = stopOnInterrupt

// interruptSelf sends the process an interrupt and gives it time to arrive.
func interruptSelf() {
	p, _ := os.FindProcess(os.Getpid())
	p.Signal(os.Interrupt)
	time.Sleep(50 * time.Millisecond)
}

// interruptHeld sends the process an interrupt during l's write and waits
// until l's watch holds it, however loaded the machine: a sleep alone may
// end before the signal reaches the watch, which then sees the write
// finished and says "after writing".
func interruptHeld(t *testing.T, l *outputLock) {
	t.Helper()
	p, _ := os.FindProcess(os.Getpid())
	p.Signal(os.Interrupt)
	for deadline := time.Now().Add(10 * time.Second); time.Now().Before(deadline); time.Sleep(time.Millisecond) {
		l.w.mu.Lock()
		held := l.w.pending != nil
		l.w.mu.Unlock()
		if held {
			return
		}
	}
	t.Fatal("the interrupt sent during the write was not held")
}

// stoppedWith waits for the command to be stopped by an interrupt and
// returns what it said on stderr.
func stoppedWith(t *testing.T, stops <-chan os.Signal, stderr *bytes.Buffer) string {
	t.Helper()
	select {
	case s := <-stops:
		if s != os.Interrupt {
			t.Errorf("stopped by %v", s)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("the interrupt did not stop the command")
	}
	return stderr.String()
}

// folderNames lists the entries of dir but the lock file.
func folderNames(t *testing.T, dir string) []string {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, e := range entries {
		if e.Name() != lockFile {
			out = append(out, e.Name())
		}
	}
	return out
}

// An interrupt that arrives while the outputs are written is held until
// the whole folder is changed: the earlier run, whose outputs this one
// changes, kept in earlier/TIME (O9), this run's files in place and the
// earlier run's outputs it no longer writes (here the predictions of an
// outcome no longer predicted) removed, so that the folder holds exactly
// what the new run.json lists, the kept run and no temporary file. Then
// it stops the command with a line saying so.
func TestInterruptHeldDuringWrite(t *testing.T) {
	stops := catchInterrupts(t)
	dir := t.TempDir()
	first := map[string][]byte{"report.md": []byte("first\n"), "predictions-safety.csv": []byte("p\n")}
	l, err := claimOutput(dir, "run", []string{"report.md"}, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if err := writeOutputs(l, dir, first, testRecord); err != nil {
		t.Fatal(err)
	}
	l.Unlock()

	var stderr bytes.Buffer
	l, err = claimOutput(dir, "run", []string{"report.md"}, &stderr)
	if err != nil {
		t.Fatal(err)
	}
	sent := false
	afterTemp = func() {
		if !sent {
			sent = true
			interruptHeld(t, l)
		}
	}
	second := map[string][]byte{"report.md": []byte("second\n")}
	if err := writeOutputs(l, dir, second, testRecord); err != nil {
		t.Fatal(err)
	}
	msg := stoppedWith(t, stops, &stderr)
	l.Unlock()
	kept, _ := filepath.Glob(filepath.Join(dir, earlierFolder, "*"))
	if len(kept) != 1 {
		t.Fatalf("kept earlier runs: %v", kept)
	}
	if want := "ordplan run: output folder " + dir + " held an earlier run whose outputs differ from this run's: nothing its run.json records differs (the plan, every input file, the program's version and the command line are the same; the program's source revision is not recorded, so a change of the program under the same version does not show); kept them in " + kept[0] + " (--previous " + kept[0] + " lists what changed)\n" +
		"ordplan run: interrupted while writing its outputs, and stopped once they were all in place; output folder " + dir + ": this run's complete outputs, as its run.json lists them\n"; msg != want {
		t.Errorf("stderr %q, want %q", msg, want)
	}
	rec := previousOutputs(dir)
	names := folderNames(t, dir)
	if !slices.Equal(names, []string{earlierFolder, "report.md", "run.json"}) || len(rec) != 1 || rec["report.md"] != sha256Hex(second["report.md"]) {
		t.Errorf("the folder holds %v; run.json lists %v", names, rec)
	}
	// The earlier run is kept whole: its two outputs, as written, and its
	// record.
	if got := folderNames(t, kept[0]); !slices.Equal(got, []string{"predictions-safety.csv", "report.md", "run.json"}) {
		t.Errorf("kept %v", got)
	}
	for n, c := range first {
		if b, _ := os.ReadFile(filepath.Join(kept[0], n)); !bytes.Equal(b, c) {
			t.Errorf("kept %s: %q, want %q", n, b, c)
		}
	}
	// The next run into the folder is not refused.
	l, err = claimOutput(dir, "run", []string{"report.md"}, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if err := writeOutputs(l, dir, first, testRecord); err != nil {
		t.Errorf("the next run: %v", err)
	}
	l.Unlock()
}

// An interrupt before the write stops the command at once and says that
// the folder holds what it held (the earlier run's outputs, or nothing of
// the command's); one after the write says that it holds the run's
// complete outputs; one during a write that fails is held until the
// failure is reported.
func TestInterruptMessages(t *testing.T) {
	stops := catchInterrupts(t)
	dir := filepath.Join(t.TempDir(), "out")
	files := map[string][]byte{"report.md": []byte("r\n")}
	var stderr bytes.Buffer
	l, err := claimOutput(dir, "run", []string{"report.md"}, &stderr)
	if err != nil {
		t.Fatal(err)
	}
	interruptSelf()
	if msg, want := stoppedWith(t, stops, &stderr), "ordplan run: interrupted before writing its outputs; output folder "+dir+": no output was written, and the folder, which it made, is removed again\n"; msg != want {
		t.Errorf("stderr %q, want %q", msg, want)
	}
	if _, err := os.Lstat(dir); err == nil {
		t.Errorf("the folder the command made is still there")
	}
	if err := writeOutputs(l, dir, files, testRecord); err != nil {
		t.Fatal(err)
	}
	stderr.Reset()
	interruptSelf()
	if msg, want := stoppedWith(t, stops, &stderr), "ordplan run: interrupted after writing its outputs; output folder "+dir+": this run's complete outputs, as its run.json lists them\n"; msg != want {
		t.Errorf("stderr %q, want %q", msg, want)
	}
	l.Unlock()

	stderr.Reset()
	l, err = claimOutput(dir, "rehearse", []string{"report.md"}, &stderr)
	if err == nil || !strings.Contains(err.Error(), "holds the outputs of ordplan run") {
		t.Fatalf("rehearse into a run's folder: %v", err)
	}
	l, err = claimOutput(dir, "run", []string{"report.md"}, &stderr)
	if err != nil {
		t.Fatal(err)
	}
	interruptSelf()
	if msg, want := stoppedWith(t, stops, &stderr), "ordplan run: interrupted before writing its outputs; output folder "+dir+": unchanged, it holds the earlier run's outputs as they were\n"; msg != want {
		t.Errorf("stderr %q, want %q", msg, want)
	}

	// A write that fails (a name the file system refuses) with an
	// interrupt held: nothing is said until the lock is released, after
	// the command reported the failure.
	stderr.Reset()
	long := strings.Repeat("x", 300)
	sent := false
	afterTemp = func() {
		if !sent {
			sent = true
			interruptHeld(t, l)
		}
	}
	if err := writeOutputs(l, dir, map[string][]byte{"report.md": []byte("new\n"), long: nil}, testRecord); err == nil {
		t.Fatal("no error for a name too long")
	}
	afterTemp = nil
	if stderr.Len() != 0 {
		t.Errorf("said before the failure was reported: %q", stderr.String())
	}
	l.Unlock()
	if msg, want := stoppedWith(t, stops, &stderr), "ordplan run: interrupted after the failure above\n"; msg != want {
		t.Errorf("stderr %q, want %q", msg, want)
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "report.md")); string(b) != "r\n" {
		t.Errorf("report.md is %q after the failed write", b)
	}
	if left, _ := filepath.Glob(filepath.Join(dir, ".*.tmp-*")); len(left) > 0 {
		t.Errorf("temporary files left: %v", left)
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
	l, err := claimOutput(dir, "run", []string{"report.md"}, io.Discard)
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

// TestReadRecordOneReader: previousRecord, previousMaker and folderRecords
// read run.json through readRecord alike: a folder, a symlink or no file
// is no record and not foreign; another program's JSON, text that is not
// JSON and a record without outputs are foreign to previousRecord and
// passed over by folderRecords; an ordplan record is read by all three.
func TestReadRecordOneReader(t *testing.T) {
	rec := `{"program":"ordplan","version":"v","made_by":"rehearse","plan":{"sha256":"p"},"outputs_sha256":{"report.md":"aa"}}`
	cases := []struct {
		name     string
		make     func(dir string)
		outputs  bool // previousRecord gives outputs
		foreign  bool
		maker    string
		makerOK  bool
		inFolder int // records folderRecords gives
	}{
		{"none", func(string) {}, false, false, "", false, 0},
		{"folder", func(d string) { os.Mkdir(filepath.Join(d, "run.json"), 0o755) }, false, false, "", false, 0},
		{"symlink", func(d string) {
			os.WriteFile(filepath.Join(d, "real.json"), []byte(rec), 0o644)
			os.Symlink("real.json", filepath.Join(d, "run.json"))
		}, false, false, "", false, 0},
		{"not JSON", func(d string) { os.WriteFile(filepath.Join(d, "run.json"), []byte("my notes"), 0o644) }, false, true, "", false, 0},
		{"another program", func(d string) {
			os.WriteFile(filepath.Join(d, "run.json"), []byte(`{"program":"other","outputs_sha256":{"a":"b"}}`), 0o644)
		}, false, true, "", false, 0},
		{"no outputs", func(d string) {
			os.WriteFile(filepath.Join(d, "run.json"), []byte(`{"program":"ordplan","made_by":"run"}`), 0o644)
		}, false, true, "", false, 1},
		{"record", func(d string) { os.WriteFile(filepath.Join(d, "run.json"), []byte(rec), 0o644) }, true, false, "rehearse", true, 1},
	}
	for _, c := range cases {
		dir := t.TempDir()
		c.make(dir)
		out, foreign := previousRecord(dir)
		maker, ok := previousMaker(dir)
		got := folderRecords(dir)
		if (out != nil) != c.outputs || foreign != c.foreign || maker != c.maker || ok != c.makerOK || len(got) != c.inFolder {
			t.Errorf("%s: previousRecord %v %v, previousMaker %q %v, folderRecords %d; want outputs %v, foreign %v, maker %q %v, %d records",
				c.name, out, foreign, maker, ok, len(got), c.outputs, c.foreign, c.maker, c.makerOK, c.inFolder)
		}
	}
}

// A run refused, or failing on its data, leaves in its output folder
// nothing the user did not have: no lock file, and no folder it made
// for --out.
func TestRefusedRunLeavesNothing(t *testing.T) {
	dir := t.TempDir()
	var d strings.Builder
	d.WriteString("y,a\n")
	for i := range 40 {
		fmt.Fprintf(&d, "%d,%d\n", i%3+1, i%7)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(d.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "bad.csv"), []byte(d.String()+"2,abc\n"), 0o644)
	plan := "version: 1\ndata: {file: %s}\noutcomes: [{column: y}]\npredictors: [a]\nmodels: {approaches: [cumulative], effects: [parallel]}\nrules: [{choose: {by: aic}}]\n"
	os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(fmt.Sprintf(plan, "d.csv")), 0o644)
	os.WriteFile(filepath.Join(dir, "bad.yaml"), []byte(fmt.Sprintf(plan, "bad.csv")), 0o644)
	// The user's own report.md in the folder (O7).
	users := filepath.Join(dir, "mine")
	os.MkdirAll(users, 0o755)
	os.WriteFile(filepath.Join(users, "report.md"), []byte("mine\n"), 0o644)
	if _, errs, code := runCLI("run", filepath.Join(dir, "p.yaml"), "--out", users, "--quiet"); code != 1 || !strings.Contains(errs, "holds report.md but no run.json") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if names, _ := os.ReadDir(users); len(names) != 1 || names[0].Name() != "report.md" {
		t.Errorf("the user's folder holds %v", names)
	}
	// A bad data row, into a new folder two levels down.
	out := filepath.Join(dir, "new", "out")
	if _, errs, code := runCLI("run", filepath.Join(dir, "bad.yaml"), "--out", out, "--quiet"); code != 1 || !strings.Contains(errs, `value "abc" is not a number`) {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if _, err := os.Lstat(filepath.Join(dir, "new")); err == nil {
		t.Errorf("the refused run left the folder it made")
	}
	// A run that writes its outputs leaves them, and no lock file.
	if _, errs, code := runCLI("run", filepath.Join(dir, "p.yaml"), "--out", out, "--quiet"); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if _, err := os.Lstat(filepath.Join(out, lockFile)); err == nil {
		t.Errorf("the run left its lock file")
	}
	if _, err := os.Stat(filepath.Join(out, "report.md")); err != nil {
		t.Errorf("no report: %v", err)
	}
}
