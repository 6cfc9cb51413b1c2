package queue

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"ordplan/internal/words"
)

// BatchStats says where a batch's replies came from.
type BatchStats struct {
	Jobs        int // tasks in the batch
	Present     int // replies already stored when the batch started (a resumed run)
	Queued      int // tasks already waiting in the jobs stream, not published again
	Published   int // tasks published
	Discarded   int // replies discarded as unauthenticated or malformed
	Republished int // tasks published again (after a discarded reply or a deadline)
}

// batchHooks report a batch's progress.
type batchHooks struct {
	started  func(BatchStats) // after the missing tasks are published
	finished func(i int)      // task i has its reply (stored before, or new)
}

// batch is the state of one runBatch.
type batch struct {
	c       *Client
	ctx     context.Context
	id      string
	tasks   []*Task
	replies []*Reply
	revs    []uint64 // the revision each reply was taken from
	bad     []int    // discarded replies per task
	done    int
	st      BatchStats
	hooks   batchHooks
	notes   *batchNotes // the workers' notes on the batch's jobs
}

// runBatch makes sure every task of the batch has a valid reply and
// returns the replies in task order. It watches the batch's keys first,
// takes the replies already stored, publishes the tasks that have neither
// a reply nor a message in the jobs stream, and waits for the rest.
//
// Every entry is opened with the shared secret and checked for shape
// against its task: an entry that fails is logged, deleted and its task
// published again; after MaxBadReplies such entries for one task the batch
// fails. The first valid reply of each task wins; later ones, and keys
// that name no task, are ignored. "First" is revision order, not arrival
// order: the bucket keeps ResultHistory revisions of a key and the watch
// delivers all of them in order, stored ones before live ones, so a reply
// overwritten before the coordinator read it (the server feeds the watch
// asynchronously; a restarted coordinator starts watching late) still
// wins over the overwrite, and the rule does not depend on timing. A
// discarded entry is purged with its earlier revisions, so a restarted
// coordinator does not count it again. When no reply arrives for JobDeadline
// the missing tasks are published again; when none arrives for another
// JobDeadline the batch fails.
func (c *Client) runBatch(ctx context.Context, id string, tasks []*Task, h batchHooks) ([]*Reply, BatchStats, error) {
	b := &batch{c: c, ctx: ctx, id: id, tasks: tasks, replies: make([]*Reply, len(tasks)),
		revs: make([]uint64, len(tasks)), bad: make([]int, len(tasks)), hooks: h}
	b.st.Jobs = len(tasks)
	if len(tasks) == 0 {
		return b.replies, b.st, nil
	}
	for i, t := range tasks {
		if t.Batch != id || t.Index != i {
			return nil, b.st, fmt.Errorf("task %d of batch %s is labelled %s/%d", i, id, t.Batch, t.Index)
		}
	}
	w, err := c.results.Watch(ctx, id+".*", jetstream.IncludeHistory(), jetstream.IgnoreDeletes())
	if err != nil {
		return nil, b.st, fmt.Errorf("results bucket: %v", err)
	}
	defer w.Stop()
	// The workers' notes, heard from before the jobs are published: a
	// worker that stops sending progress is said, and a run whose jobs
	// only workers with another secret take ends (its cause ends ctx).
	ctx, stopWaiting := context.WithCancelCause(ctx)
	defer stopWaiting(nil)
	b.ctx = ctx
	b.notes, err = c.follow(ctx, id, tasks, stopWaiting)
	if err != nil {
		return nil, b.st, err
	}
	defer b.notes.stop()
	// Replies stored before this call: a restarted coordinator reuses them
	// (but for errors, computed again).
	for {
		e, err := next(ctx, w.Updates(), nil, nil)
		if err != nil {
			return nil, b.st, err
		}
		if e == nil {
			break
		}
		if _, err := b.take(e, false); err != nil {
			return nil, b.st, err
		}
	}
	b.st.Present = b.done
	if b.done < len(tasks) {
		queued, err := c.queuedSubjects(ctx, id)
		if err != nil {
			return nil, b.st, err
		}
		for i := range tasks {
			if b.replies[i] != nil {
				continue
			}
			if queued[jobSubject(id, i)] {
				b.st.Queued++
				continue
			}
			if err := b.publish(i); err != nil {
				return nil, b.st, err
			}
			b.st.Published++
		}
	}
	if h.started != nil {
		h.started(b.st)
	}
	b.notes.start()
	deadline := c.JobDeadline
	if deadline <= 0 {
		deadline = DefaultJobDeadline
	}
	timer := time.NewTimer(deadline)
	defer timer.Stop()
	firstNotice := c.WaitNotice
	if firstNotice <= 0 {
		firstNotice = DefaultWaitNotice
	}
	noticeAfter := firstNotice
	notice := time.NewTimer(noticeAfter)
	defer notice.Stop()
	waited := time.Duration(0) // since the last reply, at the last notice
	silent := 0                // deadlines passed without a reply
	for b.done < len(tasks) {
		e, err := next(ctx, w.Updates(), timer.C, notice.C)
		switch {
		case errors.Is(err, errNotice):
			waited += noticeAfter
			missing := b.missing()
			workers := b.notes.refusing()
			if workers == "" {
				workers = c.workersNow(ctx)
			}
			c.logf("queue: waiting for %d of %d jobs (the first: %s): no reply for %s; %s; the missing jobs are published again when %s pass without a reply (--job-deadline)",
				len(missing), len(tasks), tasks[missing[0]].label(), waited, workers, deadline)
			noticeAfter *= 2 // 1, 2, 4, ... minutes: said, not repeated at length
			notice.Reset(noticeAfter)
			continue
		case errors.Is(err, errDeadline):
			silent++
			missing := b.missing()
			if silent >= 2 {
				return nil, b.st, fmt.Errorf("no reply to %d of %d jobs (the first: %s) within %s, nor within %s after they were published again: "+
					"are workers running (ordplan worker) on this server with the same secret? (--job-deadline sets the wait)",
					len(missing), len(tasks), tasks[missing[0]].label(), deadline, deadline)
			}
			c.logf("queue: no reply to %d of %d jobs (the first: %s) within %s: published again", len(missing), len(tasks), tasks[missing[0]].label(), deadline)
			for _, i := range missing {
				if err := b.publish(i); err != nil {
					return nil, b.st, err
				}
				b.st.Republished++
			}
			timer.Reset(deadline)
			continue
		case err != nil:
			return nil, b.st, err
		}
		if e == nil {
			continue
		}
		took, err := b.take(e, true)
		if err != nil {
			return nil, b.st, err
		}
		if took {
			silent = 0
			waited, noticeAfter = 0, firstNotice
			if !notice.Stop() {
				select {
				case <-notice.C:
				default:
				}
			}
			notice.Reset(noticeAfter)
			if !timer.Stop() {
				select {
				case <-timer.C:
				default:
				}
			}
			timer.Reset(deadline)
		}
	}
	return b.replies, b.st, nil
}

// take opens and checks one entry. A valid reply to a task still waiting
// is kept (it returns true), but for an error reply stored before the
// batch started (republish not set), which is deleted for the task to be
// published with the others; an invalid one is deleted and, when
// republish is set, its task published again.
func (b *batch) take(e jetstream.KeyValueEntry, republish bool) (bool, error) {
	if e.Operation() != jetstream.KeyValuePut {
		return false, nil
	}
	i, ok := replyIndex(e.Key(), b.id, len(b.tasks))
	if !ok {
		return false, nil
	}
	if b.replies[i] != nil {
		b.c.logf("queue: job %s: ignored a later reply stored under %s (revision %d): the first valid reply (revision %d) wins",
			b.tasks[i].label(), shortKey(e.Key()), e.Revision(), b.revs[i])
		return false, nil
	}
	r, err := b.c.openReply(b.ctx, e.Key(), e.Value())
	if err == nil {
		err = checkReply(b.tasks[i], r)
	}
	if err == nil && r.Err != "" && !republish {
		// An error is the answer of the run that got it, never a result
		// kept for the next: a panic, a job no worker finished, a data
		// file a worker could not fetch, a worker's limits may all be
		// gone now. Stored before this batch started, it is purged (with
		// its earlier revisions, unless something was stored after it)
		// and the task published again.
		b.c.logf("queue: job %s: the error stored under %s by an earlier run (worker %s: %.200s) is not reused: computed again", b.tasks[i].label(), shortKey(e.Key()), r.Worker, r.Err)
		if derr := b.c.results.Purge(b.ctx, e.Key(), jetstream.LastRevision(e.Revision())); derr != nil && !errors.Is(derr, jetstream.ErrKeyExists) {
			b.c.logf("queue: deleting the stored error %s: %v", shortKey(e.Key()), derr)
		}
		return false, nil
	}
	if err == nil {
		b.replies[i], b.revs[i] = r, e.Revision()
		b.done++
		if b.notes != nil {
			b.notes.answered(i)
		}
		if b.hooks.finished != nil {
			b.hooks.finished(i)
		}
		return true, nil
	}
	b.bad[i]++
	b.st.Discarded++
	b.c.logf("queue: job %s: discarded the reply stored under %s (revision %d): %v", b.tasks[i].label(), shortKey(e.Key()), e.Revision(), err)
	// Purged only if nothing was stored after it (a later entry is judged
	// on its own when the watch delivers it).
	if derr := b.c.results.Purge(b.ctx, e.Key(), jetstream.LastRevision(e.Revision())); derr != nil && !errors.Is(derr, jetstream.ErrKeyExists) {
		b.c.logf("queue: deleting the discarded reply %s: %v", shortKey(e.Key()), derr)
	}
	if b.bad[i] >= MaxBadReplies {
		return false, fmt.Errorf("job %s: %d replies discarded as unauthenticated or malformed (the last: %v); "+
			"another process that can write to the server may be rewriting results, or a worker uses another secret",
			b.tasks[i].label(), b.bad[i], err)
	}
	if republish {
		if err := b.publish(i); err != nil {
			return false, err
		}
		b.st.Republished++
	}
	return false, nil
}

// label names a task in messages: its fit (jobName), or its part's file
// and hash.
func (t *Task) label() string {
	if t.Part != nil && t.Part.Name != "" {
		return fmt.Sprintf("part %s (sha256 %.12s)", t.Part.Name, t.ID)
	}
	return t.jobName()
}

// jobName is the task's id in log lines, with the sensitivity analysis
// whose fit it is (cumulative/parallel/logit of sensitivity analysis
// imputed).
func (t *Task) jobName() string {
	if t.Fit != nil && t.Fit.Analysis != "" {
		return t.ID + " of sensitivity analysis " + t.Fit.Analysis
	}
	return t.ID
}

// publish seals task i and publishes it on its subject.
func (b *batch) publish(i int) error {
	t := b.tasks[i]
	msg, err := b.c.sealTask(t)
	if err != nil {
		return fmt.Errorf("encoding job %s: %v", t.ID, err)
	}
	if _, err := b.c.js.Publish(b.ctx, jobSubject(b.id, i), msg); err != nil {
		return fmt.Errorf("publishing job %s: %v", t.ID, err)
	}
	return nil
}

// missing lists the tasks without a reply.
func (b *batch) missing() []int {
	var out []int
	for i, r := range b.replies {
		if r == nil {
			out = append(out, i)
		}
	}
	return out
}

func shortKey(key string) string {
	if len(key) > 20 {
		return key[:12] + "..." + key[strings.LastIndexByte(key, '.'):]
	}
	return key
}

var (
	errDeadline = errors.New("deadline")
	errNotice   = errors.New("notice")
)

// next returns the watcher's next entry (nil marks the end of the stored
// ones), or errDeadline when the timer fires first, errNotice when
// notice does (the wait is to be said).
func next(ctx context.Context, updates <-chan jetstream.KeyValueEntry, timer, notice <-chan time.Time) (jetstream.KeyValueEntry, error) {
	select {
	case <-ctx.Done():
		return nil, fmt.Errorf("waiting for workers: %w", context.Cause(ctx))
	case <-timer:
		return nil, errDeadline
	case <-notice:
		return nil, errNotice
	case e, ok := <-updates:
		if !ok {
			return nil, errors.New("the results watch was closed (connection lost?)")
		}
		return e, nil
	}
}

// replyIndex parses the job index from a key <batch>.<index>.
func replyIndex(key, batch string, n int) (int, bool) {
	rest, ok := strings.CutPrefix(key, batch+".")
	if !ok {
		return 0, false
	}
	i, err := strconv.Atoi(rest)
	if err != nil || i < 0 || i >= n || strconv.Itoa(i) != rest {
		return 0, false
	}
	return i, true
}

// queuedSubjects lists the batch's subjects with a message in the jobs
// stream (waiting or being worked on).
func (c *Client) queuedSubjects(ctx context.Context, batch string) (map[string]bool, error) {
	info, err := c.jobs.Info(ctx, jetstream.WithSubjectFilter(JobSubject+"."+batch+".>"))
	if err != nil {
		return nil, fmt.Errorf("jobs stream: %v", err)
	}
	out := map[string]bool{}
	for s, n := range info.State.Subjects {
		if n > 0 {
			out[s] = true
		}
	}
	return out, nil
}

// workersNow says what the workers' consumer shows of the workers: none
// ever connected, jobs held, fetches waiting, or none asking; with what to
// do where the run cannot go on without the user.
func (c *Client) workersNow(ctx context.Context) string {
	ictx, cancel := context.WithTimeout(ctx, 5*time.Second)
	defer cancel()
	cons, err := c.js.Consumer(ictx, JobStream, WorkerGroup)
	if errors.Is(err, jetstream.ErrConsumerNotFound) {
		return "no worker has connected to this server yet: start one (ordplan worker --queue URL) with the coordinator's secret file (--queue-secret-file)"
	}
	var info *jetstream.ConsumerInfo
	if err == nil {
		info, err = cons.Info(ictx)
	}
	if err != nil {
		return fmt.Sprintf("the workers' state could not be read (%v)", err)
	}
	switch {
	case info.NumAckPending > 0:
		return fmt.Sprintf("workers hold %s now (long fits, or a worker killed, whose jobs go to another worker after its ack wait)",
			words.Count(info.NumAckPending, "job", "jobs"))
	case info.NumWaiting > 0:
		return "workers are asking for jobs but none holds one of these: workers whose secret differs from the coordinator's refuse them (job refused in their logs): give them the coordinator's secret file (--queue-secret-file)"
	default:
		return "no worker is asking for jobs now: start one (ordplan worker --queue URL) with the coordinator's secret file (--queue-secret-file)"
	}
}
