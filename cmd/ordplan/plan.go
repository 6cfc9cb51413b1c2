package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"

	"ordplan/plan"
	"ordplan/render"
	"ordplan/runner"
)

func cmdCheck(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("check", stderr)
	if stop, code := parseFlags(fs, args); stop {
		return code
	}
	if fs.NArg() != 1 {
		fmt.Fprintln(stderr, "usage: ordplan check PLAN.yaml")
		return exitUsage
	}
	p, err := plan.Load(fs.Arg(0))
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	if err := runner.CheckData(p); err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	fmt.Fprintf(stdout, "%s: plan is valid (%d outcome(s), %d predictors, sha256 %s)\n", p.Path, len(p.Outcomes), len(p.Predictors), p.Hash)
	return exitOK
}

func cmdRun(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("run", stderr)
	out := fs.String("out", "", "output directory (default: out/<plan name>)")
	previous := fs.String("previous", "", "output directory of an earlier run: say what changed in the decisions")
	workers := fs.Int("workers", 0, "fits run at once (default: all cores); results do not depend on it")
	quiet := fs.Bool("quiet", false, "no progress lines")
	queueURL := fs.String("queue", "", "run the fits on ordplan worker processes through the JetStream server at this NATS URL")
	// Accept the plan before or after the options.
	var planPath string
	if len(args) > 0 && len(args[0]) > 0 && args[0][0] != '-' {
		planPath, args = args[0], args[1:]
	}
	if stop, code := parseFlags(fs, args); stop {
		return code
	}
	if planPath == "" && fs.NArg() == 1 {
		planPath = fs.Arg(0)
	} else if fs.NArg() > 0 || planPath == "" {
		fmt.Fprintln(stderr, "usage: ordplan run PLAN.yaml [--out DIR] [--previous DIR] [--workers N] [--queue nats://HOST:PORT]")
		return exitUsage
	}
	p, err := plan.Load(planPath)
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	dir := *out
	if dir == "" {
		base := filepath.Base(planPath)
		dir = filepath.Join("out", base[:len(base)-len(filepath.Ext(base))])
	}
	opt := runner.Options{Workers: *workers}
	if !*quiet && isTerminal(os.Stderr) {
		opt.Progress = os.Stderr
	}
	var queueLog io.Writer
	if !*quiet {
		queueLog = stderr
	}
	res, err := runPlan(p, opt, *queueURL, queueLog)
	if err != nil {
		return fail(stderr, err)
	}
	dec := runner.BuildDecisions(res)
	var changes []string
	if *previous != "" {
		if changes, err = runner.Changes(*previous, dec); err != nil {
			return fail(stderr, err)
		}
	}
	files, err := render.Outputs(res, dec, changes)
	if err != nil {
		return fail(stderr, err)
	}
	if err := runner.WriteFiles(res, dir, files); err != nil {
		return fail(stderr, err)
	}
	for _, o := range dec.Outcomes {
		chosen := "no model chosen"
		if o.Chosen != nil {
			chosen = "chosen: " + *o.Chosen
		}
		fmt.Fprintf(stdout, "%s: %s\n", o.Outcome, chosen)
	}
	for _, c := range changes {
		fmt.Fprintf(stdout, "change: %s\n", c)
	}
	fmt.Fprintf(stdout, "report: %s\n", filepath.Join(dir, "report.html"))
	return exitOK
}

func isTerminal(f *os.File) bool {
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}
