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
	got := executeAsync(co, q.jobs)
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

// While the coordinator's own connection is down, the workers' silence is
// not said (nor counted against the wait for a worker with the secret):
// it is the coordinator that is cut off. Counted again from its return.
// It said every worker holding a job had stopped sending progress.
func TestNoSilenceSaidWhileTheCoordinatorIsCutOff(t *testing.T) {
	log := &LogBuffer{}
	up := true
	bn := &batchNotes{c: &Client{Log: log}, id: "b", tasks: []*Task{{Batch: "b", Index: 0, ID: "cumulative/parallel/logit"}},
		done: map[int]bool{}, holds: map[int]*holding{}, refused: map[string]int{}, wait: time.Minute, connected: func() bool { return up }}
	t0 := time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC)
	bn.take(heard{subject: NoteSubject + ".b.0", sealed: true, at: t0, note: note{Worker: "w1", Kind: noteProgress, Delivery: 1, EveryMS: 2000, AckMS: 30000}})
	bn.take(heard{subject: NoteSubject + ".b.0", at: t0, note: note{Worker: "wrong", Kind: noteRefused}})
	up = false
	for _, s := range []time.Duration{3, 10, 90} {
		if err := bn.check(context.Background(), t0.Add(s*time.Second)); err != nil {
			t.Fatal(err)
		}
	}
	up = true
	back := t0.Add(100 * time.Second)
	for _, s := range []time.Duration{0, 4} {
		if err := bn.check(context.Background(), back.Add(s*time.Second)); err != nil {
			t.Fatal(err)
		}
	}
	if strings.Contains(log.String(), "stopped sending progress") {
		t.Fatalf("a silence said while the coordinator was cut off, or just back:\n%s", log)
	}
	if err := bn.check(context.Background(), back.Add(5*time.Second+time.Millisecond)); err != nil {
		t.Fatal(err)
	}
	want := "queue: worker w1 stopped sending progress on job cumulative/parallel/logit at 03:05:45 ("
	if !strings.Contains(log.String(), want) {
		t.Errorf("log:\n%s\nwant %q", log, want)
	}
	if !bn.since.Equal(back) {
		t.Errorf("the wait for a worker with the secret counted from %s, not from the return %s", bn.since, back)
	}
}
