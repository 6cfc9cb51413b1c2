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
