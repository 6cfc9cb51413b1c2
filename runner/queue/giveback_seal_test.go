package queue

import (
	"errors"
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"ordplan/runner/fit"
)

// The give-back headers of a job message (the deliveries that count, the
// give-backs) are sealed with the job by the shared secret: a client
// without it that publishes the job with its count raised, lowered,
// unsealed or sealed for another job gets the message refused, with a
// line naming the job and the header, and no reply is stored; a count
// sealed as a worker giving the job back seals it is used, as is a job
// without these headers (published by the coordinator: never given back).
func TestGiveBackHeadersSealed(t *testing.T) {
	q := newTestQueue(t, 90*time.Second, fit.ParallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	if err := c.PutData(ctx, path, jobs[0].DataHash); err != nil {
		t.Fatal(err)
	}
	log := startWorker(t, url, "w1", 5*time.Second, 0)
	task := func(batch string) *Task {
		return &Task{Batch: batch, Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]}
	}
	// publish puts the job of batch on its subject with the headers given
	// (counted, given back) and a seal made for sealCounted, sealBack on
	// the subject of sealBatch ("": no seal).
	publish := func(batch, counted, back, sealBatch, sealCounted, sealBack string) {
		t.Helper()
		b, err := c.sealTask(task(batch))
		if err != nil {
			t.Fatal(err)
		}
		m := &nats.Msg{Subject: jobSubject(batch, 0), Data: b, Header: nats.Header{}}
		m.Header.Set(headerCounted, counted)
		m.Header.Set(headerGaveBack, back)
		if sealBatch != "" {
			m.Header.Set(headerSeal, c.giveBackSeal(jobSubject(sealBatch, 0), sealCounted, sealBack, b))
		}
		if _, err := c.js.PublishMsg(ctx, m); err != nil {
			t.Fatal(err)
		}
	}
	refusal := "job refused: job " + jobs[0].ID + ": "
	advice := "; these headers say how many of the job's deliveries count against its limit of 3 and only a worker with the shared secret writes them: check which clients may publish on ordplan.jobs.> on the queue server"
	for _, tc := range []struct {
		batch, counted, back, sealBatch, sealCounted, sealBack, want string
	}{
		// A stranger raising an honest count (the job would be answered
		// "no worker finished it"), or lowering it.
		{"raised", "7", "1", "raised", "0", "1", `its headers Ordplan-Deliveries-Counted: "7" and Ordplan-Given-Back: "1" do not match their seal Ordplan-Give-Back-Seal (written without the shared secret, or changed since)`},
		{"lowered", "0", "1", "lowered", "2", "1", `its headers Ordplan-Deliveries-Counted: "0" and Ordplan-Given-Back: "1" do not match their seal`},
		{"moreback", "2", "5", "moreback", "2", "1", `its headers Ordplan-Deliveries-Counted: "2" and Ordplan-Given-Back: "5" do not match their seal`},
		{"unsealed", "9", "1", "", "", "", "it carries give-back headers without Ordplan-Give-Back-Seal"},
		{"moved", "0", "1", "other", "0", "1", `its headers Ordplan-Deliveries-Counted: "0" and Ordplan-Given-Back: "1" do not match their seal`},
	} {
		publish(tc.batch, tc.counted, tc.back, tc.sealBatch, tc.sealCounted, tc.sealBack)
		line := "ordplan worker w1: " + jobSubject(tc.batch, 0) + ": " + refusal + tc.want
		waitFor(t, 10*time.Second, tc.batch+": the job refused", func() bool { return strings.Contains(log.String(), line) })
		if !strings.Contains(log.String(), advice) {
			t.Errorf("%s: the refusal does not say what to check:\n%s", tc.batch, log)
		}
		if _, err := c.results.Get(ctx, resultKey(tc.batch, 0)); !errors.Is(err, jetstream.ErrKeyNotFound) {
			t.Errorf("%s: a reply was stored for a refused job (%v)", tc.batch, err)
		}
		if strings.Contains(log.String(), "started "+jobSubject(tc.batch, 0)) {
			t.Errorf("%s: the job was computed:\n%s", tc.batch, log)
		}
	}
	// Refused messages leave the stream: nothing is queued for them.
	if info, err := c.jobs.Info(ctx); err != nil || info.State.Msgs != 0 {
		t.Errorf("jobs stream after the refusals: %v messages (%v)", info.State.Msgs, err)
	}

	// Sealed as a worker giving the job back seals it: two deliveries
	// counted before, one give-back; this delivery is the third counted.
	publish("honest", "2", "1", "honest", "2", "1")
	replies, _, err := c.runBatch(ctx, "honest", []*Task{task("honest")}, batchHooks{})
	if err != nil {
		t.Fatal(err)
	}
	if r := replies[0]; r.Err != "" || r.Result == nil || r.Delivered != 3 {
		t.Fatalf("honest give-back: reply at delivery %d (%s), want a result at delivery 3\n%s", r.Delivered, r.Err, log)
	}
	if want := fmt.Sprintf("started %s %s (delivery 3, after 1 give-back by a stopped worker, not counted)", jobSubject("honest", 0), jobs[0].ID); !strings.Contains(log.String(), want) {
		t.Errorf("no %q in the log:\n%s", want, log)
	}
}
