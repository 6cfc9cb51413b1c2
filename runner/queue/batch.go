package queue

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"

	"github.com/nats-io/nats.go/jetstream"
)

// BatchStats says where a batch's replies came from.
type BatchStats struct {
	Jobs      int // tasks in the batch
	Present   int // replies already stored when the batch started (a resumed run)
	Queued    int // tasks already waiting in the jobs stream, not published again
	Published int // tasks published
}

// batchHooks report a batch's progress.
type batchHooks struct {
	started  func(BatchStats) // after the missing tasks are published
	progress func(done int)   // after each entry while waiting
}

// runBatch makes sure every task of the batch has a reply and returns the
// replies in task order. It watches the batch's keys first, takes the
// replies already stored, publishes the tasks that have neither a reply nor
// a message in the jobs stream, and waits for the rest. The first valid
// reply of each task wins; later ones, and entries that belong to another
// batch or name another task, are ignored. The hooks, when not nil, hear
// of the publication and of each new reply.
func (c *Client) runBatch(ctx context.Context, batch string, tasks []*Task, h batchHooks) ([]*Reply, BatchStats, error) {
	st := BatchStats{Jobs: len(tasks)}
	replies := make([]*Reply, len(tasks))
	if len(tasks) == 0 {
		return replies, st, nil
	}
	for i, t := range tasks {
		if t.Batch != batch || t.Index != i {
			return nil, st, fmt.Errorf("task %d of batch %s is labelled %s/%d", i, batch, t.Batch, t.Index)
		}
	}
	w, err := c.results.Watch(ctx, batch+".*", jetstream.IgnoreDeletes())
	if err != nil {
		return nil, st, fmt.Errorf("results bucket: %v", err)
	}
	defer w.Stop()
	done := 0
	take := func(e jetstream.KeyValueEntry) {
		i, ok := replyIndex(e.Key(), batch, len(tasks))
		if !ok || replies[i] != nil {
			return
		}
		var r Reply
		if decode(e.Value(), &r) != nil || r.Batch != batch || r.Index != i || r.ID != tasks[i].ID {
			return
		}
		replies[i] = &r
		done++
	}
	// Replies stored before this call: a restarted coordinator reuses them.
	for {
		e, err := next(ctx, w)
		if err != nil {
			return nil, st, err
		}
		if e == nil {
			break
		}
		take(e)
	}
	st.Present = done
	if done < len(tasks) {
		queued, err := c.queuedSubjects(ctx, batch)
		if err != nil {
			return nil, st, err
		}
		for i, t := range tasks {
			if replies[i] != nil {
				continue
			}
			subj := jobSubject(batch, i)
			if queued[subj] {
				st.Queued++
				continue
			}
			b, err := encode(t)
			if err != nil {
				return nil, st, fmt.Errorf("encoding task %s: %v", t.ID, err)
			}
			if _, err := c.js.Publish(ctx, subj, b); err != nil {
				return nil, st, fmt.Errorf("publishing job %s: %v", t.ID, err)
			}
			st.Published++
		}
	}
	if h.started != nil {
		h.started(st)
	}
	for done < len(tasks) {
		e, err := next(ctx, w)
		if err != nil {
			return nil, st, err
		}
		if e != nil {
			take(e)
			if h.progress != nil {
				h.progress(done)
			}
		}
	}
	return replies, st, nil
}

// next returns the watcher's next entry (nil marks the end of the stored
// ones).
func next(ctx context.Context, w jetstream.KeyWatcher) (jetstream.KeyValueEntry, error) {
	select {
	case <-ctx.Done():
		return nil, fmt.Errorf("waiting for workers: %w", context.Cause(ctx))
	case e, ok := <-w.Updates():
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
