package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"ordplan/render"
	"ordplan/runner"
	"ordplan/runner/fit"
	"ordplan/runner/queue"
)

// fitPartitioned fits one model over the parts through queue workers
// (ordplan fit --parts --queue): each Newton evaluation is summed over the
// parts, and so is the Lipsitz test's.
func fitPartitioned(s runner.SingleFit, f *fitFlags, parts []string, stdout, stderr io.Writer) int {
	qf := f.queue
	a, err := runner.ResolveFit(s)
	if err != nil {
		return fail(stderr, err)
	}
	m, err := s.Model()
	if err != nil {
		return fail(stderr, err)
	}
	if err := a.Partitioned(m); err != nil {
		fmt.Fprintf(stderr, "ordplan fit: --queue: %v; without --queue, --parts reads the parts here as one data set and fits them with every option\n", err)
		return exitUsage
	}
	cfg, err := qf.config("ordplan fit")
	if err != nil {
		return usageOrFail("fit", err, stderr)
	}
	dopt := a.Outcomes[0].Options
	whole, refs, kept, err := queue.PartitionFiles(parts, dopt)
	if err != nil {
		return fail(stderr, err)
	}
	if err := a.PartsCheck(whole, m, kept); err != nil {
		return fail(stderr, err)
	}
	ctx, c, done, err := connectQueue(cfg, *qf.deadline, stderr, false)
	if err != nil {
		return fail(stderr, err)
	}
	defer done()
	// What the queue does that the user should see (jobs published again
	// for want of a reply, replies discarded) goes to stderr.
	c.Log = stderr
	popt := queue.PartitionOptions{Data: dopt}
	res, err := queue.FitPartitioned(ctx, c, refs, whole, m, popt)
	if err != nil {
		return fail(stderr, err)
	}
	a.PartsCollinearity(res, whole)
	var lz *fit.Lipsitz
	if res.OK() {
		// A failed test (a worker's error, an oversized reply, no reply
		// in time) is a test not computed, as on the local path: the fit
		// itself is done and is printed.
		// An interrupt still stops the command.
		// A fault of a worker or of the queue (queue.FaultError) is not.
		if lz, err = queue.LipsitzPartitioned(ctx, c, refs, whole, res, popt); err != nil {
			if fe := (*queue.FaultError)(nil); ctx.Err() != nil || errors.As(err, &fe) {
				return fail(stderr, err)
			}
			lz = &fit.Lipsitz{Test: fit.Test{Name: "lipsitz", Reason: "over the parts: " + err.Error()}}
		}
	}
	checks, err := runner.PartitionedChecks(s, res, parts, whole, lz)
	if err != nil {
		return fail(stderr, err)
	}
	base, err := f.baselineOf(res)
	if err != nil {
		return fail(stderr, err)
	}
	drop := kept.DropSummary()
	for _, n := range whole.Notes {
		drop += "; " + strings.TrimSuffix(n, ".")
	}
	sum := render.DataSummary{File: s.DataName(), Outcome: s.Outcome, RowsRead: kept.RowsRead(), RowsUsed: whole.Rows, DropSummary: drop, Sampling: s.Sampling}
	if err := f.print(stdout, res, sum, base, checks); err != nil {
		return fail(stderr, err)
	}
	if !res.OK() {
		return noEstimates(stderr, res)
	}
	return exitOK
}
