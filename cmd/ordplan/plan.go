package main

import (
	"flag"
	"fmt"
	"io"
	"ordplan/internal/words"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"ordplan/plan"
	"ordplan/render"
	"ordplan/runner"
	"ordplan/runner/queue"
)

func cmdCheck(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("check", stderr)
	noData := fs.Bool("no-data", false, "check the plan alone, before the data file exists")
	allow := fs.Bool("allow-unregistered-changes", false, "do not fail on changes from the frozen plan that the plan's deviations list does not explain")
	planPath, stop, code := planArg(fs, args, "usage: ordplan check PLAN.yaml [--no-data] [--allow-unregistered-changes]", stderr)
	if stop {
		return code
	}
	var p *plan.Plan
	var err error
	if *noData {
		var src []byte
		if src, err = plan.ReadFile(planPath); err == nil {
			p, err = plan.Parse(src, planPath)
		}
	} else {
		p, err = plan.Load(planPath)
	}
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	st, code := registration(p, *allow, stderr)
	if code != exitOK {
		return code
	}
	var dataWarnings []string
	if !*noData {
		if dataWarnings, err = runner.CheckData(p); err != nil {
			return fail(stderr, err) // as run prints the same errors
		}
	}
	printRegistration(stdout, st, true)
	what := "plan is valid"
	if *noData {
		what = "plan is valid (data file not read)"
	}
	fmt.Fprintf(stdout, "%s: %s (%s, %s, sha256 %s)\n", p.Path, what, words.Count(len(p.Outcomes), "outcome", "outcomes"), words.Count(len(p.Predictors), "predictor", "predictors"), p.Hash)
	if len(p.Unedited) > 0 {
		warnUnedited(p, stderr)
		fmt.Fprintf(stdout, "note: %s still marked %s by ordplan init (listed on standard error): check each and delete its marker; ordplan freeze refuses the plan until then\n", words.Count(len(p.Unedited), "place", "places"), plan.EditMarker)
	}
	warnPlan(p, stderr)
	for _, w := range dataWarnings {
		fmt.Fprintf(stderr, "warning: %s: %s\n", p.Path, w)
	}
	fmt.Fprintln(stdout, "The rules, in the order they will be applied to the models of each outcome:")
	for _, s := range runner.DescribeRules(p) {
		fmt.Fprintln(stdout, "  "+s)
	}
	if len(p.Sensitivity) > 0 {
		fmt.Fprintln(stdout, "The sensitivity analyses, each the plan with its changes, checked as a plan and run with the same rules after it:")
		for _, s := range p.Sensitivity {
			fmt.Fprintf(stdout, "  %s (line %d): changes %s\n", s.Name, s.Line, strings.Join(s.Changes, ", "))
		}
	}
	if *noData {
		// Last, so that a clean check of the plan alone is not read as
		// a check of the data.
		fmt.Fprintf(stdout, "Not checked without the data (run ordplan check %s without --no-data once the data file exists):\n", p.Path)
		for _, s := range runner.NotCheckedWithoutData(p) {
			fmt.Fprintln(stdout, "  - "+s)
		}
	}
	return exitOK
}

func cmdRun(args []string, stdout, stderr io.Writer) int {
	rawArgs := append([]string(nil), args...)
	fs := newFlags("run", stderr)
	out := fs.String("out", "", "output directory (default: out/<plan name>)")
	previous := fs.String("previous", "", "output directory of an earlier run: say what changed in the decisions")
	workers := workersFlag(fs, "fits")
	quiet := fs.Bool("quiet", false, "no progress lines")
	qf := addQueueFlags(fs, "run the fits on ordplan worker processes through the JetStream server at this NATS URL", true)
	allow := fs.Bool("allow-unregistered-changes", false, "run although the plan departs from its frozen form without a stated reason (the report says so in its first lines)")
	// Accept the plan before or after the options.
	planPath, stop, code := planArg(fs, args, "usage: ordplan run PLAN.yaml [--out DIR] [--previous DIR] [--workers N] [--queue nats://HOST:PORT]", stderr)
	if stop {
		return code
	}
	var qcfg *queue.Config
	if *qf.url != "" {
		cfg, err := qf.config("ordplan run " + planPath)
		if err != nil {
			return usageOrFail("run", err, stderr)
		}
		qcfg = &cfg
	}
	p, err := plan.Load(planPath)
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	warnUnedited(p, stderr)
	warnPlan(p, stderr)
	reg, code := registration(p, *allow, stderr)
	if code != exitOK {
		return code
	}
	// The earlier run's record, read before anything is fitted (a wrong
	// folder is said at once) and before this run may replace it.
	var prev *runner.Decisions
	if *previous != "" {
		if err := previousFolder(*previous); err != nil {
			return fail(stderr, err)
		}
		if prev, err = runner.ReadPrevious(*previous); err != nil {
			return fail(stderr, err)
		}
	}
	dir := *out
	if dir == "" {
		base := filepath.Base(planPath)
		dir = filepath.Join("out", base[:len(base)-len(filepath.Ext(base))])
	}
	lock, err := claimOutput(dir, "run", reportFiles(p), stderr)
	if err != nil {
		return fail(stderr, err)
	}
	defer lock.Unlock()
	opt := runner.Options{Workers: *workers}
	if !*quiet {
		pr := lock.progress(stderr)
		opt.Progress, opt.Resampled = pr, pr.resampled(p)
	}
	var queueLog io.Writer
	if !*quiet {
		queueLog = stderr
		if qcfg != nil && p.SelectionStability != nil {
			fmt.Fprintln(stderr, stabilityLocalNote(p))
		}
	}
	res, err := runPlan(p, opt, qcfg, *qf.deadline, queueLog, stderr)
	if err != nil {
		return fail(stderr, err)
	}
	warnFound(p, res, stderr)
	res.Command = commandLine(append([]string{"ordplan", "run"}, resultArgs(fs, rawArgs, planPath)...))
	res.Registration = reg
	// Runs of the registered plan, unchanged, that this folder already
	// holds: results that existed before these deviations were run.
	records := folderRecords(dir)
	res.EarlierRegistered = runner.EarlierRegisteredRuns(reg, res.DataHash, records)
	// Runs made under another lock of the plan (one replaced or removed),
	// or with none before it was frozen: results that existed before the
	// plan was registered as it is now.
	res.UnderEarlierLocks = runner.EarlierLockRuns(reg, res.DataHash, records)
	dec := runner.BuildDecisions(res)
	var changes []string
	if prev != nil {
		prevRec, _ := readRecord(filepath.Join(*previous, recordFile))
		changes = runner.ChangesFrom(prev, prevRec, dec, res)
	}
	files, err := render.Outputs(res, dec, changes)
	if err != nil {
		return fail(stderr, err)
	}
	if err := writeRun(lock, res, "run", dir, files); err != nil {
		return fail(stderr, err)
	}
	printRegistration(stdout, reg, false)
	if n := earlierRegisteredNote(reg, res.EarlierRegistered); n != "" {
		fmt.Fprintf(stdout, "note: %s\n", n)
	}
	for _, n := range earlierLocksNotes(reg, res.UnderEarlierLocks) {
		fmt.Fprintf(stdout, "note: %s\n", n)
	}
	code = exitOK
	for _, o := range dec.Outcomes {
		switch {
		case o.Chosen == nil:
			fmt.Fprintf(stdout, "%s: no model chosen\n", o.Outcome)
			fmt.Fprintf(stderr, "ordplan: outcome %s: %s\n", o.Outcome, o.Choice)
			code = exitNoChoice
		case o.Fallback:
			fmt.Fprintf(stdout, "%s: fallback: %s (every candidate was rejected)\n", o.Outcome, *o.Chosen)
		default:
			fmt.Fprintf(stdout, "%s: chosen: %s\n", o.Outcome, *o.Chosen)
		}
	}
	if sensitivityLines(dec, stdout) {
		code = exitNoChoice
	}
	for _, c := range changes {
		fmt.Fprintf(stdout, "since the previous run: %s\n", c)
	}
	fmt.Fprintf(stdout, "report: %s\n", filepath.Join(dir, "report.html"))
	return code
}

// sensitivityLines prints the choice of each sensitivity analysis of a
// run, beside the primary analysis's, and reports whether one could not
// be run (its warning is on stderr: warnFound).
func sensitivityLines(dec *runner.Decisions, stdout io.Writer) (failed bool) {
	for _, s := range dec.Sensitivity {
		if s.Error != "" {
			fmt.Fprintf(stdout, "sensitivity analysis %s: could not be run\n", s.Name)
			failed = true
			continue
		}
		for _, o := range s.Outcomes {
			switch {
			case o.Chosen == nil:
				fmt.Fprintf(stdout, "sensitivity analysis %s: %s: no model chosen\n", s.Name, o.Outcome)
			case o.SameAsPrimary:
				fmt.Fprintf(stdout, "sensitivity analysis %s: %s: chosen: %s, as in the primary analysis\n", s.Name, o.Outcome, *o.Chosen)
			default:
				fmt.Fprintf(stdout, "sensitivity analysis %s: %s: chosen: %s, not the primary analysis's choice\n", s.Name, o.Outcome, *o.Chosen)
			}
		}
	}
	return failed
}

func isTerminal(f *os.File) bool {
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

// resultArgs gives the arguments of run, rehearse or power as the report records
// them: without those that cannot change what the command computes or
// reports (where the outputs go, how many fits run at once, the queue
// server and how to reach it, progress lines), and with the plan and the
// folder of --previous written relative to the plan's folder. So the same
// analysis gives the same report and run.json wherever it is written or
// run, and from whichever folder the command was typed; the recorded line
// is run in the plan's folder. fs is the command's flag set, parsed.
func resultArgs(fs *flag.FlagSet, args []string, planPath string) []string {
	var out []string
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == "--" || !strings.HasPrefix(a, "-") || a == "-" {
			if a == planPath {
				a = filepath.Base(planPath)
			}
			out = append(out, a)
			continue
		}
		name, value, hasValue := strings.Cut(strings.TrimLeft(a, "-"), "=")
		takesValue := false
		if f := fs.Lookup(name); f != nil {
			b, isBool := f.Value.(interface{ IsBoolFlag() bool })
			takesValue = !hasValue && !(isBool && b.IsBoolFlag())
		}
		if takesValue && i+1 < len(args) {
			i++
			value, hasValue = args[i], true
		}
		if name == "out" || name == "workers" || name == "quiet" || name == "queue" || name == "job-deadline" || strings.HasPrefix(name, "queue-") {
			continue
		}
		if name == "previous" && hasValue {
			value = relativeTo(planPath, value)
		}
		if !hasValue {
			out = append(out, a)
		} else if takesValue {
			out = append(out, "--"+name, value)
		} else {
			out = append(out, "--"+name+"="+value)
		}
	}
	return out
}

// commandLine writes arguments as a shell would need them typed: an
// argument with a space, quote or shell character is single-quoted.
func commandLine(args []string) string {
	out := make([]string, len(args))
	for i, a := range args {
		if a == "" || strings.ContainsAny(a, " \t\n'\"\\$`*?[]{}()<>|&;#~!") {
			a = "'" + strings.ReplaceAll(a, "'", `'\''`) + "'"
		}
		out[i] = a
	}
	return strings.Join(out, " ")
}

// warnUnedited prints, on stderr, each place of p still marked by
// `ordplan init` (plan.EditMarker); the commands that read a plan other
// than freeze (which refuses it: refuseUnedited) go on.
func warnUnedited(p *plan.Plan, stderr io.Writer) {
	for _, e := range p.Unedited {
		fmt.Fprintf(stderr, "warning: %v\n", e)
	}
}

// warnPlan prints, on stderr, the plan's warnings of keys that do little
// or nothing for its files (plan.Plan.Warnings), each rule or stepwise selection of p that
// reads a statistic ignoring the clusters of clustered errors
// (runner.ClusterWarnings), each two-category outcome whose grid and
// tests are made for several boundaries (runner.BinaryWarnings) and each
// categorical predictor held at its reference level in pairs of levels at
// the profile because the profile gives it no level
// (runner.PairsProfileWarnings) and each outcome whose rows a subset
// condition chooses by the outcome's own value
// (runner.OutcomeSubsetWarnings); the command goes on.
func warnPlan(p *plan.Plan, stderr io.Writer) {
	for _, e := range p.Warnings {
		fmt.Fprintf(stderr, "warning: %v\n", e)
	}
	for _, w := range runner.ClusterWarnings(p) {
		fmt.Fprintf(stderr, "warning: %s: %s\n", p.Path, w)
	}
	for _, w := range runner.BinaryWarnings(p, nil) {
		fmt.Fprintf(stderr, "warning: %s: %s\n", p.Path, w)
	}
	for _, w := range runner.PairsProfileWarnings(p) {
		fmt.Fprintf(stderr, "warning: %s: %s\n", p.Path, w)
	}
	for _, w := range runner.OutcomeSubsetWarnings(p) {
		fmt.Fprintf(stderr, "warning: %s: %s\n", p.Path, w)
	}
}

// warnFound prints, on stderr, the warnings of runner.BinaryWarnings for
// the outcomes whose categories the plan leaves to the data, once res has
// read them, those of data with too few clusters for clustered errors
// (runner.FewClustersWarnings) and of imputed values that no data link to
// a level (runner.ImputationWarnings).
func warnFound(p *plan.Plan, res *runner.Result, stderr io.Writer) {
	found := make([]int, len(p.Outcomes))
	for i, or := range res.Outcomes {
		if i < len(found) && or.Data != nil {
			found[i] = len(or.Data.Categories)
		}
	}
	for _, w := range runner.BinaryWarnings(p, found) {
		fmt.Fprintf(stderr, "warning: %s: %s\n", p.Path, w)
	}
	for _, w := range slices.Concat(runner.FewClustersWarnings(res), runner.ImputationWarnings(res), runner.ImputedCopies(res.Imputed), runner.SensitivityWarnings(res)) {
		fmt.Fprintf(stderr, "warning: %s: %s\n", p.Path, w)
	}
}

// refuseUnedited is freeze's answer to a plan still marked by `ordplan
// init`: every place listed and the reason; false when there is none.
func refuseUnedited(p *plan.Plan, stderr io.Writer) bool {
	if len(p.Unedited) == 0 {
		return false
	}
	for _, e := range p.Unedited {
		fmt.Fprintln(stderr, e)
	}
	fmt.Fprintf(stderr, "ordplan freeze: %s still has %s marked %s by ordplan init (guesses from the data such as the order of the categories, or placeholders); a registered plan states the analyst's own choices: check each place, delete its marker, then freeze\n",
		p.Path, words.Count(len(p.Unedited), "place", "places"), plan.EditMarker)
	return true
}

// reportFiles are the names a run (or a rehearsal) of the plan writes
// that are known before anything is computed: the report's, and the
// completed imputed sets' when the plan asks for them
// (data.imputation.write_sets).
func reportFiles(p *plan.Plan) []string {
	names := slices.Clone(render.ReportFiles)
	if im := p.Data.Imputation; p.Data.Imputes() && im != nil && im.WriteSets {
		for _, o := range p.Outcomes {
			names = append(names, render.ImputedSetsFile(o.Column))
		}
	}
	return names
}
