package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
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
	os.WriteFile(filepath.Join(dir, "run.json"), []byte(`{"outputs_sha256": {"old.csv": "`+
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
