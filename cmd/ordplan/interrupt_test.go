package main

import (
	"bytes"
	"os"
	"os/signal"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

// SIGHUP (the terminal closed) stops a command holding an output folder
// as SIGTERM does: one line saying what the folder holds, the lock
// released and the folder the command made removed; it once ended the
// process at once, leaving the folder and a stale lock.
func TestHangupStopsLikeTerm(t *testing.T) {
	if signal.Ignored(syscall.SIGHUP) {
		t.Skip("the tests run with SIGHUP ignored (nohup)")
	}
	catchInterrupts(t)
	got := make(chan os.Signal, 4)
	signal.Notify(got, syscall.SIGHUP) // harmless to the tests once no watch holds it
	defer signal.Stop(got)
	stops := make(chan os.Signal, 4)
	stopOnInterrupt = func(s os.Signal) { stops <- s }
	dir := filepath.Join(t.TempDir(), "out")
	var stderr bytes.Buffer
	l, err := claimOutput(dir, "power", []string{"power.md"}, &stderr)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Unlock()
	p, _ := os.FindProcess(os.Getpid())
	p.Signal(syscall.SIGHUP)
	select {
	case s := <-stops:
		if s != syscall.SIGHUP {
			t.Errorf("stopped by %v", s)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("SIGHUP did not stop the command")
	}
	if want := "ordplan power: stopped (SIGHUP: its terminal was closed) before writing its outputs; output folder " + dir + ": no output was written, and the folder, which it made, is removed again\n"; stderr.String() != want {
		t.Errorf("stderr %q, want %q", stderr.String(), want)
	}
	if _, err := os.Lstat(dir); err == nil {
		t.Errorf("the folder and its lock are still there")
	}
}

// The interrupt's line is the command's last: a progress line of the
// fits, which go on while the lock is released, is not written after it
// (one read "sensitivity analysis imputed: safety, imputed set 5/5: 37
// of 37 fits" below "ordplan run: interrupted ...").
func TestNoProgressAfterInterruptLine(t *testing.T) {
	stops := catchInterrupts(t)
	dir := filepath.Join(t.TempDir(), "out")
	var stderr bytes.Buffer
	l, err := claimOutput(dir, "run", []string{"report.md"}, &stderr)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Unlock()
	p := l.progress(&stderr)
	p.Fitted("y", "m", 2, 2)
	before := stderr.String()
	interruptSelf()
	said := stoppedWith(t, stops, &stderr)
	p.Fitted("y", "m", 2, 2)
	p.Imputed("y", 1, 5)
	if got := stderr.String(); got != said || !bytes.HasPrefix([]byte(got), []byte(before+"ordplan run: interrupted before writing its outputs")) {
		t.Errorf("stderr %q, want the progress line, then the interrupt's line last", got)
	}
}
