package queue

import (
	"context"
	"strings"
	"testing"
	"time"

	"ordplan/runner/fit"
)

// A worker cut off while it holds a job (killed, its network lost) stops
// sending progress notes: the coordinator says so within two and a half
// of its intervals, naming the worker, the job, when it was last heard
// from and when the job goes to another worker, then which worker took it.
// The coordinator used to be silent until the ack wait passed (and, with
// no other worker, for a minute).
func TestCoordinatorSaysWhenAWorkerFallsSilent(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	clog := &LogBuffer{}
	co := q.coordinator(t, clog)
	type outcome struct {
		res  []*fit.Result
		errs []error
	}
	got := make(chan outcome, 1)
	go func() {
		res, errs := co.Execute(q.jobs)
		got <- outcome{res, errs}
	}()
	// The victim holds the job (Delay) with an ack wait of 6 s: a
	// progress note every 2 s, its silence said after 5 s.
	vctx, stopVictim := context.WithCancel(context.Background())
	abort, abortVictim := context.WithCancel(context.Background())
	vc := connect(t, q.ctx, q.url)
	vlog := &LogBuffer{}
	victim := &Worker{Client: vc, Name: "victim", CacheDir: t.TempDir(), AckWait: 6 * time.Second, Delay: time.Minute, Abort: abort, Log: vlog}
	vdone := make(chan struct{})
	go func() {
		defer close(vdone)
		victim.Run(vctx)
	}()
	t.Cleanup(func() {
		stopVictim()
		abortVictim()
		<-vdone
	})
	waitFor(t, 10*time.Second, "the victim holding the job", func() bool { return strings.Contains(vlog.String(), "holding") })
	waitFor(t, 10*time.Second, "the coordinator hearing of the victim", func() bool {
		return strings.Contains(clog.String(), "run ") // the batch's first line: listening since before
	})
	time.Sleep(500 * time.Millisecond) // a progress note or two
	cut := time.Now()
	vc.nc.Close() // as if killed: no more progress, no acknowledgement
	startWorker(t, q.url, "w2", 6*time.Second, 0)
	silent := "queue: worker victim stopped sending progress on job cumulative/parallel/logit at "
	waitFor(t, 10*time.Second, "the silence said", func() bool { return strings.Contains(clog.String(), silent) })
	if after := time.Since(cut); after > 5500*time.Millisecond {
		t.Errorf("the silence was said %s after the victim was cut off, past 2.5 intervals of 2s", after)
	}
	o := <-got
	if o.errs[0] != nil || o.res[0] == nil {
		t.Fatalf("job: %v", o.errs[0])
	}
	log := clog.String()
	for _, want := range []string{
		" (killed, or cut off from the server?); unless it speaks again, the server gives the job to another worker once its ack wait (6s) has passed without word from it, at about ",
		"queue: job cumulative/parallel/logit went to worker w2 (delivery 2)",
	} {
		if !strings.Contains(log, want) {
			t.Errorf("the coordinator's log lacks %q:\n%s", want, log)
		}
	}
	t.Logf("coordinator:\n%s", log)
	if strings.Index(log, silent) > strings.Index(log, "went to worker w2") {
		t.Errorf("the silence was said after the job went to another worker:\n%s", log)
	}
}
