package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"sync"
	"syscall"
	"time"

	"ordplan/runner/queue"
)

// queueFlags are the options of `run`, `worker` and `fit` that say how to
// reach the queue: the server, TLS, credentials and the shared secret.
// Each may also be given by an environment variable.
type queueFlags struct {
	url, ca, cert, key, creds, nkey, login, token, secretFile *string
	deadline                                                  *time.Duration
	fs                                                        *flag.FlagSet
}

func addQueueFlags(fs *flag.FlagSet, urlHelp string, coordinator bool) *queueFlags {
	env := os.Getenv
	q := &queueFlags{
		fs:         fs,
		url:        fs.String("queue", "", urlHelp),
		ca:         fs.String("queue-ca", env(queue.EnvCA), "PEM file of the authorities that sign the server's TLS certificate (env "+queue.EnvCA+")"),
		cert:       fs.String("queue-cert", env(queue.EnvCert), "PEM client certificate, when the server verifies clients (env "+queue.EnvCert+")"),
		key:        fs.String("queue-key", env(queue.EnvKey), "PEM private key of --queue-cert (env "+queue.EnvKey+")"),
		creds:      fs.String("queue-creds", env(queue.EnvCreds), "NATS credentials file (env "+queue.EnvCreds+")"),
		nkey:       fs.String("queue-nkey", env(queue.EnvNkey), "file with an nkey seed (env "+queue.EnvNkey+")"),
		login:      fs.String("queue-login", env(queue.EnvLogin), "file with the user name (first line) and password (second line) the server expects (env "+queue.EnvLogin+")"),
		token:      fs.String("queue-token", env(queue.EnvToken), "file with the token the server expects, on one line (env "+queue.EnvToken+")"),
		secretFile: fs.String("queue-secret-file", env(queue.EnvSecretFile), "file with the secret shared by the coordinator and the workers: jobs and results carry an HMAC made with it (env "+queue.EnvSecretFile+"; required with --queue)"),
	}
	if coordinator {
		q.deadline = fs.Duration("job-deadline", queue.DefaultJobDeadline, "with --queue: publish the missing jobs again when no result arrives for this long, and fail after a second such wait")
	}
	return q
}

// errNoSecret is a usage error: the queue needs the shared secret.
var errNoSecret = errors.New("--queue needs the shared secret: give --queue-secret-file FILE or set " + queue.EnvSecretFile +
	" (the same file on the coordinator and every worker; see \"Running on a cluster\" in DEVELOPERS.md)")

// config builds the connection settings; a missing secret is errNoSecret.
func (q *queueFlags) config(name string) (queue.Config, error) {
	cfg := queue.Config{URL: *q.url, Name: name, CAFile: *q.ca, CertFile: *q.cert, KeyFile: *q.key, CredsFile: *q.creds, NkeyFile: *q.nkey, LoginFile: *q.login, TokenFile: *q.token}
	// A file flag not given on the command line but holding a file has it
	// from its environment variable: messages name the variable.
	given := map[string]bool{}
	q.fs.Visit(func(f *flag.Flag) { given[f.Name] = true })
	q.fs.VisitAll(func(f *flag.Flag) {
		if strings.HasPrefix(f.Name, "queue-") && !given[f.Name] && f.Value.String() != "" {
			cfg.FromEnv = append(cfg.FromEnv, "--"+f.Name)
		}
	})
	if *q.secretFile == "" {
		return cfg, errNoSecret
	}
	s, err := cfg.LoadSecret(*q.secretFile)
	if err != nil {
		return cfg, err
	}
	cfg.Secret, cfg.SecretFile = s, *q.secretFile
	return cfg, nil
}

// usageOrFail reports a configuration error: a usage error for a missing
// secret, a failure otherwise.
func usageOrFail(cmd string, err error, stderr interface{ Write([]byte) (int, error) }) int {
	if errors.Is(err, errNoSecret) {
		fmt.Fprintf(stderr, "ordplan %s: %v\n", cmd, err)
		return exitUsage
	}
	return fail(stderr, err)
}

// connectQueue connects to the queue with a context that ends on an
// interrupt or a termination signal, unless watched: the command holds an
// output folder, whose interrupt watch (watchInterrupts) stops it with the
// one line saying what the folder holds (O8), which a failed wait for
// workers must not follow. deadline (0: the default) is how long a
// coordinator waits for results. done closes the connection and stops
// catching the signals.
func connectQueue(cfg queue.Config, deadline time.Duration, log io.Writer, watched bool) (ctx context.Context, c *queue.Client, done func(), err error) {
	ctx, stop := context.WithCancel(context.Background())
	if !watched {
		ctx, stop = signal.NotifyContext(context.Background(), stopSignals()...)
	}
	c, err = dialQueue(ctx, cfg, deadline, log)
	if err != nil {
		stop()
		return nil, nil, nil, err
	}
	return ctx, c, func() { c.Close(); stop() }, nil
}

// dialQueue connects to the queue within ctx; log hears of the connection
// lost and made again.
func dialQueue(ctx context.Context, cfg queue.Config, deadline time.Duration, log io.Writer) (*queue.Client, error) {
	cfg.Log = log
	c, err := queue.Connect(ctx, cfg)
	if err != nil {
		return nil, err
	}
	c.JobDeadline = deadline
	return c, nil
}

// workerSignals are a worker's stop signals (stopSignals): the first ends
// stop (the worker takes no new job and finishes those it started), the
// second ends abort (it gives them back and stops at once), and a later
// one is ignored while the worker gives its jobs back.
type workerSignals struct {
	stop, abort context.Context
	ch          chan os.Signal
	mu          sync.Mutex
	second      os.Signal
}

// watchWorkerSignals starts catching the stop signals of a worker,
// telling log (the worker's stderr, its lines begun by its label) at the
// first what a second would do. log is stderr with --quiet too: whoever
// pressed Ctrl-C must learn that the worker goes on with its jobs and
// that a second press stops it at once.
func watchWorkerSignals(log io.Writer) *workerSignals {
	stop, endStop := context.WithCancel(context.Background())
	abort, endAbort := context.WithCancel(context.Background())
	ws := &workerSignals{stop: stop, abort: abort, ch: make(chan os.Signal, 2)}
	signal.Notify(ws.ch, stopSignals()...)
	go func() {
		s, ok := <-ws.ch
		if !ok {
			return
		}
		fmt.Fprintf(log, "asked to stop (%s): it takes no new job and finishes the jobs it started; stop it again (Ctrl-C, SIGTERM) to give them back unfinished and stop at once\n", signalName(s))
		endStop()
		s, ok = <-ws.ch
		if !ok {
			return
		}
		ws.mu.Lock()
		ws.second = s
		ws.mu.Unlock()
		endAbort()
	}()
	return ws
}

// secondSignal is the signal that aborted the worker (nil: none).
func (ws *workerSignals) secondSignal() os.Signal {
	ws.mu.Lock()
	defer ws.mu.Unlock()
	return ws.second
}

// end stops catching the signals.
func (ws *workerSignals) end() {
	signal.Stop(ws.ch)
}

// signalName names a stop signal in a message.
func signalName(s os.Signal) string {
	switch s {
	case os.Interrupt:
		return "SIGINT"
	case syscall.SIGTERM:
		return "SIGTERM"
	case syscall.SIGHUP:
		return "SIGHUP"
	}
	return s.String()
}

// signalExit is the exit code of a command stopped by s: 128 + its
// number (130 for SIGINT), as a shell reports.
func signalExit(s os.Signal) int {
	if n, ok := s.(syscall.Signal); ok {
		return 128 + int(n)
	}
	return 130
}
