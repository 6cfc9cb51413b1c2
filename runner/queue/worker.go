package queue

import (
	"context"
	"errors"
	"fmt"
	"io"
	"sync"
	"time"

	"github.com/nats-io/nats.go/jetstream"
)

// Worker pulls jobs from the jobs stream, computes them and stores the
// replies.
type Worker struct {
	Client   *Client
	Name     string        // reported in replies and logs
	CacheDir string        // local copies of data files, by hash
	Jobs     int           // jobs computed at once (default 1)
	AckWait  time.Duration // redelivery deadline of an unacknowledged job (default DefaultAckWait)
	Log      io.Writer     // one line per job (nil: none)
	// Delay makes the worker wait this long after taking each job, before
	// computing it. Test-only: it lets tests kill a worker while it holds a
	// job and check that in-progress acknowledgements keep a slow job.
	Delay time.Duration

	cache    *dataCache
	parts    *partitionCache
	logMu    sync.Mutex
	interval time.Duration
}

// Run processes jobs until ctx is cancelled. A job being computed when ctx
// is cancelled is finished and stored first.
func (w *Worker) Run(ctx context.Context) error {
	if w.Jobs <= 0 {
		w.Jobs = 1
	}
	if w.AckWait <= 0 {
		w.AckWait = DefaultAckWait
	}
	w.interval = max(w.AckWait/3, 50*time.Millisecond)
	w.cache = newDataCache(w.CacheDir)
	w.parts = newPartitionCache(4)
	cons, err := w.Client.js.CreateOrUpdateConsumer(ctx, JobStream, jetstream.ConsumerConfig{
		Durable:       WorkerGroup,
		Description:   "ordplan workers",
		FilterSubject: JobSubject + ".>",
		AckPolicy:     jetstream.AckExplicitPolicy,
		AckWait:       w.AckWait,
		MaxDeliver:    -1,
		DeliverPolicy: jetstream.DeliverAllPolicy,
	})
	if err != nil {
		return fmt.Errorf("worker consumer %s: %v", WorkerGroup, err)
	}
	w.logf("worker %s: ready (%d at once, ack wait %s)", w.Name, w.Jobs, w.AckWait)
	var wg sync.WaitGroup
	for range w.Jobs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w.loop(ctx, cons)
		}()
	}
	wg.Wait()
	return nil
}

// loop takes one job at a time: a job is only taken when this goroutine
// can start it, so no job waits behind another in a worker's buffer.
func (w *Worker) loop(ctx context.Context, cons jetstream.Consumer) {
	for ctx.Err() == nil {
		batch, err := cons.Fetch(1, jetstream.FetchMaxWait(time.Second))
		if err != nil {
			if ctx.Err() == nil {
				w.logf("worker %s: fetch: %v", w.Name, err)
				sleep(ctx, time.Second)
			}
			continue
		}
		for msg := range batch.Messages() {
			w.handle(ctx, msg)
		}
		if err := batch.Error(); err != nil && ctx.Err() == nil && !errors.Is(err, jetstream.ErrNoMessages) {
			if !errors.Is(err, context.DeadlineExceeded) && !errors.Is(err, jetstream.ErrNoHeartbeat) {
				w.logf("worker %s: fetch: %v", w.Name, err)
				sleep(ctx, time.Second)
			}
		}
	}
}

// handle computes one job, stores its reply and acknowledges it.
func (w *Worker) handle(ctx context.Context, msg jetstream.Msg) {
	var delivered uint64
	if md, err := msg.Metadata(); err == nil {
		delivered = md.NumDelivered
	}
	var t Task
	if err := decode(msg.Data(), &t); err != nil {
		w.logf("worker %s: %s: undecodable job dropped: %v", w.Name, msg.Subject(), err)
		msg.TermWithReason("undecodable job")
		return
	}
	w.logf("worker %s: started %s %s (delivery %d)", w.Name, msg.Subject(), t.ID, delivered)
	start := time.Now()
	stop := w.keepAlive(msg)
	if w.Delay > 0 && !sleep(ctx, w.Delay) {
		stop()
		msg.Nak()
		return
	}
	// Computing and storing do not stop halfway on shutdown.
	work := context.WithoutCancel(ctx)
	r := w.compute(work, &t)
	r.Worker, r.Delivered = w.Name, delivered
	b, err := encode(r)
	if limit := w.Client.nc.MaxPayload() - 1024; err == nil && int64(len(b)) > limit {
		err = fmt.Errorf("the reply has %d bytes, more than the server's message limit allows (%d)", len(b), limit)
	}
	if err != nil {
		r = &Reply{Batch: t.Batch, Index: t.Index, ID: t.ID, Worker: w.Name, Delivered: delivered, Err: t.ID + ": " + err.Error()}
		b, _ = encode(r)
	}
	sctx, cancel := context.WithTimeout(work, 30*time.Second)
	defer cancel()
	_, err = w.Client.results.Create(sctx, resultKey(t.Batch, t.Index), b)
	stop()
	switch {
	case errors.Is(err, jetstream.ErrKeyExists):
		w.logf("worker %s: %s: a reply was already stored; this duplicate is dropped", w.Name, t.ID)
	case err != nil:
		w.logf("worker %s: %s: storing the reply: %v (job left for another try)", w.Name, t.ID, err)
		msg.NakWithDelay(time.Second)
		return
	default:
		status := "ok"
		if r.Err != "" {
			status = "error: " + r.Err
		}
		w.logf("worker %s: done %s %s in %s: %s", w.Name, msg.Subject(), t.ID, time.Since(start).Round(time.Millisecond), status)
	}
	if err := msg.DoubleAck(sctx); err != nil {
		w.logf("worker %s: %s: acknowledging: %v", w.Name, t.ID, err)
	}
}

// keepAlive sends in-progress acknowledgements until the returned function
// is called, so a long job keeps its place.
func (w *Worker) keepAlive(msg jetstream.Msg) func() {
	done := make(chan struct{})
	stopped := make(chan struct{})
	go func() {
		defer close(stopped)
		t := time.NewTicker(w.interval)
		defer t.Stop()
		for {
			select {
			case <-done:
				return
			case <-t.C:
				msg.InProgress()
			}
		}
	}()
	var once sync.Once
	return func() {
		once.Do(func() {
			close(done)
			<-stopped
		})
	}
}

func (w *Worker) logf(format string, a ...any) {
	if w.Log == nil {
		return
	}
	w.logMu.Lock()
	defer w.logMu.Unlock()
	fmt.Fprintf(w.Log, format+"\n", a...)
}

// sleep waits d or until ctx is done; it reports whether d passed.
func sleep(ctx context.Context, d time.Duration) bool {
	t := time.NewTimer(d)
	defer t.Stop()
	select {
	case <-ctx.Done():
		return false
	case <-t.C:
		return true
	}
}
