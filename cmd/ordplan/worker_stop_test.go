package main

import (
	"os"
	"strings"
	"syscall"
	"testing"
	"time"

	"ordplan/runner/queue/localserver"
)

// TestWorkerStopsCleanlyOnSignal: a worker asked to stop (SIGINT, SIGTERM)
// finishes the jobs it started, says so and exits 0: stopping is how a
// worker's work ends (a service manager's stop, Ctrl-C), not a failure,
// and no job is lost (one it had not started goes to another worker).
// run, whose interrupt leaves its outputs unwritten, exits 128 + the
// signal's number instead (O8). DEVELOPERS.md, "Running on a cluster".
func TestWorkerStopsCleanlyOnSignal(t *testing.T) {
	url := localserver.ForTest(t)
	for _, sig := range []os.Signal{syscall.SIGINT, syscall.SIGTERM} {
		p := startWorkerProc(t, url, "w-"+strings.ToLower(sig.String()[:3]))
		p.cmd.Process.Signal(sig)
		select {
		case <-p.done:
		case <-time.After(20 * time.Second):
			t.Fatalf("%v: the worker did not stop", sig)
		}
		if code := p.cmd.ProcessState.ExitCode(); code != exitOK {
			t.Errorf("%v: exit %d, want %d: %s", sig, code, exitOK, p.stderr.String())
		}
		if !strings.Contains(p.stderr.String(), "stopped; it finished the jobs it had started first") {
			t.Errorf("%v: no line saying the worker stopped: %s", sig, p.stderr.String())
		}
	}
}
