package main

import (
	"fmt"
	"io"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"ordplan/plan"
	"ordplan/render"
	"ordplan/runner"
	"ordplan/runner/queue"
	"ordplan/runner/simulate"
)

const powerUsage = "usage: ordplan power PLAN.yaml --n 200,400,800 [--replicates 500] [--alpha 0.05] [--out DIR] [--workers N] [--quiet] [--allow-unregistered-changes]"

// cmdPower sizes the study: the whole decision procedure on many data sets
// simulated from the plan's assumptions at each sample size.
func cmdPower(args []string, stdout, stderr io.Writer) int {
	rawArgs := append([]string(nil), args...)
	fs := newFlags("power", stderr)
	sizes := fs.String("n", "", "sample sizes, comma separated (required)")
	reps := fs.Int("replicates", 500, "data sets simulated at each size")
	alpha := fs.Float64("alpha", 0.05, "level of the Wald tests of the plan's hypotheses")
	out := fs.String("out", "", "output directory (default: out/<plan name>-power)")
	workers := workersFlag(fs, "replicates")
	quiet := fs.Bool("quiet", false, "no progress lines")
	qf := addQueueFlags(fs, "run each replicate's fits on ordplan worker processes through the JetStream server at this NATS URL", true)
	allow := fs.Bool("allow-unregistered-changes", false, "simulate although the plan departs from its frozen form without a stated reason (the power report says so in its first lines, UNREGISTERED CHANGES, and run.json records it)")
	planPath, stop, code := planArg(fs, args, powerUsage, stderr)
	if stop {
		return code
	}
	if strings.TrimSpace(*sizes) == "" {
		fmt.Fprintf(stderr, "ordplan power: --n is required: the sample sizes to simulate, at least %d each, comma separated (e.g. --n 200,400,800)\n", plan.MinSimulatedRows)
		return exitUsage
	}
	var ns []int
	for _, s := range strings.Split(*sizes, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(s))
		if err != nil || n < plan.MinSimulatedRows {
			fmt.Fprintf(stderr, "ordplan power: --n: want sample sizes of at least %d, comma separated (e.g. 200,400,800), got %q\n", plan.MinSimulatedRows, *sizes)
			return exitUsage
		}
		if n > plan.MaxSimulatedRows {
			fmt.Fprintf(stderr, "ordplan power: --n: the sample size %d is above %d, the most rows ordplan simulates (as for assumptions.n); give sizes from %d to %d\n", n, plan.MaxSimulatedRows, plan.MinSimulatedRows, plan.MaxSimulatedRows)
			return exitUsage
		}
		if k := slices.Index(ns, n); k >= 0 {
			fmt.Fprintf(stderr, "ordplan power: --n: the sample size %d is given twice (items %d and %d of %q): each size is simulated once; give every size once\n", n, k+1, len(ns)+1, *sizes)
			return exitUsage
		}
		ns = append(ns, n)
	}
	if *reps < 2 {
		fmt.Fprintln(stderr, "ordplan power: --replicates must be at least 2")
		return exitUsage
	}
	if !(*alpha > 0 && *alpha < 1) {
		fmt.Fprintln(stderr, "ordplan power: --alpha must be between 0 and 1")
		return exitUsage
	}
	var qcfg *queue.Config
	if *qf.url != "" {
		cfg, err := qf.config("ordplan power " + planPath)
		if err != nil {
			return usageOrFail("power", err, stderr)
		}
		qcfg = &cfg
	}
	p, err := loadForSimulation(planPath, plan.Rows{Sizes: ns, Flag: "--n"})
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	warnUnedited(p, stderr)
	reg, code := registration(p, *allow, stderr)
	if code != exitOK {
		return code
	}
	dir := *out
	if dir == "" {
		base := filepath.Base(planPath)
		dir = filepath.Join("out", base[:len(base)-len(filepath.Ext(base))]+"-power")
	}
	olock, err := claimOutput(dir, "power", render.PowerFiles, stderr)
	if err != nil {
		return fail(stderr, err)
	}
	defer olock.Unlock()
	tmp, err := olock.tempDir("ordplan-power-")
	if err != nil {
		return fail(stderr, err)
	}
	opt := simulate.PowerOptions{Sizes: ns, Replicates: *reps, Alpha: *alpha, Workers: *workers, TempDir: tmp}
	if !*quiet {
		opt.Progress = olock.progress(stderr)
	}
	if qcfg != nil {
		ctx, c, done, err := connectQueue(*qcfg, *qf.deadline, stderr, true) // olock's folder is watched
		if err != nil {
			return fail(stderr, err)
		}
		defer done()
		var qlog io.Writer
		if !*quiet {
			qlog = stderr
		}
		// Each replicate is run as ordplan run --queue runs a plan: its
		// jobs carry the replicate's data hash, so replicates never share
		// results.
		opt.Run = func(q *plan.Plan) (*runner.Result, error) {
			return runOnQueue(ctx, c, q, runner.Options{Workers: 1, NoTermTests: true, NoSensitivity: true, NoStability: true}, qlog)
		}
	}
	pr, err := simulate.Power(p, opt)
	if err != nil {
		return fail(stderr, err)
	}
	files, err := render.PowerOutputs(pr, reg)
	if err != nil {
		return fail(stderr, err)
	}
	command := commandLine(append([]string{"ordplan", "power"}, resultArgs(fs, rawArgs, planPath)...))
	err = writeOutputs(olock, dir, files, func(files map[string][]byte) ([]byte, error) {
		return runner.SimulationRunJSON(p, reg, command, files)
	})
	if err != nil {
		return fail(stderr, err)
	}
	printRegistration(stdout, reg, false)
	for _, op := range pr.Outcomes {
		for _, s := range op.Sizes {
			var parts []string
			for _, h := range s.Hypotheses {
				at := ""
				if h.HoldsAt != "" {
					at = " (at " + h.HoldsAt + ")"
				}
				parts = append(parts, fmt.Sprintf("%s%s: power %s", h.Hypothesis, at, h.Power.Text("MC se ")))
			}
			parts = append(parts, mostOftenChosen(s.Chosen))
			fmt.Fprintf(stdout, "%s n=%d: %s\n", op.Outcome, s.N, strings.Join(parts, "; "))
		}
	}
	fmt.Fprintf(stdout, "report: %s\n", filepath.Join(dir, "power.html"))
	for _, op := range pr.Outcomes {
		for _, s := range op.Sizes {
			if c := s.Clusters; c != nil && c.FewWarned.Count > 0 {
				fmt.Fprintf(stderr, "warning: %s: outcome %s, n = %d (%d of %d replicates): %s\n", p.Path, op.Outcome, s.N, c.FewWarned.Count, c.FewWarned.Of, c.Warning)
			}
		}
	}
	// A replicate that met an internal error (a defect of the program)
	// failed alone and is counted in the report; the command says so and
	// exits 1, as an internal error of the command itself does.
	code = exitOK
	for _, op := range pr.Outcomes {
		for _, s := range op.Sizes {
			if s.InternalErrors > 0 {
				fmt.Fprintf(stderr, "ordplan power: outcome %s, n = %d: %d of %d replicates failed on an %s; they are counted in %s as a plan that could not be run\n", op.Outcome, s.N, s.InternalErrors, s.Failed.Of, s.FirstInternal, filepath.Join(dir, "power.html"))
				code = exitFail
			}
		}
	}
	return code
}

// mostOftenChosen names the model chosen most often, or every model tied
// at the top (in order of name, as the study sorts them), with the share.
func mostOftenChosen(chosen []simulate.ModelShare) string {
	var top []string
	for _, c := range chosen {
		if c.Share.Count == chosen[0].Share.Count {
			top = append(top, c.Model)
		}
	}
	slices.Sort(top)
	if len(top) == 1 {
		return fmt.Sprintf("most often chosen %s (%.3f)", top[0], chosen[0].Share.Rate)
	}
	return fmt.Sprintf("most often chosen, tied: %s (%.3f each)", strings.Join(top, ", "), chosen[0].Share.Rate)
}
