package queue

import (
	"context"
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// Client is a connection to a JetStream server with the jobs stream, the
// results bucket and the data and replies stores opened (and created when
// missing).
type Client struct {
	nc      *nats.Conn
	ownConn bool
	secret  []byte
	js      jetstream.JetStream
	jobs    jetstream.Stream
	results jetstream.KeyValue
	data    jetstream.ObjectStore
	replies jetstream.ObjectStore

	// JobDeadline is how long the coordinator waits for the next reply of
	// a batch before it publishes the missing jobs again; after a second
	// such wait without any reply it fails (default DefaultJobDeadline).
	JobDeadline time.Duration
	// WaitNotice is how long the coordinator waits for the next reply of
	// a batch before it logs what it waits for and what the workers'
	// consumer shows (default DefaultWaitNotice; each later notice waits
	// twice as long).
	WaitNotice time.Duration
	// RefusedWait is how long a coordinator whose jobs workers with
	// another secret refuse waits for word from a worker holding its own
	// secret before it stops the run (default DefaultRefusedWait).
	RefusedWait time.Duration
	// Log, when set, hears of discarded replies and republished jobs.
	Log io.Writer
}

// Connect dials the server cfg names, with its TLS settings and
// credentials, and opens the shared resources. No message it returns
// shows a password of the URL. cfg.Log hears of secret files other users
// may read (OpenSecretFiles) before it connects.
func Connect(ctx context.Context, cfg Config) (*Client, error) {
	shown := Redact(cfg.URL)
	if err := cfg.check(); err != nil {
		return nil, fmt.Errorf("queue %s: %v", shown, err)
	}
	opts := []nats.Option{nats.Name(cfg.Name), nats.Timeout(5 * time.Second),
		nats.MaxReconnects(-1), nats.ReconnectWait(500 * time.Millisecond)}
	opts = append(opts, connectionLog(cfg.Log, shown, cfg.URL)...)
	if cfg.CAFile != "" {
		opts = append(opts, nats.RootCAs(cfg.CAFile))
	}
	if cfg.CertFile != "" {
		opts = append(opts, nats.ClientCert(cfg.CertFile, cfg.KeyFile))
	}
	if cfg.CredsFile != "" {
		opts = append(opts, nats.UserCredentials(cfg.CredsFile))
	}
	if cfg.NkeyFile != "" {
		o, err := nats.NkeyOptionFromSeed(cfg.NkeyFile)
		if err != nil {
			return nil, fmt.Errorf("queue %s: nkey file (--queue-nkey) %s: %s", shown, cfg.NkeyFile, scrub(err.Error(), cfg.URL))
		}
		opts = append(opts, o)
	}
	var hidden []string // secrets read from files, never shown
	if cfg.LoginFile != "" {
		user, password, err := readLogin(cfg.LoginFile)
		if err != nil {
			return nil, fmt.Errorf("queue %s: %v", shown, err)
		}
		opts = append(opts, nats.UserInfo(user, password))
		hidden = append(hidden, password)
	}
	if cfg.TokenFile != "" {
		tok, err := readToken(cfg.TokenFile)
		if err != nil {
			return nil, fmt.Errorf("queue %s: %v", shown, err)
		}
		opts = append(opts, nats.Token(tok))
		hidden = append(hidden, tok)
	}
	// Files read as they should be, but open to other users: said once
	// they are usable, so a file refused above gets its refusal alone.
	if cfg.Log != nil {
		for _, w := range cfg.OpenSecretFiles() {
			fmt.Fprintf(cfg.Log, "warning: %s\n", w)
		}
	}
	nc, err := nats.Connect(cfg.URL, opts...)
	if err != nil {
		msg := scrub(err.Error(), cfg.URL)
		for _, h := range hidden {
			msg = strings.ReplaceAll(msg, h, "xxxxx")
		}
		return nil, fmt.Errorf("queue %s: %s", shown, cfg.explainRefusal(err, msg))
	}
	c, err := NewClient(ctx, nc, cfg.Secret)
	if err != nil {
		nc.Close()
		return nil, fmt.Errorf("queue %s: %s", shown, scrub(err.Error(), cfg.URL))
	}
	c.ownConn = true
	return c, nil
}

// connectionLog are the options that tell log (nil: nobody) of the
// connection to the server shown lost and made again, and of the errors
// the server reports on a subscription, in the program's words and
// without a password of url; a connection closed by the program itself
// is not reported.
func connectionLog(log io.Writer, shown, url string) []nats.Option {
	if log == nil {
		return nil
	}
	return []nats.Option{
		nats.DisconnectErrHandler(func(nc *nats.Conn, err error) {
			if nc.IsClosed() {
				return
			}
			why := "the server closed it"
			if err != nil {
				why = scrub(err.Error(), url)
			}
			fmt.Fprintf(log, "queue: lost the connection to the server %s (%s); trying again every 0.5s until it answers, waiting meanwhile (an interrupt stops the command)\n", shown, why)
		}),
		nats.ReconnectHandler(func(*nats.Conn) {
			fmt.Fprintf(log, "queue: connected to the server %s again\n", shown)
		}),
		nats.ErrorHandler(func(_ *nats.Conn, sub *nats.Subscription, err error) {
			on := ""
			if sub != nil {
				on = " (subscription " + sub.Subject + ")"
			}
			fmt.Fprintf(log, "queue: the server %s reported an error: %s%s\n", shown, scrub(err.Error(), url), on)
		}),
	}
}

// NewClient opens the shared resources over an existing connection, which
// Close then leaves open. secret is the shared secret (see Config).
func NewClient(ctx context.Context, nc *nats.Conn, secret []byte) (*Client, error) {
	if len(secret) < MinSecretBytes {
		return nil, fmt.Errorf("the shared secret has %d bytes; at least %d are needed", len(secret), MinSecretBytes)
	}
	js, err := jetstream.New(nc)
	if err != nil {
		return nil, err
	}
	c := &Client{nc: nc, js: js, secret: append([]byte(nil), secret...)}
	c.jobs, err = js.CreateOrUpdateStream(ctx, jetstream.StreamConfig{
		Name:        JobStream,
		Description: "ordplan jobs: one message per fit or partition evaluation",
		Subjects:    []string{JobSubject + ".>"},
		Retention:   jetstream.WorkQueuePolicy,
		Storage:     jetstream.FileStorage,
		MaxAge:      ResultTTL,
	})
	if err != nil {
		return nil, fmt.Errorf("jobs stream %s: %w (is JetStream enabled on the server?)", JobStream, err)
	}
	c.results, err = js.CreateOrUpdateKeyValue(ctx, jetstream.KeyValueConfig{
		Bucket:      ResultBucket,
		Description: "ordplan replies by batch and job index",
		History:     ResultHistory,
		TTL:         ResultTTL,
		Storage:     jetstream.FileStorage,
	})
	if err != nil {
		return nil, fmt.Errorf("results bucket %s: %w", ResultBucket, err)
	}
	c.data, err = js.CreateOrUpdateObjectStore(ctx, jetstream.ObjectStoreConfig{
		Bucket:      DataBucket,
		Description: "ordplan data files by SHA-256",
		Storage:     jetstream.FileStorage,
		TTL:         DataTTL,
	})
	if err != nil {
		return nil, fmt.Errorf("data store %s: %w", DataBucket, err)
	}
	c.replies, err = js.CreateOrUpdateObjectStore(ctx, jetstream.ObjectStoreConfig{
		Bucket:      ReplyBucket,
		Description: "ordplan replies too large for one message",
		Storage:     jetstream.FileStorage,
		TTL:         ResultTTL,
	})
	if err != nil {
		return nil, fmt.Errorf("replies store %s: %w", ReplyBucket, err)
	}
	return c, nil
}

// Close flushes pending acknowledgements and closes the connection if the
// client opened it.
func (c *Client) Close() {
	if c.ownConn {
		c.nc.FlushTimeout(2 * time.Second)
		c.nc.Close()
	}
}

func (c *Client) logf(format string, a ...any) {
	if c.Log != nil {
		fmt.Fprintf(c.Log, format+"\n", a...)
	}
}

// sealTask encodes and seals a task for its subject, with this build
// (Build): the build that must compute it.
func (c *Client) sealTask(t *Task) ([]byte, error) {
	t.Build = Build()
	b, err := encode(t)
	if err != nil {
		return nil, err
	}
	return seal(c.secret, sealTask, jobSubject(t.Batch, t.Index), b), nil
}

// openTask checks and decodes a job message.
func (c *Client) openTask(subject string, b []byte) (*Task, error) {
	kind, payload, err := open(c.secret, subject, b)
	if err != nil {
		return nil, err
	}
	if kind != sealTask {
		return nil, fmt.Errorf("a message of kind %q where a job belongs", kind)
	}
	var t Task
	if err := decode(payload, &t); err != nil {
		return nil, fmt.Errorf("undecodable job: %v", err)
	}
	if jobSubject(t.Batch, t.Index) != subject {
		return nil, fmt.Errorf("the job names %s, not its subject", jobSubject(t.Batch, t.Index))
	}
	return &t, nil
}
