package queue

import (
	"math"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// A message replayed is counted once and changes nothing: a job delivered
// twice (its first holder slow to acknowledge, so the server delivers it
// again to another worker, and the first stores its reply late) and a
// reply stored twice (the same sealed bytes again, as a message replayed
// on the server) give each job one reply, one progress count, the local
// fit's numbers bit for bit, and no discarded reply; a rerun of the batch
// takes the stored replies, again once each.
func TestReplayedMessagesCountedOnce(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	clog := &LogBuffer{}
	co := q.coordinator(t, clog)
	id, err := RunID("plan-hash", q.jobs)
	if err != nil {
		t.Fatal(err)
	}
	want := make([]*fit.Result, len(q.jobs))
	for i, j := range q.jobs {
		if want[i], err = runner.ExecuteJob(q.path, j); err != nil {
			t.Fatal(err)
		}
	}
	type outcome struct {
		res    []*fit.Result
		errs   []error
		counts []int
	}
	execute := func() <-chan outcome {
		got := make(chan outcome, 1)
		go func() {
			counts := make([]int, len(q.jobs))
			res, errs := co.ExecuteWatched(q.jobs, func(k int) { counts[k]++ })
			got <- outcome{res, errs, counts}
		}()
		return got
	}
	got := execute()
	waitFor(t, 10*time.Second, "the jobs in the stream", func() bool {
		info, err := q.c.jobs.Info(q.ctx)
		return err == nil && info.State.Msgs == 2
	})
	// The slow holder: the workers' consumer with a short ack wait; it
	// takes the first job and does not acknowledge it in time.
	cons, err := q.c.js.CreateOrUpdateConsumer(q.ctx, JobStream, jetstream.ConsumerConfig{
		Durable: WorkerGroup, FilterSubject: JobSubject + ".>", AckPolicy: jetstream.AckExplicitPolicy,
		AckWait: time.Second, MaxDeliver: MaxDeliver, DeliverPolicy: jetstream.DeliverAllPolicy})
	if err != nil {
		t.Fatal(err)
	}
	msgs, err := cons.Fetch(1, jetstream.FetchMaxWait(5*time.Second))
	if err != nil {
		t.Fatal(err)
	}
	var held jetstream.Msg
	for m := range msgs.Messages() {
		held = m
	}
	if held == nil {
		t.Fatal("no job taken")
	}
	task, err := q.c.openTask(held.Subject(), held.Data())
	if err != nil {
		t.Fatal(err)
	}
	// Job 1's reply stored twice, the same bytes, before any worker runs.
	b := seal(testSecret, sealReply, resultKey(id, 1), mustEncode(t, &Reply{Batch: id, Index: 1, ID: q.jobs[1].ID, Worker: "replayed", Delivered: 1, Result: want[1]}))
	for range 2 {
		if _, err := q.c.results.Put(q.ctx, resultKey(id, 1), b); err != nil {
			t.Fatal(err)
		}
	}
	wlog := startWorker(t, q.url, "w1", time.Second, 0)
	o := <-got
	// The slow holder finishes late: its reply is refused by the store,
	// its acknowledgement comes after the job was done.
	late := &Worker{Client: q.c, Name: "slow"}
	lb, err := late.sealReply(q.ctx, resultKey(id, task.Index), &Reply{Batch: id, Index: task.Index, ID: task.ID, Worker: "slow", Delivered: 1, Result: want[task.Index]})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := q.c.results.Create(q.ctx, resultKey(id, task.Index), lb); err == nil {
		t.Error("a second reply to a job was stored as if it were the first")
	}
	held.Ack()

	check := func(run string, o outcome) {
		t.Helper()
		for i := range q.jobs {
			if o.errs[i] != nil || o.res[i] == nil {
				t.Fatalf("%s: job %d: %v", run, i, o.errs[i])
			}
			if o.counts[i] != 1 {
				t.Errorf("%s: job %d counted %d times", run, i, o.counts[i])
			}
			if math.Float64bits(o.res[i].LogLik) != math.Float64bits(want[i].LogLik) || len(o.res[i].Estimates) != len(want[i].Estimates) {
				t.Fatalf("%s: job %d: log-likelihood %v, want %v", run, i, o.res[i].LogLik, want[i].LogLik)
			}
			for k, v := range want[i].Estimates {
				if math.Float64bits(o.res[i].Estimates[k]) != math.Float64bits(v) {
					t.Errorf("%s: job %d estimate %d: %v, want %v", run, i, k, o.res[i].Estimates[k], v)
				}
			}
		}
	}
	check("first run", o)
	// The worker's lines show the run as the coordinator's do: the batch
	// id cut to 12 characters (its 64 made lines of 400).
	if !strings.Contains(wlog.String(), "started ordplan.jobs."+id[:12]+".") || strings.Contains(wlog.String(), id[:13]) {
		t.Errorf("the worker's lines do not show the batch as ordplan.jobs.%s.N:\n%s", id[:12], wlog)
	}
	if !strings.Contains(wlog.String(), "(delivery 2)") {
		t.Errorf("the held job was not delivered again:\n%s", wlog)
	}
	if n := clog.Count("ignored a later reply"); n != 1 {
		t.Errorf("the replayed reply was ignored %d times, want once:\n%s", n, clog)
	}
	check("rerun", <-execute())
	for k, st := range co.Stats() {
		if st.Discarded != 0 || st.Republished != 0 {
			t.Errorf("batch %d: %+v", k, st)
		}
	}
	if st := co.Stats()[1]; st.Present != 2 || st.Published != 0 {
		t.Errorf("rerun: %+v, want both replies present", st)
	}
}

func mustEncode(t *testing.T, v any) []byte {
	t.Helper()
	b, err := encode(v)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
