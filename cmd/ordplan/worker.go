package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"runtime"
	"syscall"
	"time"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/queue"
)

const workerUsage = "usage: ordplan worker --queue nats://HOST:PORT [--cache DIR] [--jobs N] [--ack-wait 30s] [--name NAME] [--quiet]"

// cmdWorker pulls fits from the queue until interrupted.
func cmdWorker(args []string, stdout, stderr io.Writer) int {
	return runWorker(args, stdout, stderr, 0)
}

// runWorker is cmdWorker holding each job it takes for hold before
// computing it (the tests kill a worker while it holds one).
func runWorker(args []string, stdout, stderr io.Writer, hold time.Duration) int {
	fs := newFlags("worker", stderr)
	url := fs.String("queue", "", "NATS URL of a JetStream server, e.g. nats://127.0.0.1:4222 (required)")
	cache := fs.String("cache", "", "folder for data files fetched by hash (default: the user cache folder, ordplan/data)")
	jobs := fs.Int("jobs", runtime.GOMAXPROCS(0), "jobs computed at once")
	ackWait := fs.Duration("ack-wait", queue.DefaultAckWait, "a job not acknowledged for this long goes to another worker")
	name := fs.String("name", "", "name in replies and logs (default: host-pid)")
	quiet := fs.Bool("quiet", false, "no line per job")
	if stop, code := parseFlags(fs, args); stop {
		return code
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "ordplan worker: unexpected argument %q\n%s\n", fs.Arg(0), workerUsage)
		return exitUsage
	}
	if *url == "" {
		fmt.Fprintf(stderr, "ordplan worker: --queue is required\n%s\n", workerUsage)
		return exitUsage
	}
	if *jobs < 1 {
		fmt.Fprintf(stderr, "ordplan worker: --jobs must be at least 1, not %d\n", *jobs)
		return exitUsage
	}
	if *ackWait < 100*time.Millisecond {
		fmt.Fprintf(stderr, "ordplan worker: --ack-wait must be at least 100ms, not %s\n", *ackWait)
		return exitUsage
	}
	if *cache == "" {
		dir, err := queue.DefaultCacheDir()
		if err != nil {
			return fail(stderr, fmt.Errorf("no cache folder (give --cache DIR): %v", err))
		}
		*cache = dir
	}
	if *name == "" {
		host, _ := os.Hostname()
		*name = fmt.Sprintf("%s-%d", host, os.Getpid())
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	c, err := queue.Connect(ctx, *url, "ordplan worker "+*name)
	if err != nil {
		return fail(stderr, err)
	}
	defer c.Close()
	w := &queue.Worker{Client: c, Name: *name, CacheDir: *cache, Jobs: *jobs, AckWait: *ackWait, Delay: hold}
	if !*quiet {
		w.Log = stderr
	}
	if err := w.Run(ctx); err != nil {
		return fail(stderr, err)
	}
	return exitOK
}

// runPlan runs the plan here, or, with a queue URL, sends its fits to the
// workers of that queue; the results are the same.
func runPlan(p *plan.Plan, opt runner.Options, queueURL string, log io.Writer) (*runner.Result, error) {
	if queueURL == "" {
		return runner.Run(p, opt)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	c, err := queue.Connect(ctx, queueURL, "ordplan run "+p.Path)
	if err != nil {
		return nil, err
	}
	defer c.Close()
	co := queue.NewCoordinator(ctx, c, p.Hash, log)
	if _, err := co.AddData(p.Data.Path); err != nil {
		return nil, fmt.Errorf("%s: data.file: %v", p.Path, err)
	}
	opt.Executor = co
	res, err := runner.Run(p, opt)
	if err == nil {
		err = co.Err()
	}
	return res, err
}
