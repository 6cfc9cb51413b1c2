package main

import (
	"bytes"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"ordplan/plan"
	"ordplan/render"
	"ordplan/runner"
	"ordplan/runner/simulate"
)

const rehearseUsage = "usage: ordplan rehearse PLAN.yaml [--n N] [--out DIR] [--workers N] [--quiet] [--allow-unregistered-changes]"

// simulatedFile is the name of the simulated data among a rehearsal's outputs.
const simulatedFile = "simulated-data.csv"

// loadForSimulation reads a plan whose data need not exist yet, to
// simulate the rows given (assumptions.n when rows has no sizes).
func loadForSimulation(path string, rows plan.Rows) (*plan.Plan, error) {
	src, err := plan.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return plan.ParseSimulation(src, path, rows)
}

// cmdRehearse runs the whole plan on data simulated from its assumptions.
func cmdRehearse(args []string, stdout, stderr io.Writer) int {
	rawArgs := append([]string(nil), args...)
	fs := newFlags("rehearse", stderr)
	n := fs.Int("n", 0, "rows to simulate (default: assumptions.n)")
	out := fs.String("out", "", "output directory (default: out/<plan name>-rehearsal)")
	workers := workersFlag(fs, "fits")
	quiet := fs.Bool("quiet", false, "no progress lines")
	allow := fs.Bool("allow-unregistered-changes", false, "rehearse although the plan departs from its frozen form without a stated reason (the report says so in its first lines)")
	planPath, stop, code := planArg(fs, args, rehearseUsage, stderr)
	if stop {
		return code
	}
	// Given, --n is judged whatever its value (0 included, the flag's
	// value when it is not given); not given, assumptions.n is simulated.
	nGiven := false
	fs.Visit(func(f *flag.Flag) { nGiven = nGiven || f.Name == "n" })
	var simulated plan.Rows
	if nGiven {
		if *n < plan.MinSimulatedRows {
			fmt.Fprintf(stderr, "ordplan rehearse: --n must be at least %d\n", plan.MinSimulatedRows)
			return exitUsage
		}
		if *n > plan.MaxSimulatedRows {
			fmt.Fprintf(stderr, "ordplan rehearse: --n %d is above %d, the most rows ordplan simulates (as for assumptions.n); give --n from %d to %d\n", *n, plan.MaxSimulatedRows, plan.MinSimulatedRows, plan.MaxSimulatedRows)
			return exitUsage
		}
		simulated = plan.Rows{Sizes: []int{*n}, Flag: "--n"}
	}
	p, err := loadForSimulation(planPath, simulated)
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	warnUnedited(p, stderr)
	reg, code := registration(p, *allow, stderr)
	if code != exitOK {
		return code
	}
	sim, err := simulate.New(p)
	if err != nil {
		return fail(stderr, err)
	}
	dir := *out
	if dir == "" {
		base := filepath.Base(planPath)
		dir = filepath.Join("out", base[:len(base)-len(filepath.Ext(base))]+"-rehearsal")
	}
	olock, err := claimOutput(dir, "rehearse", append(reportFiles(p), simulatedFile), stderr)
	if err != nil {
		return fail(stderr, err)
	}
	defer olock.Unlock()
	rows := p.Assumptions.N
	if nGiven {
		rows = *n
	}
	var buf bytes.Buffer
	written, err := sim.WriteCounted(&buf, rows, 0)
	if err != nil {
		return fail(stderr, err)
	}
	tmp, err := olock.tempDir("ordplan-rehearse-")
	if err != nil {
		return fail(stderr, err)
	}
	q := *p
	q.Data.SetFile(simulatedFile, filepath.Join(tmp, simulatedFile))
	if err := os.WriteFile(q.Data.Path, buf.Bytes(), 0o644); err != nil {
		return fail(stderr, err)
	}
	opt := runner.Options{Workers: *workers}
	if !*quiet {
		pr := olock.progress(stderr)
		opt.Progress, opt.Resampled = pr, pr.resampled(&q)
	}
	res, err := runner.Run(&q, opt)
	if err != nil {
		// The simulated file lies in a temporary folder removed on return:
		// name it as the outputs would have.
		msg := strings.ReplaceAll(err.Error(), q.Data.Path, simulatedFile+" (not kept: the rehearsal wrote nothing)")
		return fail(stderr, fmt.Errorf("rehearsal on simulated data: %w", renamedError{msg, err}))
	}
	res.Command = commandLine(append([]string{"ordplan", "rehearse"}, resultArgs(fs, rawArgs, planPath)...))
	res.Registration = reg
	res.Simulated = &runner.Simulation{Command: "rehearse", N: rows, Seed: p.Seed, Link: sim.Link.String(), Model: sim.GeneratingModel(), File: simulatedFile, Truth: sim.Truth()}
	analysed := rows
	if len(p.Subset) > 0 && len(res.Outcomes) > 0 && res.Outcomes[0].Data != nil {
		// The rows that meet the subset; the missing values were counted
		// among those the subset does not exclude (Sim.WriteCounted), with
		// the rows whose subset column is missing.
		ds := res.Outcomes[0].AsRead()
		kept := ds.RowsRead - ds.RowsOutside - ds.RowsUndecided
		analysed = ds.RowsRead - ds.RowsOutside
		res.Simulated.Kept = &kept
		for _, c := range p.Subset {
			res.Simulated.Subset = append(res.Simulated.Subset, c.String())
		}
	}
	res.Simulated.Missing = sim.MissingRecord(written.Missing, analysed)
	res.Simulated.Weights = sim.WeightsRecord()
	res.Simulated.Truncated = sim.TruncationRecord(&written, rows)
	res.Simulated.Clusters = sim.ClustersRecord(rows)
	warnFound(p, res, stderr)
	dec := runner.BuildDecisions(res)
	files, err := render.Outputs(res, dec, nil)
	if err != nil {
		return fail(stderr, err)
	}
	files[simulatedFile] = buf.Bytes()
	if err := writeRun(olock, res, "rehearse", dir, files); err != nil {
		return fail(stderr, err)
	}
	printRegistration(stdout, reg, false)
	fmt.Fprintf(stdout, "%s: %d rows simulated from the plan's assumptions\n", render.SimulatedMark, rows)
	for _, o := range dec.Outcomes {
		chosen := "no model chosen"
		if o.Chosen != nil {
			chosen = "chosen: " + *o.Chosen
		}
		fmt.Fprintf(stdout, "%s: %s\n", o.Outcome, chosen)
	}
	// As run prints them; a rehearsal's exit code says only whether it
	// ran, so an analysis that could not be run changes it not.
	sensitivityLines(dec, stdout)
	fmt.Fprintf(stdout, "report: %s\n", filepath.Join(dir, "report.html"))
	return exitOK
}

// renamedError is err with another text (a temporary path named as the
// user knows it), keeping err for errors.As.
type renamedError struct {
	msg string
	err error
}

func (e renamedError) Error() string { return e.msg }
func (e renamedError) Unwrap() error { return e.err }
