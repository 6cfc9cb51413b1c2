package main

import (
	"context"
	"os"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"ordplan/runner/queue"
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

// TestWorkerSecondSignalGivesJobsBack: a worker asked to stop while it
// computes a job goes on with it, saying that a second signal stops it at
// once; the second signal (Ctrl-C twice, SIGTERM twice) makes it give the
// job back unacknowledged, say so, and exit with the signal's status
// (130, 143) without waiting for the job; another worker then computes
// the job and the run it belongs to ends as a local run does.
func TestWorkerSecondSignalGivesJobsBack(t *testing.T) {
	plan, local, remote := localReference(t, "gss_stepwise")
	url := localserver.ForTest(t)
	run := runAsync("run", plan, "--out", remote, "--queue", url)
	for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
		name := "held-" + strings.ToLower(sig.String()[:3])
		p := startWorkerProc(t, url, name, holdEnv+"=60s")
		p.waitLog(t, 30*time.Second, "holding")
		p.cmd.Process.Signal(sig)
		p.waitLog(t, 10*time.Second, "asked to stop")
		select {
		case <-p.done:
			t.Fatalf("%v: the worker stopped before finishing the job it held: %s", sig, p.stderr.String())
		case <-time.After(3 * time.Second): // beyond the ack wait (2s): the job stays with it
		}
		p.cmd.Process.Signal(sig)
		select {
		case <-p.done:
		case <-time.After(10 * time.Second):
			t.Fatalf("%v: a second signal did not stop the worker at once: %s", sig, p.stderr.String())
		}
		log := p.stderr.String()
		if code := p.cmd.ProcessState.ExitCode(); code != 128+int(sig) {
			t.Errorf("%v: exit %d, want %d: %s", sig, code, 128+int(sig), log)
		}
		for _, want := range []string{
			"ordplan worker " + name + ": asked to stop (" + map[syscall.Signal]string{syscall.SIGINT: "SIGINT", syscall.SIGTERM: "SIGTERM"}[sig] + "): it takes no new job and finishes the jobs it started; stop it again",
			"ordplan worker " + name + ": gave back ordplan.jobs.",
			"ordplan worker " + name + ": stopped at once, asked a second time; it gave back the 1 job it had not finished: the server delivers it again to another worker (or to this one, started again), not counting this delivery against the job's limit",
		} {
			if !strings.Contains(log, want) {
				t.Errorf("%v: no %q in the worker's log:\n%s", sig, want, log)
			}
		}
		if strings.Contains(log, "stopped; it finished the jobs it had started first") {
			t.Errorf("%v: the worker says it finished its jobs:\n%s", sig, log)
		}
	}
	w := startWorkerProc(t, url, "w1")
	waitRun(t, run, 120*time.Second)
	sameOutputs(t, local, remote)
	// The two held workers gave back one job each, or the same job twice:
	// either way no give-back counted as a delivery.
	if log := w.stderr.String(); strings.Count(log, "(delivery 1, after 1 give-back by a stopped worker, not counted)") != 2 &&
		!strings.Contains(log, "(delivery 1, after 2 give-backs by stopped workers, not counted)") || strings.Contains(log, "(delivery 2") {
		t.Errorf("the jobs given back were not delivered again as their first counted delivery:\n%s", log)
	}
}

// TestQuietWorkerSaysWhatASecondSignalDoes: --quiet drops a worker's line
// per job, not the line at its first stop signal, which tells whoever
// pressed Ctrl-C that the worker finishes its jobs first and that a
// second press stops it at once (as warnings and errors, it is printed
// under --quiet). The worker then stops and exits 0, with that line alone
// on stderr.
func TestQuietWorkerSaysWhatASecondSignalDoes(t *testing.T) {
	url := localserver.ForTest(t)
	p := startProc(t, nil, "worker", "--queue", url, "--name", "w-quiet", "--jobs", "1", "--cache", t.TempDir(), "--quiet")
	// Nothing is logged under --quiet: the worker is ready once its
	// consumer exists on the server.
	nc, err := nats.Connect(url)
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	deadline := time.Now().Add(20 * time.Second)
	for {
		ctx, cancel := context.WithTimeout(context.Background(), time.Second)
		_, err := js.Consumer(ctx, queue.JobStream, queue.WorkerGroup)
		cancel()
		if err == nil {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("the quiet worker made no consumer within 20 s (%v): %s", err, p.stderr.String())
		}
		time.Sleep(50 * time.Millisecond)
	}
	p.cmd.Process.Signal(syscall.SIGINT)
	select {
	case <-p.done:
	case <-time.After(20 * time.Second):
		t.Fatalf("the quiet worker did not stop: %s", p.stderr.String())
	}
	if code := p.cmd.ProcessState.ExitCode(); code != exitOK {
		t.Errorf("exit %d, want %d: %s", code, exitOK, p.stderr.String())
	}
	want := "ordplan worker w-quiet: asked to stop (SIGINT): it takes no new job and finishes the jobs it started; stop it again (Ctrl-C, SIGTERM) to give them back unfinished and stop at once\n"
	if got := p.stderr.String(); got != want {
		t.Errorf("stderr of a quiet worker stopped once:\n%q\nwant\n%q", got, want)
	}
}
