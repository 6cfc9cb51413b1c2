package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"time"

	"ordplan/runner/queue"
)

// queueFlags are the options of `run`, `worker` and `fit` that say how to
// reach the queue: the server, TLS, credentials and the shared secret.
// Each may also be given by an environment variable.
type queueFlags struct {
	url, ca, cert, key, creds, nkey, secretFile *string
	deadline                                    *time.Duration
}

func addQueueFlags(fs *flag.FlagSet, urlHelp string, coordinator bool) *queueFlags {
	env := os.Getenv
	q := &queueFlags{
		url:        fs.String("queue", "", urlHelp),
		ca:         fs.String("queue-ca", env(queue.EnvCA), "PEM file of the authorities that sign the server's TLS certificate (env "+queue.EnvCA+")"),
		cert:       fs.String("queue-cert", env(queue.EnvCert), "PEM client certificate, when the server verifies clients (env "+queue.EnvCert+")"),
		key:        fs.String("queue-key", env(queue.EnvKey), "PEM private key of --queue-cert (env "+queue.EnvKey+")"),
		creds:      fs.String("queue-creds", env(queue.EnvCreds), "NATS credentials file (env "+queue.EnvCreds+")"),
		nkey:       fs.String("queue-nkey", env(queue.EnvNkey), "file with an nkey seed (env "+queue.EnvNkey+")"),
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
	cfg := queue.Config{URL: *q.url, Name: name, CAFile: *q.ca, CertFile: *q.cert, KeyFile: *q.key, CredsFile: *q.creds, NkeyFile: *q.nkey}
	if *q.secretFile == "" {
		return cfg, errNoSecret
	}
	s, err := queue.LoadSecret(*q.secretFile)
	if err != nil {
		return cfg, err
	}
	cfg.Secret = s
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
// interrupt or a termination signal; deadline (0: the default) is how long
// a coordinator waits for results. done closes the connection and stops
// catching the signals.
func connectQueue(cfg queue.Config, deadline time.Duration, log io.Writer) (ctx context.Context, c *queue.Client, done func(), err error) {
	ctx, stop := signal.NotifyContext(context.Background(), stopSignals()...)
	cfg.Log = log
	c, err = queue.Connect(ctx, cfg)
	if err != nil {
		stop()
		return nil, nil, nil, err
	}
	c.JobDeadline = deadline
	return ctx, c, func() { c.Close(); stop() }, nil
}
