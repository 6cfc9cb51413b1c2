package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"ordplan/render"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// Exit codes.
const (
	exitOK    = 0
	exitFail  = 1 // the input or the analysis failed
	exitUsage = 2 // the command line is wrong
	// exitNoChoice: the run finished and wrote its outputs, but for some
	// outcome every candidate was rejected and the plan names no fallback.
	exitNoChoice = 3
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

func run(args []string, stdout, stderr io.Writer) (code int) {
	// No panic trace reaches the user, and exit code 2 keeps its meaning.
	defer func() {
		if p := recover(); p != nil {
			fmt.Fprintf(stderr, "ordplan: internal error: %v (please report it with the command line that caused it)\n", p)
			code = exitFail
		}
	}()
	if len(args) == 0 {
		fmt.Fprint(stderr, usageText())
		return exitUsage
	}
	if len(args) > 1 && isHelp(args[1:]) {
		stderr = stdout // help asked for is output, not an error
	}
	switch args[0] {
	case "fit":
		return cmdFit(args[1:], stdout, stderr)
	case "run":
		return cmdRun(args[1:], stdout, stderr)
	case "check":
		return cmdCheck(args[1:], stdout, stderr)
	case "freeze":
		return cmdFreeze(args[1:], stdout, stderr)
	case "init":
		return cmdInit(args[1:], stdout, stderr)
	case "rehearse":
		return cmdRehearse(args[1:], stdout, stderr)
	case "power":
		return cmdPower(args[1:], stdout, stderr)
	case "worker":
		return cmdWorker(args[1:], stdout, stderr)
	case "schema":
		return cmdSchema(args[1:], stdout, stderr)
	case "version", "--version", "-version":
		fmt.Fprintln(stdout, "ordplan", runner.Version)
		return exitOK
	case "help":
		return cmdHelp(args[1:], stdout, stderr)
	case "-h", "-help", "--help":
		fmt.Fprint(stdout, usageText())
		return exitOK
	}
	fmt.Fprintf(stderr, "ordplan: unknown command %q\n%s", args[0], usageText())
	return exitUsage
}

// fail prints a one-line message and returns the failure code.
func fail(stderr io.Writer, err error) int {
	var ve *data.ValidationError
	if errors.As(err, &ve) {
		// One problem per line, each with its file, line and column.
		for _, l := range strings.Split(err.Error(), "\n") {
			fmt.Fprintf(stderr, "ordplan: %s\n", l)
		}
		return exitFail
	}
	msg := strings.ReplaceAll(err.Error(), "\n", "; ")
	fmt.Fprintf(stderr, "ordplan: %s\n", msg)
	return exitFail
}

func newFlags(name string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet("ordplan "+name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	// After a bad flag the flag package prints the error; this line says
	// where the flags are explained. --help prints them all (parseFlags).
	fs.Usage = func() {
		if !helpAsked {
			fmt.Fprintf(fs.Output(), "Run 'ordplan %s --help' for its flags, each with an example.\n", name)
		}
	}
	return fs
}

// helpAsked is set while parseFlags handles --help, so that the flag
// package's usage line is not printed before the full help.
var helpAsked bool

// parseFlags parses and reports whether to stop, with the exit code.
// --help prints the command's help (every flag, each with an example).
func parseFlags(fs *flag.FlagSet, args []string) (bool, int) {
	helpAsked = isHelp(args)
	defer func() { helpAsked = false }()
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			printCommandHelp(fs.Output(), fs, strings.TrimPrefix(fs.Name(), "ordplan "))
			return true, exitOK
		}
		return true, exitUsage
	}
	return false, 0
}

func cmdFit(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("fit", stderr)
	var (
		dataFile    = fs.String("data", "", "CSV file with a header line (required)")
		outcome     = fs.String("outcome", "", "outcome column (required)")
		categories  = fs.String("categories", "", "the outcome's category labels in order, lowest first (default: integer codes sorted)")
		predictors  = fs.String("predictors", "", "predictor terms, comma separated: columns, or the compact forms of categorical columns, transformations and interactions (see below)")
		approach    = fit.Cumulative
		direction   = fs.String("direction", "forward", "stage direction: forward or backward")
		link        = fit.Logit
		covariance  = fit.Observed
		nonparallel = fs.String("nonparallel", "", "predictors whose slopes vary freely across equations")
		allFree     = fs.Bool("all-nonparallel", false, "make every predictor nonparallel")
		constrained = fs.String("constrained", "", "predictors whose slopes vary by a common factor: a,b or name:a,b;other:c")
		stereotype  = fs.Bool("stereotype", false, "adjacent model with every predictor in one constrained group")
		weights     = fs.String("weights", "", "column of weights (frequency weights unless --weight-kind sampling)")
		weightKind  = fs.String("weight-kind", "frequency", "frequency or sampling weights; sampling weights imply sandwich errors")
		cluster     = fs.String("cluster", "", "column of cluster ids, for --covariance clustered")
		offset      = fs.String("offset", "", "column added to x'b in every equation")
		missing     = fs.String("missing", "drop", "rows with a missing value: drop (counted) or refuse")
		baseline    = fs.String("baseline", "", "also show an adjacent nonparallel logit as baseline-category logits against this category")
		level       = fs.Float64("confidence-level", 0.95, "confidence level of the intervals")
		asJSON      = fs.Bool("json", false, "print one JSON object instead of the table")
		qf          = addQueueFlags(fs, "with --partitions: the NATS JetStream server whose workers hold the partitions", true)
		queueURL    = qf.url
		partitions  = fs.String("partitions", "", "fit one model over these CSV files (same columns) through --queue workers, for data too large for one machine")
	)
	fs.TextVar(&approach, "approach", fit.Cumulative, "how categories are compared: "+fit.ComparisonWords.OrList())
	fs.TextVar(&link, "link", fit.Logit, "link: "+fit.LinkWords.OrList())
	fs.TextVar(&covariance, "covariance", fit.Observed, "standard errors: observed (information), expected (information), sandwich (HC1), sandwich_plain (HC0) or clustered (CR1)")
	if stop, code := parseFlags(fs, args); stop {
		return code
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "ordplan fit: unexpected argument %q\n", fs.Arg(0))
		return exitUsage
	}
	for _, req := range []struct{ name, v string }{{"data", *dataFile + *partitions}, {"outcome", *outcome}} {
		if req.v == "" {
			fmt.Fprintf(stderr, "ordplan fit: --%s is required\n", req.name)
			return exitUsage
		}
	}
	if *missing != "drop" && *missing != "refuse" {
		fmt.Fprintf(stderr, "ordplan fit: --missing must be drop or refuse, not %q\n", *missing)
		return exitUsage
	}
	if *weightKind != "frequency" && *weightKind != "sampling" {
		fmt.Fprintf(stderr, "ordplan fit: --weight-kind must be frequency or sampling, not %q\n", *weightKind)
		return exitUsage
	}
	if *direction != "forward" && *direction != "backward" {
		fmt.Fprintf(stderr, "ordplan fit: --direction must be forward or backward, not %q\n", *direction)
		return exitUsage
	}
	dspec, err := runner.ParseCompactTerms(*predictors)
	if err != nil {
		return fail(stderr, fmt.Errorf("--predictors: %w", err))
	}
	var termNames []string
	for _, t := range dspec.Terms {
		termNames = append(termNames, t.Name)
	}
	s := runner.SingleFit{DataFile: *dataFile, Outcome: *outcome, Categories: runner.SplitList(*categories),
		Predictors: termNames, Design: &dspec, Approach: approach, Backward: *direction == "backward",
		Link: link, Nonparallel: runner.SplitList(*nonparallel), Weights: *weights, Offset: *offset,
		Refuse: *missing == "refuse", Covariance: covariance, Cluster: *cluster, Sampling: *weightKind == "sampling"}
	if *allFree {
		s.Nonparallel = s.Predictors
	}
	groups, err := runner.ParseGroups(*constrained)
	if err != nil {
		return fail(stderr, fmt.Errorf("--constrained: %w", err))
	}
	s.Groups = groups
	if *stereotype {
		if len(groups) > 0 || len(s.Nonparallel) > 0 {
			return fail(stderr, errors.New("--stereotype puts every predictor in one constrained group: do not combine it with --constrained or --nonparallel"))
		}
		s.Groups = []runner.Group{{Predictors: s.Predictors}}
	}
	if *partitions != "" || *queueURL != "" {
		return fitPartitioned(s, qf, runner.SplitList(*partitions), *asJSON, *level, stdout, stderr)
	}
	res, ds, err := runner.FitOne(s)
	if err != nil {
		return fail(stderr, err)
	}
	var base *fit.Baseline
	if *baseline != "" {
		ref := -1
		for i, l := range res.Categories {
			if l == *baseline {
				ref = i
			}
		}
		if ref < 0 {
			return fail(stderr, fmt.Errorf("--baseline: %q is not a category of %s (%s)", *baseline, *outcome, strings.Join(res.Categories, ", ")))
		}
		if base, err = res.Baseline(ref); err != nil {
			return fail(stderr, err)
		}
	}
	if *asJSON {
		rec := runner.Record(res)
		out := struct {
			runner.FitRecord
			Baseline *fit.Baseline `json:"baseline,omitempty"`
		}{rec, base}
		b, err := runner.MarshalStable(out)
		if err != nil {
			return fail(stderr, err)
		}
		stdout.Write(b)
	} else {
		drop := ds.DropSummary()
		for _, n := range ds.Notes {
			drop += "; " + strings.TrimSuffix(n, ".")
		}
		sum := render.DataSummary{File: *dataFile, Outcome: *outcome, RowsRead: ds.RowsRead, RowsUsed: ds.N, DropSummary: drop}
		if err := render.FitTable(stdout, res, sum, *level); err != nil {
			return fail(stderr, err)
		}
		if base != nil {
			render.BaselineTable(stdout, res, base)
		}
		if *stereotype && res.OK() {
			if err := render.StereotypeTable(stdout, res); err != nil {
				return fail(stderr, err)
			}
		}
	}
	if !res.OK() {
		return exitFail
	}
	return exitOK
}
