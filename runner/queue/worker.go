package queue

import (
	"context"
	"crypto/hmac"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"ordplan/internal/words"
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
	Limits   Limits        // what a job may ask (zero fields: DefaultLimits)
	// Delay makes the worker wait this long after taking each job, before
	// computing it. Test-only: it lets tests kill a worker while it holds a
	// job and check that in-progress acknowledgements keep a slow job. A
	// held job counts as started: a stop (ctx) waits for it, an Abort
	// gives it back.
	Delay time.Duration
	// DelayKind limits Delay to the jobs of one kind ("": every job).
	DelayKind string
	// Abort, when it ends, stops the worker at once: the jobs it is
	// computing (or holding, see Delay) are given back to the server
	// (giveBack: queued again, not counted against their delivery limit),
	// for another worker or a later run, and Run returns an *AbortedError. nil: only ctx stops the worker, which then
	// finishes the jobs it started.
	Abort context.Context

	abandoned atomic.Int64 // jobs given back because of Abort
	// refusedPause, when set, replaces refusedPause (tests).
	refusedPause time.Duration
	// build, when set, replaces Build as the worker's (tests).
	build string
	// faults counts the faults in a row (faultBackoff); faultPause, when
	// set, replaces faultPause (tests).
	faults      atomic.Int64
	faultPause  time.Duration
	pausedUntil atomic.Int64 // no job is taken before (Unix ns; faultBackoff)

	cache    *dataCache
	parts    *partitionCache
	logMu    sync.Mutex
	out      io.Writer // Log, each line begun by the worker's label
	interval time.Duration
}

// AbortedError is Run's error when Abort ended: the worker stopped without
// finishing the jobs it had started, and gave them back. Its text does not
// name the worker: the command writes it after the worker's label
// (WorkerLines).
type AbortedError struct {
	Name     string
	GaveBack int // jobs given back (giveBack)
}

func (e *AbortedError) Error() string {
	what := "it was computing no job"
	switch e.GaveBack {
	case 0:
	case 1:
		what = "it gave back the 1 job it had not finished: the server delivers it again to another worker (or to this one, started again), not counting this delivery against the job's limit, and a waiting run gets its result from there"
	default:
		what = fmt.Sprintf("it gave back the %d jobs it had not finished: the server delivers them again to another worker (or to this one, started again), not counting these deliveries against the jobs' limit, and a waiting run gets their results from there", e.GaveBack)
	}
	return "stopped at once, asked a second time; " + what
}

// Run processes jobs until ctx is cancelled. A job being computed when ctx
// is cancelled is finished and stored first, unless Abort ends meanwhile
// (see Abort).
func (w *Worker) Run(ctx context.Context) error {
	if w.Jobs <= 0 {
		w.Jobs = 1
	}
	if w.AckWait <= 0 {
		w.AckWait = DefaultAckWait
	}
	w.Limits = w.Limits.withDefaults()
	w.cache = newDataCache(w.CacheDir)
	if err := w.cache.usable(); err != nil {
		return err
	}
	w.parts = newPartitionCache(4)
	shared, err := w.Client.runningAckWait(ctx)
	if err != nil {
		return err
	}
	if shared > 0 && shared != w.AckWait {
		w.logf("warning: --ack-wait %s not taken: the workers running on this server have an ack wait of %s, which this worker keeps to (the workers share it: a new value would apply to them too while their in-progress acknowledgements keep to theirs, and their long jobs would go to other workers as if they had died); to change it, stop every worker and start them all with the new value",
			w.AckWait, shared)
		w.AckWait = shared
	}
	w.interval = max(w.AckWait/3, 50*time.Millisecond)
	cons, err := w.Client.js.CreateOrUpdateConsumer(ctx, JobStream, jetstream.ConsumerConfig{
		Durable:       WorkerGroup,
		Description:   "ordplan workers",
		FilterSubject: JobSubject + ".>",
		AckPolicy:     jetstream.AckExplicitPolicy,
		AckWait:       w.AckWait,
		MaxDeliver:    MaxDeliver,
		DeliverPolicy: jetstream.DeliverAllPolicy,
	})
	if err != nil {
		return fmt.Errorf("worker consumer %s: %v", WorkerGroup, err)
	}
	w.logf("ready (%d at once, ack wait %s; limits: %s)", w.Jobs, w.AckWait, w.Limits)
	var wg sync.WaitGroup
	for range w.Jobs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w.loop(ctx, cons)
		}()
	}
	wg.Wait()
	if w.aborted() {
		return &AbortedError{Name: w.Name, GaveBack: int(w.abandoned.Load())}
	}
	// Run ends when ctx does (the command's interrupt): say so, so that the
	// log of a stopped worker does not end as if it were waiting for jobs.
	w.logf("stopped; it finished the jobs it had started first (a reply it could not store is logged above, and its job goes to another worker)")
	return nil
}

// runningAckWait is the ack wait of the workers' consumer while workers
// use it (fetches waiting or jobs held), or 0 when there is no consumer
// or no worker on it. The consumer is shared: a worker that set another
// value would set it for the running workers too, whose in-progress
// acknowledgements keep to a third of their own, so a worker keeps to
// this one (Run).
func (c *Client) runningAckWait(ctx context.Context) (time.Duration, error) {
	cons, err := c.js.Consumer(ctx, JobStream, WorkerGroup)
	if errors.Is(err, jetstream.ErrConsumerNotFound) {
		return 0, nil
	}
	if err != nil {
		return 0, fmt.Errorf("worker consumer %s: %v", WorkerGroup, err)
	}
	info, err := cons.Info(ctx)
	if err != nil {
		return 0, fmt.Errorf("worker consumer %s: %v", WorkerGroup, err)
	}
	if info.NumWaiting == 0 && info.NumAckPending == 0 {
		return 0, nil
	}
	return info.Config.AckWait, nil
}

// loop takes one job at a time: a job is only taken when this goroutine
// can start it, so no job waits behind another in a worker's buffer.
func (w *Worker) loop(ctx context.Context, cons jetstream.Consumer) {
	for ctx.Err() == nil {
		if !w.waitPause(ctx) {
			continue
		}
		batch, err := cons.Fetch(1, jetstream.FetchMaxWait(time.Second))
		if err != nil {
			if ctx.Err() == nil {
				w.logf("fetch: %v", err)
				sleep(ctx, time.Second)
			}
			continue
		}
		for msg := range batch.Messages() {
			w.handle(ctx, msg)
		}
		if err := batch.Error(); err != nil && ctx.Err() == nil && !errors.Is(err, jetstream.ErrNoMessages) {
			if !errors.Is(err, context.DeadlineExceeded) && !errors.Is(err, jetstream.ErrNoHeartbeat) {
				w.logf("fetch: %v", err)
				sleep(ctx, time.Second)
			}
		}
	}
}

// refusedRetryDelay is how long a job whose seal does not match this
// worker's secret, delivered before, waits before it is delivered again;
// refusedPause is how long the worker's fetch that refused a job then
// waits, so that workers holding the coordinator's secret take the queued
// jobs meanwhile.
const (
	refusedRetryDelay = 2 * time.Second
	refusedPause      = 3 * time.Second
)

const (
	// headerRefusals counts the refusals of a job by workers with
	// another secret (refuse). Not sealed: those workers cannot seal for
	// the coordinator's secret, and workers holding it ignore it.
	headerRefusals = "Ordplan-Refusals"
)

// shownSubject is a job's subject as the worker's lines show it: the
// batch id cut to its first 12 characters, as the coordinator's lines
// show the run (ordplan.jobs.7e18ae67c4b6.3 for job 3 of run
// 7e18ae67c4b6...), which the job's name follows.
func shownSubject(subject string) string {
	rest, ok := strings.CutPrefix(subject, JobSubject+".")
	dot := strings.LastIndexByte(rest, '.')
	if !ok || dot <= 12 {
		return subject
	}
	return JobSubject + "." + rest[:12] + rest[dot:]
}

// otherBuildError is a job published by a coordinator of another build
// than the worker's (Build): the worker refuses it (refuse), since its
// fits might not be those of the build the run records.
type otherBuildError struct {
	job, coordinator, worker string
}

func (e *otherBuildError) Error() string {
	return fmt.Sprintf("job %s comes from a coordinator running ordplan %s, and this worker runs ordplan %s: a run's fits are made by the build that runs it, which its run.json names", e.job, e.coordinator, e.worker)
}

// ownBuild is the worker's build: Build, or build in the tests.
func (w *Worker) ownBuild() string {
	if w.build != "" {
		return w.build
	}
	return Build()
}

// refuse answers a job that does not open (err), or that a coordinator of
// another build published (otherBuildError). A message in ordplan's
// sealed form whose seal does not match may come from a coordinator whose
// secret differs from this worker's (or another version of ordplan): the
// fault may be this worker's, as it may be with another build, so the job is put back on the queue for
// another worker without spending the deliveries the job may count
// (published anew at the end of the queue as it is, headers and all, with
// its refusals counted in headerRefusals, and this message acknowledged),
// and the coordinator is told (a refusal note: it says so, and stops a
// run whose jobs only such workers take). A job delivered before (a
// worker with the secret failed on it, or died) is left unacknowledged
// instead, as publishing it anew would forget those deliveries; that
// delivery counts, and it is removed at its last. A job refused
// MaxRefusals times is removed. Anything else (no seal, give-back headers
// that do not match theirs) is removed at once.
func (w *Worker) refuse(ctx context.Context, msg jetstream.Msg, err error) {
	delivered := uint64(MaxDeliver)
	if md, merr := msg.Metadata(); merr == nil {
		delivered = md.NumDelivered
	}
	var other *otherBuildError
	otherBuild := errors.As(err, &other)
	if !errors.Is(err, errSealMismatch) && !otherBuild {
		w.logf("%s: job refused: %v", shownSubject(msg.Subject()), err)
		msg.TermWithReason("job refused: " + err.Error())
		return
	}
	refusals := 0
	if h := msg.Headers(); h != nil {
		refusals, _ = strconv.Atoi(h.Get(headerRefusals))
	}
	refusals = max(refusals, 0) + 1
	refusal := note{Kind: noteRefused, Delivery: delivered}
	what := "if this worker refuses every job, give it the coordinator's secret file (--queue-secret-file) and the coordinator's version of ordplan"
	whom, others := "a worker holding the coordinator's secret", "workers with another secret than its coordinator's"
	if otherBuild {
		refusal.Build = other.worker
		what = "run one build of ordplan on the coordinator and every worker"
		whom, others = "a worker of the coordinator's build", "workers of another build or secret than its coordinator's"
	}
	w.sendNote(msg.Subject(), refusal)
	switch {
	case refusals >= MaxRefusals || delivered >= MaxDeliver:
		w.logf("%s: job refused: %v; removed from the queue, refused %s by %s, delivered %d times: %s",
			shownSubject(msg.Subject()), err, words.Count(refusals, "time", "times"), others, delivered, what)
		msg.TermWithReason("job refused: " + err.Error())
		return
	case delivered == 1:
		how, aerr := w.putBack(msg, refusals)
		if aerr == nil {
			w.logf("%s: job refused: %v; put back on the queue for %s (%s, refusal %d): %s",
				shownSubject(msg.Subject()), err, whom, how, refusals, what)
			break
		}
		fallthrough
	default:
		w.logf("%s: job refused: %v; left on the queue for %s (delivery %d of at most %d, removed at the last): %s",
			shownSubject(msg.Subject()), err, whom, delivered, MaxDeliver, what)
		msg.NakWithDelay(refusedRetryDelay)
	}
	pause := refusedPause
	if w.refusedPause > 0 {
		pause = w.refusedPause
	}
	sleep(ctx, pause)
}

// putBack publishes a refused job anew, as it is with its refusals
// counted, at the end of the queue, and acknowledges the delivered
// message: the refusal does not count against the job's deliveries.
func (w *Worker) putBack(msg jetstream.Msg, refusals int) (string, error) {
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	again := &nats.Msg{Subject: msg.Subject(), Data: msg.Data(), Header: nats.Header{}}
	for k, v := range msg.Headers() {
		again.Header[k] = append([]string(nil), v...)
	}
	again.Header.Set(headerRefusals, strconv.Itoa(refusals))
	if _, err := w.Client.js.PublishMsg(ctx, again); err != nil {
		return "", err
	}
	if err := msg.Ack(); err != nil {
		return fmt.Sprintf("not counted against its delivery limit; acknowledging the delivered message failed (%v), so it may be computed twice, its first reply kept", err), nil
	}
	return "not counted against its delivery limit", nil
}

// faultRetryDelay is how long a job whose computation failed through a
// fault of the worker waits before it is delivered again; faultPause is
// how long the worker then waits before it takes a job, doubled at each
// fault in a row up to maxFaultPause (faultBackoff), so that a worker that
// fails every job (its cache folder full, limits below what the jobs
// ask) leaves them to the others instead of spending their deliveries.
const (
	faultRetryDelay = time.Second
	faultPause      = 2 * time.Second
	maxFaultPause   = 30 * time.Second
)

// faultBackoff counts a fault and returns how long the worker waits
// before its next job: faultPause (or the tests' w.faultPause), doubled
// for each fault in a row since the last job done without one.
func (w *Worker) faultBackoff() time.Duration {
	n := w.faults.Add(1)
	pause := faultPause
	if w.faultPause > 0 {
		pause = w.faultPause
	}
	for ; n > 1 && pause < maxFaultPause; n-- {
		pause *= 2
	}
	pause = min(pause, maxFaultPause)
	w.pausedUntil.Store(time.Now().Add(pause).UnixNano())
	return pause
}

// waitPause waits, before a fetch, for the pause after a fault to end
// (every job slot of the worker waits); false when ctx ended first.
func (w *Worker) waitPause(ctx context.Context) bool {
	if d := time.Until(time.Unix(0, w.pausedUntil.Load())); d > 0 {
		return sleep(ctx, d)
	}
	return true
}

// handle computes one job, stores its reply and acknowledges it. A job
// without a valid seal, or whose give-back headers do not match theirs
// (deliveries), is dropped; a job delivered more than PoisonAfter
// times (every worker that took it stopped) is answered with an error
// instead of being computed again.
func (w *Worker) handle(ctx context.Context, msg jetstream.Msg) {
	t, err := w.Client.openTask(msg.Subject(), msg.Data())
	var delivered uint64
	var gaveBack int
	if err == nil {
		delivered, gaveBack, err = w.Client.deliveries(msg, t)
	}
	if err == nil && t.Build != w.ownBuild() {
		err = &otherBuildError{job: t.jobName(), coordinator: t.Build, worker: w.ownBuild()}
	}
	if err != nil {
		w.refuse(ctx, msg, err)
		return
	}
	if ctx.Err() != nil {
		// Taken by a fetch that was waiting when the worker was asked to
		// stop: not started, so given back at once, not counted.
		w.giveBack(msg, delivered, gaveBack)
		return
	}
	back := ""
	if gaveBack > 0 {
		back = ", after " + words.Count(gaveBack, "give-back by a stopped worker", "give-backs by stopped workers") + ", not counted"
	}
	w.logf("started %s %s (delivery %d%s)", shownSubject(msg.Subject()), t.jobName(), delivered, back)
	start := time.Now()
	stop := w.keepAlive(msg, delivered)
	abort := w.abortContext()
	giveBack := func() {
		stop()
		w.abandoned.Add(1)
		how := w.giveBack(msg, delivered, gaveBack)
		w.logf("gave back %s %s unfinished (%s)", shownSubject(msg.Subject()), t.jobName(), how)
	}
	if w.Delay > 0 && (w.DelayKind == "" || w.DelayKind == t.Kind) && !w.hold(abort, t) {
		giveBack()
		return
	}
	// Computing and storing do not stop halfway on a stop (ctx); an
	// abort gives the job back instead of waiting for it.
	work := context.WithoutCancel(ctx)
	var r *Reply
	if delivered > PoisonAfter {
		r = &Reply{Batch: t.Batch, Index: t.Index, ID: t.ID, Fault: true, Err: fmt.Sprintf(
			"%s: the job was delivered %d times and no worker finished it (each one stopped while computing it: out of memory, or killed? a worker stopped on purpose gives its jobs back without counting); it is not tried again",
			t.ID, delivered)}
	} else {
		computed := make(chan *Reply, 1)
		go func() { computed <- w.compute(work, t) }()
		select {
		case r = <-computed:
		case <-abort.Done():
			giveBack() // the computation is left to end with the process
			return
		}
	}
	if r.Fault && delivered < PoisonAfter {
		// Perhaps another worker (or this one, later) can: the fault is
		// stored as the reply only at the last delivery before the
		// poison rule.
		stop()
		w.sendNote(msg.Subject(), note{Kind: noteFault, Delivery: delivered, Reason: r.Err})
		pause := w.faultBackoff()
		w.logf("%s: %s (delivery %d; left for another try; this worker takes its next job in %s, so that another can take this one)", t.jobName(), r.Err, delivered, pause)
		msg.NakWithDelay(faultRetryDelay)
		return
	}
	r.Worker, r.Delivered = w.Name, delivered
	key := resultKey(t.Batch, t.Index)
	b, err := w.sealReply(work, key, r)
	if err != nil {
		r = &Reply{Batch: t.Batch, Index: t.Index, ID: t.ID, Worker: w.Name, Delivered: delivered, Fault: true, Err: t.ID + ": " + err.Error()}
		b, err = w.sealReply(work, key, r)
	}
	sctx, cancel := context.WithTimeout(abort, 30*time.Second)
	defer cancel()
	if err == nil {
		_, err = w.Client.results.Create(sctx, key, b)
	}
	stop()
	switch {
	case errors.Is(err, jetstream.ErrKeyExists):
		w.logf("%s: a reply was already stored; this duplicate is dropped", t.jobName())
	case err != nil && w.aborted():
		giveBack()
		return
	case err != nil:
		w.logf("%s: storing the reply: %v (job left for another try)", t.jobName(), err)
		msg.NakWithDelay(time.Second)
		return
	default:
		if !r.Fault {
			w.faults.Store(0)
		}
		status := "ok"
		if r.Err != "" {
			status = "error: " + r.Err
		}
		w.logf("done %s %s in %s: %s", shownSubject(msg.Subject()), t.jobName(), time.Since(start).Round(time.Millisecond), status)
	}
	if err := msg.DoubleAck(sctx); err != nil {
		w.logf("%s: acknowledging: %v", t.jobName(), err)
	}
}

// The headers of a job message published again by a worker that gave it
// back (giveBack): the deliveries of the job that count before this
// message, the give-backs, which do not count, and the seal of both with
// the job (giveBackSeal), so that only a process with the shared secret
// sets the count. A job first published by the coordinator has none.
const (
	headerCounted  = "Ordplan-Deliveries-Counted"
	headerGaveBack = "Ordplan-Given-Back"
	headerSeal     = "Ordplan-Give-Back-Seal"
)

// giveBackSeal is the hex HMAC, with the shared secret, of a job
// message's give-back headers as written, its subject and its data: a
// count changed, moved to another job or written without the secret does
// not match. It does not stop a client that can publish on the jobs
// subjects from publishing again a message it saw, with the headers (and
// so the count) that message had.
func (c *Client) giveBackSeal(subject, counted, gaveBack string, data []byte) string {
	payload := make([]byte, 0, len(counted)+len(gaveBack)+2+len(data))
	payload = append(payload, counted...)
	payload = append(payload, 0)
	payload = append(payload, gaveBack...)
	payload = append(payload, 0)
	return hex.EncodeToString(mac(c.secret, sealGiveBack, subject, append(payload, data...)))
}

// deliveries is the count of a job's deliveries that count against
// PoisonAfter, this one included: the server's delivery count of this
// message (each earlier delivery of it ended unfinished: a worker killed,
// a fault, a reply not stored) plus those the message carries from the
// messages of the job given back before it; and how many times the job
// was given back by a stopped worker, which does not count. Give-back
// headers that are not all there, not counts, or not sealed with the job
// are an error naming the job t and the header: the job is refused.
func (c *Client) deliveries(msg jetstream.Msg, t *Task) (delivered uint64, gaveBack int, err error) {
	delivered = 1
	if md, err := msg.Metadata(); err == nil {
		delivered = md.NumDelivered
	}
	h := msg.Headers()
	counted, back, sum := h.Get(headerCounted), h.Get(headerGaveBack), h.Get(headerSeal)
	if counted == "" && back == "" && sum == "" {
		return delivered, 0, nil // published by the coordinator: never given back
	}
	refuse := func(format string, a ...any) error {
		return fmt.Errorf("job %s: %s; these headers say how many of the job's deliveries count against its limit of %d and only a worker with the shared secret writes them: check which clients may publish on %s.> on the queue server, and that every worker runs this version of ordplan (an older one gives jobs back without %s); a job left without a reply is published again after the coordinator's --job-deadline",
			t.jobName(), fmt.Sprintf(format, a...), PoisonAfter, JobSubject, headerSeal)
	}
	for _, hd := range []struct{ name, value string }{{headerCounted, counted}, {headerGaveBack, back}, {headerSeal, sum}} {
		if hd.value == "" {
			return 0, 0, refuse("it carries give-back headers without %s", hd.name)
		}
	}
	if !hmac.Equal([]byte(sum), []byte(c.giveBackSeal(msg.Subject(), counted, back, msg.Data()))) {
		return 0, 0, refuse("its headers %s: %q and %s: %q do not match their seal %s (written without the shared secret, or changed since)", headerCounted, counted, headerGaveBack, back, headerSeal)
	}
	n, err := strconv.ParseUint(counted, 10, 32)
	if err != nil {
		return 0, 0, refuse("its header %s: %q is not a count", headerCounted, counted)
	}
	gaveBack, err = strconv.Atoi(back)
	if err != nil || gaveBack < 1 {
		return 0, 0, refuse("its header %s: %q is not a count of at least 1", headerGaveBack, back)
	}
	return delivered + n, gaveBack, nil
}

// giveBack hands a job the worker was asked to stop on purpose back to
// the queue without counting this delivery against the job's delivery
// limit: a stopped worker did not fail the job. The server's delivery
// count of a message cannot be lowered, so the job is published again
// as a new message on its subject, carrying the deliveries that counted
// before this one and the give-backs (deliveries), and this message is
// acknowledged. When publishing fails, the message is given back
// unacknowledged instead, and that delivery counts. It says which.
func (w *Worker) giveBack(msg jetstream.Msg, delivered uint64, gaveBack int) string {
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	counted, back := strconv.FormatUint(delivered-1, 10), strconv.Itoa(gaveBack+1)
	again := &nats.Msg{Subject: msg.Subject(), Data: msg.Data(), Header: nats.Header{}}
	again.Header.Set(headerCounted, counted)
	again.Header.Set(headerGaveBack, back)
	again.Header.Set(headerSeal, w.Client.giveBackSeal(msg.Subject(), counted, back, msg.Data()))
	if _, err := w.Client.js.PublishMsg(ctx, again); err != nil {
		msg.Nak()
		return fmt.Sprintf("not acknowledged: delivered again to another worker; publishing it anew failed (%v), so this delivery counts against its limit of %d", err, PoisonAfter)
	}
	if err := msg.Ack(); err != nil {
		// The job is queued twice: the replies store keeps the first
		// reply and drops the other.
		return fmt.Sprintf("queued again for another worker, not counted against its delivery limit; acknowledging the old message failed (%v), so it may be computed twice, its first reply kept", err)
	}
	return "queued again for another worker, not counted against its delivery limit"
}

// sealReply encodes and seals a reply for its key. A reply too large for
// one message goes to the replies store, and the entry points to it.
func (w *Worker) sealReply(ctx context.Context, key string, r *Reply) ([]byte, error) {
	payload, err := encode(r)
	if err != nil {
		return nil, err
	}
	b := seal(w.Client.secret, sealReply, key, payload)
	if int64(len(b)) <= w.Client.nc.MaxPayload()-1024 {
		return b, nil
	}
	if len(b) > MaxReplyBytes {
		return nil, fmt.Errorf("the reply has %d bytes, more than the %d a reply may have", len(b), MaxReplyBytes)
	}
	sctx, cancel := context.WithTimeout(ctx, 5*time.Minute)
	defer cancel()
	if _, err := w.Client.replies.PutBytes(sctx, replyObject(key), b); err != nil {
		return nil, fmt.Errorf("storing a reply of %d bytes in the replies store: %v", len(b), err)
	}
	ref, err := encode(objectRef{Object: replyObject(key), Size: len(b)})
	if err != nil {
		return nil, err
	}
	return seal(w.Client.secret, sealRef, key, ref), nil
}

// keepAlive sends in-progress acknowledgements, so a long job keeps its
// place, and progress notes to the coordinator (sendNote: at once, then
// at each tick), until the returned function is called, which sends the
// end note. delivered is the job's delivery count (deliveries).
func (w *Worker) keepAlive(msg jetstream.Msg, delivered uint64) func() {
	every := min(w.interval, maxNoteEvery)
	progress := note{Kind: noteProgress, Delivery: delivered, EveryMS: every.Milliseconds(), AckMS: w.AckWait.Milliseconds()}
	w.sendNote(msg.Subject(), progress)
	done := make(chan struct{})
	stopped := make(chan struct{})
	go func() {
		defer close(stopped)
		t := time.NewTicker(every)
		defer t.Stop()
		for {
			select {
			case <-done:
				return
			case <-t.C:
				msg.InProgress()
				w.sendNote(msg.Subject(), progress)
			}
		}
	}()
	var once sync.Once
	return func() {
		once.Do(func() {
			close(done)
			<-stopped
			w.sendNote(msg.Subject(), note{Kind: noteEnd, Delivery: delivered})
		})
	}
}

// abortContext is Abort, or a context that never ends.
func (w *Worker) abortContext() context.Context {
	if w.Abort == nil {
		return context.Background()
	}
	return w.Abort
}

// aborted tells whether Abort has ended.
func (w *Worker) aborted() bool {
	return w.Abort != nil && w.Abort.Err() != nil
}

// hold waits Delay before job t is computed, saying so; false when ctx
// (the abort) ended first.
func (w *Worker) hold(ctx context.Context, t *Task) bool {
	w.logf("holding %s job %s for %s", t.Kind, t.jobName(), w.Delay)
	return sleep(ctx, w.Delay)
}

// logf writes a line of the worker's log, begun by its label
// (WorkerLines).
func (w *Worker) logf(format string, a ...any) {
	if w.Log == nil {
		return
	}
	w.logMu.Lock()
	defer w.logMu.Unlock()
	if w.out == nil {
		w.out = WorkerLines(w.Log, w.Name)
	}
	fmt.Fprintf(w.out, format+"\n", a...)
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
