package queue

import (
	"context"
	"encoding/json"
	"fmt"
	"sort"
	"strings"
	"sync"
	"time"
	"unicode"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"ordplan/internal/words"
)

// A worker's word on a job, sent on NoteSubject.<batch>.<index> (plain
// NATS, not stored): while it holds the job, a progress note at once and
// then every noteEvery, and an end note when it lets the job go (stored,
// given back, left for another try); a refusal note when the job's seal
// does not match its secret. The coordinator of the batch listens
// (batchNotes): a worker that stops sending progress on a job (killed, cut
// off from the server) is said long before its job's ack wait passes, and
// a run whose jobs only workers with another secret take ends with a
// message instead of waiting for --job-deadline. Progress and end notes
// are sealed with the shared secret; a refusal note cannot be (the
// refusing worker lacks the coordinator's secret) and only ever makes the
// coordinator say so or, with no worker of its own secret heard from for
// RefusedWait, stop. Notes go to stderr only: no output file depends on
// them.
const (
	NoteSubject = "ordplan.notes" // subjects: ordplan.notes.<batch>.<index>
	// maxNoteEvery bounds the interval between a worker's progress notes
	// (a third of the ack wait when that is shorter).
	maxNoteEvery = 2 * time.Second
	// DefaultRefusedWait is how long a coordinator whose jobs are being
	// refused (refusal notes) waits for word from a worker holding its
	// secret before it stops the run.
	DefaultRefusedWait = time.Minute
	// MaxRefusals is how many times workers with another secret put a
	// job back on the queue before one removes it (a run whose
	// coordinator is gone would otherwise circle among them).
	MaxRefusals = 500
)

const (
	noteProgress = "progress"
	noteEnd      = "end"
	noteRefused  = "refused"
	noteFault    = "fault" // a job left for another try after a fault of the worker
	sealNote     = 'N'     // a JSON note, named by its subject
)

type note struct {
	Worker   string `json:"worker"`
	Kind     string `json:"kind"`
	Delivery uint64 `json:"delivery,omitempty"`
	EveryMS  int64  `json:"every_ms,omitempty"`
	// Build is, in a refusal for another build, the refusing worker's.
	Build string `json:"build,omitempty"`
	// Reason is, in a fault note, the fault.
	Reason string `json:"reason,omitempty"`
	AckMS  int64  `json:"ack_wait_ms,omitempty"`
}

// noteSubjectOf is the notes subject of the job published on subject
// (ordplan.jobs.<batch>.<index>), or "" for another subject.
func noteSubjectOf(subject string) string {
	rest, ok := strings.CutPrefix(subject, JobSubject+".")
	if !ok || rest == "" {
		return ""
	}
	return NoteSubject + "." + rest
}

// sendNote publishes n about the job on subject, sealed unless it is a
// refusal. A note that cannot be sent is not worth a line: it only makes
// the coordinator's messages less timely.
func (w *Worker) sendNote(subject string, n note) {
	to := noteSubjectOf(subject)
	if to == "" {
		return
	}
	n.Worker = w.Name
	b, err := json.Marshal(n)
	if err != nil {
		return
	}
	if n.Kind != noteRefused {
		b = seal(w.Client.secret, sealNote, to, b)
	}
	w.Client.nc.Publish(to, b)
}

// readNote opens a note received on subject: a sealed progress or end
// note, or a refusal (sealed or not). ok is false for anything else.
func (c *Client) readNote(subject string, b []byte) (n note, sealed, ok bool) {
	if kind, payload, err := open(c.secret, subject, b); err == nil {
		if kind != sealNote || json.Unmarshal(payload, &n) != nil {
			return n, false, false
		}
		return n, true, n.Kind == noteProgress || n.Kind == noteEnd || n.Kind == noteRefused || n.Kind == noteFault
	}
	if json.Unmarshal(b, &n) != nil || n.Kind != noteRefused || n.Worker == "" {
		return n, false, false
	}
	return n, false, true
}

// shownName is a worker's name as a coordinator's line shows it: at most
// 80 characters, anything but printable ones as "?".
func shownName(name string) string {
	r := []rune(name)
	if len(r) > 80 {
		r = append(r[:80], '.', '.', '.')
	}
	for k, c := range r {
		if !unicode.IsPrint(c) {
			r[k] = '?'
		}
	}
	return string(r)
}

// heard is a note received by a coordinator.
type heard struct {
	subject string
	note    note
	sealed  bool
	at      time.Time
}

// holding is what a coordinator knows of a worker holding one of its
// jobs: who, since when it last spoke, how often it speaks and its ack
// wait.
type holding struct {
	worker   string
	delivery uint64
	last     time.Time
	every    time.Duration
	ackWait  time.Duration
	said     bool // its silence was said
}

// batchNotes follows the notes of the workers for one batch, in a
// goroutine of its own (follow) that the batch's wait hears from only
// through answered and the cancellation of its context.
type batchNotes struct {
	c       *Client
	id      string
	tasks   []*Task
	sub     *nats.Subscription
	ch      chan heard
	begin   chan struct{} // closed by start
	quit    chan struct{}
	ended   chan struct{}
	mu      sync.Mutex
	done    map[int]bool // tasks with their reply
	holds   map[int]*holding
	refused map[string]int  // refusals by worker
	faulted map[string]bool // workers whose fault was said
	order   []string        // workers in the order they first refused
	since   time.Time       // first refusal since word from a worker with the secret
	wait    time.Duration
	// connected tells whether the coordinator's own connection is up;
	// offline is set while it was seen down: workers are not heard then,
	// and their silence is not theirs.
	connected func() bool
	offline   bool
}

// follow subscribes to every note (a sealed one of any batch shows a
// worker with this coordinator's secret alive) and follows them until
// stop; a run whose jobs only refusing workers take is ended by cancel
// with the reason. Notes come through a buffer; when it is full they are
// dropped, never waited for.
func (c *Client) follow(ctx context.Context, id string, tasks []*Task, cancel context.CancelCauseFunc) (*batchNotes, error) {
	bn := &batchNotes{c: c, id: id, tasks: tasks, ch: make(chan heard, 256), begin: make(chan struct{}), quit: make(chan struct{}), ended: make(chan struct{}),
		done: map[int]bool{}, holds: map[int]*holding{}, refused: map[string]int{}, faulted: map[string]bool{}, wait: c.RefusedWait, connected: c.nc.IsConnected}
	if bn.wait <= 0 {
		bn.wait = DefaultRefusedWait
	}
	sub, err := c.nc.Subscribe(NoteSubject+".>", func(m *nats.Msg) {
		n, sealed, ok := c.readNote(m.Subject, m.Data)
		if !ok {
			return
		}
		select {
		case bn.ch <- heard{subject: m.Subject, note: n, sealed: sealed, at: time.Now()}:
		default:
		}
	})
	if err != nil {
		return nil, fmt.Errorf("workers' notes: %v", err)
	}
	bn.sub = sub
	go func() {
		defer close(bn.ended)
		select { // the notes wait in ch meanwhile
		case <-bn.begin:
		case <-bn.quit:
			return
		}
		tick := time.NewTicker(250 * time.Millisecond)
		defer tick.Stop()
		for {
			select {
			case <-bn.quit:
				return
			case h := <-bn.ch:
				bn.mu.Lock()
				bn.take(h)
				bn.mu.Unlock()
			case now := <-tick.C:
				bn.mu.Lock()
				err := bn.check(ctx, now)
				bn.mu.Unlock()
				if err != nil {
					cancel(err)
					return
				}
			}
		}
	}()
	return bn, nil
}

// start lets the notes heard so far, and the later ones, be said: after
// the batch's first line, which says what was published.
func (bn *batchNotes) start() {
	select {
	case <-bn.begin:
	default:
		close(bn.begin)
	}
}

// answered marks task i as having its reply: nothing more is said of it.
func (bn *batchNotes) answered(i int) {
	bn.mu.Lock()
	defer bn.mu.Unlock()
	bn.done[i] = true
	delete(bn.holds, i)
	bn.since = time.Time{} // a reply: a worker with the secret is at work
}

func (bn *batchNotes) stop() {
	bn.sub.Unsubscribe()
	close(bn.quit)
	<-bn.ended
}

// take records a note.
func (bn *batchNotes) take(h heard) {
	if h.sealed && h.note.Kind != noteRefused {
		// A worker with this coordinator's secret (and build) is alive.
		bn.since = time.Time{}
	}
	i, ok := replyIndex(strings.TrimPrefix(h.subject, NoteSubject+"."), bn.id, len(bn.tasks))
	if !ok || bn.done[i] {
		return
	}
	t := bn.tasks[i]
	n := h.note
	n.Worker = shownName(n.Worker) // a refusal note is not sealed
	switch {
	case n.Kind == noteRefused:
		if bn.since.IsZero() {
			bn.since = h.at
		}
		switch {
		case bn.refused[n.Worker] > 0:
		case n.Build != "":
			bn.order = append(bn.order, n.Worker)
			bn.c.logf("queue: worker %s refused job %s: it runs ordplan %s, and this coordinator ordplan %s; the job stays on the queue for a worker of this build: run one build of ordplan on the coordinator and every worker",
				n.Worker, t.label(), shownName(n.Build), Build())
		default:
			bn.order = append(bn.order, n.Worker)
			bn.c.logf("queue: worker %s refused job %s: its secret differs from this coordinator's, or it runs another version of ordplan; the job stays on the queue for a worker with this coordinator's secret: give worker %s the coordinator's secret file (--queue-secret-file) and this version of ordplan, or stop it",
				n.Worker, t.label(), n.Worker)
		}
		bn.refused[n.Worker]++
	case n.Kind == noteFault:
		if h.sealed && !bn.faulted[n.Worker] {
			bn.faulted[n.Worker] = true
			reason := []rune(n.Reason)
			if len(reason) > 300 {
				reason = append(reason[:300], '.', '.', '.')
			}
			bn.c.logf("queue: worker %s failed job %s through a fault of its own, not of the fit (delivery %d; left for another try, and that worker waits before its next job): %s",
				n.Worker, t.label(), n.Delivery, string(reason))
		}
	case n.Kind == noteEnd:
		if hd := bn.holds[i]; hd != nil && hd.worker == n.Worker {
			delete(bn.holds, i)
		}
	default:
		hd := bn.holds[i]
		switch {
		case hd == nil || hd.worker != n.Worker || hd.delivery != n.Delivery:
			if hd != nil && hd.said {
				bn.c.logf("queue: job %s went to worker %s (delivery %d)", t.label(), n.Worker, n.Delivery)
			}
			hd = &holding{worker: n.Worker, delivery: n.Delivery}
			bn.holds[i] = hd
		case hd.said:
			bn.c.logf("queue: worker %s sends progress on job %s again", n.Worker, t.label())
			hd.said = false
		}
		hd.last = h.at
		hd.every = time.Duration(n.EveryMS) * time.Millisecond
		hd.ackWait = time.Duration(n.AckMS) * time.Millisecond
	}
}

// refusing says, while the batch's jobs are being refused with no word
// from a worker holding the coordinator's secret, who refuses them and
// when the run stops for it; "" otherwise.
func (bn *batchNotes) refusing() string {
	bn.mu.Lock()
	defer bn.mu.Unlock()
	if bn.since.IsZero() {
		return ""
	}
	return fmt.Sprintf("only workers whose secret differs from this coordinator's take them, and refuse them: %s; no worker with this coordinator's secret has been heard from since %s, and the run stops if none is by %s",
		bn.refusers(), bn.since.Format("15:04:05"), bn.since.Add(bn.wait).Format("15:04:05"))
}

// refusers lists the workers that refused jobs, with their refusals.
func (bn *batchNotes) refusers() string {
	who := make([]string, len(bn.order))
	for k, w := range bn.order {
		who[k] = fmt.Sprintf("%s (%s)", w, words.Count(bn.refused[w], "refusal", "refusals"))
	}
	return strings.Join(who, ", ")
}

// check says which workers stopped sending progress (silent for two and a
// half of their intervals), and returns an error when jobs were refused
// and no worker with this coordinator's secret was heard from for the
// refused wait; while the coordinator's own connection is down it says
// nothing, and counts both anew from its return.
func (bn *batchNotes) check(ctx context.Context, now time.Time) error {
	if !bn.connected() {
		bn.offline = true // the connection's loss is said (connectionLog)
		return nil
	}
	if bn.offline {
		// Back: the workers' silence is counted from now, as is the
		// wait for one with the secret.
		bn.offline = false
		for _, hd := range bn.holds {
			hd.last = now
		}
		if !bn.since.IsZero() {
			bn.since = now
		}
	}
	idx := make([]int, 0, len(bn.holds))
	for i := range bn.holds {
		idx = append(idx, i)
	}
	sort.Ints(idx)
	for _, i := range idx {
		hd := bn.holds[i]
		if hd.said || hd.every <= 0 || now.Sub(hd.last) < hd.every*5/2 {
			continue
		}
		hd.said = true
		bn.c.logf("queue: worker %s stopped sending progress on job %s at %s (killed, or cut off from the server?); unless it speaks again, the server gives the job to another worker once its ack wait (%s) has passed without word from it, at about %s",
			hd.worker, bn.tasks[i].label(), hd.last.Format("15:04:05"), hd.ackWait, hd.last.Add(hd.ackWait).Format("15:04:05"))
	}
	if bn.since.IsZero() || now.Sub(bn.since) < bn.wait {
		return nil
	}
	removed := "its jobs were removed from the queue"
	pctx, cancel := context.WithTimeout(context.WithoutCancel(ctx), 10*time.Second)
	defer cancel()
	// Purged twice: a job a refusing worker held during the first purge
	// is put back on the queue (putBack) a moment later.
	for k := range 2 {
		if k > 0 {
			sleep(pctx, time.Second)
		}
		if err := bn.c.jobs.Purge(pctx, jetstream.WithPurgeSubject(JobSubject+"."+bn.id+".>")); err != nil {
			removed = fmt.Sprintf("its jobs could not be removed from the queue (%v)", err)
			break
		}
	}
	return fmt.Errorf("only workers that refuse this run's jobs took them for %s: %s, whose secret differs from this coordinator's (or which run another version of ordplan), and no worker with this coordinator's secret was heard from: give those workers the coordinator's secret file (--queue-secret-file) and version, or start one that has them, then run again (the results already made are reused); %s",
		bn.wait, bn.refusers(), removed)
}
