package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"time"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/queue"
)

const workerUsage = "usage: ordplan worker --queue nats://HOST:PORT --queue-secret-file FILE [--queue-ca FILE] [--queue-cert FILE --queue-key FILE] [--queue-creds FILE | --queue-nkey FILE | --queue-login FILE | --queue-token FILE] [--cache DIR] [--jobs N] [--ack-wait 30s] [--name NAME] [--quiet]"

// cmdWorker pulls fits from the queue until interrupted.
func cmdWorker(args []string, stdout, stderr io.Writer) int {
	return runWorker(args, stdout, stderr, 0, "")
}

// runWorker is cmdWorker holding each job it takes (of kind holdKind, or
// every job when it is empty) for hold before computing it (the tests kill
// a worker while it holds one).
func runWorker(args []string, stdout, stderr io.Writer, hold time.Duration, holdKind string) int {
	fs := newFlags("worker", stderr)
	qf := addQueueFlags(fs, "NATS URL of a JetStream server, e.g. nats://127.0.0.1:4222 or tls://HOST:4222 (required)", false)
	url := qf.url
	cache := fs.String("cache", "", "folder for data files fetched by hash (default: the user cache folder, ordplan/data)")
	jobs := fs.Int("jobs", runtime.GOMAXPROCS(0), "jobs computed at once")
	ackWait := fs.Duration("ack-wait", queue.DefaultAckWait, "a job not acknowledged for this long goes to another worker")
	name := fs.String("name", "", "name in replies and logs (default: host-pid)")
	quiet := fs.Bool("quiet", false, "no line per job (the line at a stop signal, saying what a second does, still prints)")
	maxStarts := fs.Int("max-starts", queue.DefaultLimits.Starts, "refuse jobs asking for more random starts")
	maxIter := fs.Int("max-iterations", queue.DefaultLimits.Iterations, "refuse jobs asking for more Newton iterations")
	maxPred := fs.Int("max-predictors", queue.DefaultLimits.Predictors, "refuse jobs with more predictors")
	maxData := fs.Int64("max-data-mb", queue.DefaultLimits.DataBytes>>20, "refuse jobs whose data file is larger (MB)")
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
	if *maxStarts < 1 || *maxIter < 1 || *maxPred < 1 || *maxData < 1 {
		fmt.Fprintln(stderr, "ordplan worker: --max-starts, --max-iterations, --max-predictors and --max-data-mb must be at least 1")
		return exitUsage
	}
	if *name == "" {
		host, _ := os.Hostname()
		*name = fmt.Sprintf("%s-%d", host, os.Getpid())
	}
	// From here every line the worker writes begins with its label
	// (queue.WorkerLines), as its log's lines do: a user reading the
	// terminals of a coordinator and its workers tells them apart.
	out := queue.WorkerLines(stderr, *name)
	failed := func(err error) int { return failLines(out, "", err) }
	if *cache == "" {
		dir, err := queue.DefaultCacheDir()
		if err != nil {
			return failed(fmt.Errorf("no cache folder (give --cache DIR): %v", err))
		}
		*cache = dir
	}
	cfg, err := qf.config(queue.WorkerLabel(*name))
	if errors.Is(err, errNoSecret) {
		return usageOrFail("worker", err, stderr)
	}
	if err != nil {
		return failed(err)
	}
	if err := queue.CacheUsable(*cache); err != nil {
		return failed(err)
	}
	var log io.Writer
	if !*quiet {
		log = stderr // the worker begins its lines with its label itself
	}
	sig := watchWorkerSignals(out) // --quiet or not
	defer sig.end()
	c, err := dialQueue(sig.stop, cfg, 0, out)
	if err != nil {
		return failed(err)
	}
	w := &queue.Worker{Client: c, Name: *name, CacheDir: *cache, Jobs: *jobs, AckWait: *ackWait, Delay: hold, DelayKind: holdKind,
		Limits: queue.Limits{Starts: *maxStarts, Iterations: *maxIter, Predictors: *maxPred, DataBytes: *maxData << 20},
		Abort:  sig.abort, Log: log}
	err = w.Run(sig.stop)
	c.Close() // sends the jobs given back before the process ends
	var aborted *queue.AbortedError
	if errors.As(err, &aborted) {
		// A second stop signal: the jobs are not done, which the exit
		// status says as an interrupted command's does (O8).
		fmt.Fprintf(out, "%v\n", err)
		return signalExit(sig.secondSignal())
	}
	if err != nil {
		return failed(err)
	}
	return exitOK
}

// runPlan runs the plan here, or, with a queue URL, sends its fits to the
// workers of that queue; the results are the same. log hears of the
// queue's work (nil: --quiet), stderr of the connection lost and made
// again, which --quiet does not silence.
func runPlan(p *plan.Plan, opt runner.Options, cfg *queue.Config, deadline time.Duration, log, stderr io.Writer) (*runner.Result, error) {
	if cfg == nil {
		return runner.Run(p, opt)
	}
	ctx, c, done, err := connectQueue(*cfg, deadline, stderr, true) // run's output folder is watched
	if err != nil {
		return nil, err
	}
	defer done()
	return runOnQueue(ctx, c, p, opt, log)
}

// runOnQueue runs a plan with its grids' fits made by workers: a
// coordinator of its own (its jobs carry the plan's hash and the data's),
// the data file or parts registered, and a failure of the queue itself
// reported rather than the run's result. ordplan run --queue and every
// replicate of ordplan power --queue go through it.
func runOnQueue(ctx context.Context, c *queue.Client, p *plan.Plan, opt runner.Options, log io.Writer) (*runner.Result, error) {
	co := queue.NewCoordinator(ctx, c, p.Hash, log)
	if p.Data.Parts != nil {
		if _, k, err := co.AddParts(p.Data.PartPaths); err != nil {
			return nil, p.Data.PartWhere(p.Path, k, err)
		}
	} else if _, err := co.AddData(p.Data.Path); err != nil {
		return nil, fmt.Errorf("%s: data.file: %v", p.Path, err)
	}
	opt.Executor = co
	res, err := runner.Run(p, opt)
	if err == nil {
		err = co.Err()
	}
	return res, err
}
