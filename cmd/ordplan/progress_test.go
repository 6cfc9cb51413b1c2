package main

import (
	"bytes"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// fakeClock advances by step at every reading.
func fakeClock(step time.Duration) func() time.Time {
	t := time.Date(2026, 12, 2, 12, 0, 0, 0, time.UTC)
	return func() time.Time { t = t.Add(step); return t }
}

// Not on a terminal: one plain line every few seconds and one at the end,
// never a carriage return.
func TestProgressPlainLines(t *testing.T) {
	var b bytes.Buffer
	p := newProgress(&b, false, fakeClock(time.Second))
	for i := 1; i <= 12; i++ {
		p.Fitted("safety", "m", i, 12)
	}
	out := b.String()
	lines := strings.Split(strings.TrimSuffix(out, "\n"), "\n")
	if strings.Contains(out, "\r") || len(lines) != 3 {
		t.Fatalf("want 3 plain lines (at 5 s, 10 s and the end), got:\n%q", out)
	}
	if lines[0] != "safety: 5 of 12 fits, 5s elapsed, about 7s left" || lines[2] != "safety: 12 of 12 fits, 12s elapsed" {
		t.Errorf("lines:\n%s", out)
	}
}

// A second stage's time runs from the end of the first, so its first
// step's time is counted.
func TestProgressSecondStage(t *testing.T) {
	var b bytes.Buffer
	p := newProgress(&b, false, fakeClock(time.Second))
	p.Replicated(120, 1, 1)
	p.Replicated(240, 1, 2)
	p.Replicated(240, 2, 2)
	if want := "n = 120: 1 of 1 replicates, 1s elapsed\nn = 240: 2 of 2 replicates, 2s elapsed\n"; b.String() != want {
		t.Errorf("got\n%s\nwant\n%s", b.String(), want)
	}
}

// On a terminal: one line rewritten in place, with the estimate of the
// time left, ended by a newline when the grid is done.
func TestProgressLiveLine(t *testing.T) {
	var b bytes.Buffer
	p := newProgress(&b, true, fakeClock(2*time.Second))
	for i := 1; i <= 4; i++ {
		p.Fitted("safety", "m", i, 4)
	}
	out := b.String()
	if strings.Count(out, "\r") != 4 || !strings.HasSuffix(out, "\n") || strings.Count(out, "\n") != 1 {
		t.Fatalf("got %q", out)
	}
	if !strings.Contains(out, "\rsafety: 1 of 4 fits, 2s elapsed, about 6s left") || !strings.Contains(out, "\rsafety: 4 of 4 fits, 8s elapsed") {
		t.Errorf("got %q", out)
	}
}

// ordplan run reports progress on standard error unless --quiet.
func TestRunProgressAndQuiet(t *testing.T) {
	dir := t.TempDir()
	planPath := filepath.Join("..", "..", "render", "testdata", "golden.yaml")
	_, errs, code := runCLI("run", planPath, "--out", filepath.Join(dir, "a"))
	if code != 0 || !strings.Contains(errs, " fits, ") || strings.Contains(errs, "\r") {
		t.Fatalf("exit %d, stderr:\n%s", code, errs)
	}
	_, errs, code = runCLI("run", planPath, "--out", filepath.Join(dir, "b"), "--quiet")
	if code != 0 || strings.Contains(errs, " fits, ") {
		t.Fatalf("--quiet: exit %d, stderr:\n%s", code, errs)
	}
}

// ordplan power reports its replicates in the same words, size by size.
func TestPowerProgress(t *testing.T) {
	planPath := filepath.Join("..", "..", "plans", "kneepain.yaml")
	_, errs, code := runCLI("power", planPath, "--n", "120,240", "--replicates", "3", "--workers", "2", "--out", filepath.Join(t.TempDir(), "p"))
	if code != 0 || strings.Contains(errs, "\r") {
		t.Fatalf("exit %d, stderr:\n%s", code, errs)
	}
	for _, n := range []string{"120", "240"} {
		if !strings.Contains(errs, "n = "+n+": 3 of 3 replicates, ") {
			t.Errorf("no last progress line for n = %s:\n%s", n, errs)
		}
	}
}

// ordplan rehearse reports the fits of its run on standard error, as run
// does, unless --quiet (the flag word run and power use).
func TestRehearseProgressAndQuiet(t *testing.T) {
	dir := t.TempDir()
	planPath := filepath.Join("..", "..", "plans", "kneepain.yaml")
	_, errs, code := runCLI("rehearse", planPath, "--n", "120", "--out", filepath.Join(dir, "a"))
	if code != 0 || !strings.Contains(errs, " fits, ") {
		t.Fatalf("exit %d, stderr:\n%s", code, errs)
	}
	_, errs, code = runCLI("rehearse", planPath, "--n", "120", "--out", filepath.Join(dir, "b"), "--quiet")
	if code != 0 || strings.Contains(errs, " fits, ") {
		t.Fatalf("--quiet: exit %d, stderr:\n%s", code, errs)
	}
}
