package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"maps"
	"os"
	"path/filepath"
	"runtime/debug"
	"slices"
	"strconv"
	"strings"
	"sync"
	"time"

	"ordplan/plan"
	"ordplan/render"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
	"ordplan/runner/simulate"
)

// Exit codes.
const (
	exitOK    = 0
	exitFail  = 1 // the input or the analysis failed
	exitUsage = 2 // the command line is wrong
	// exitNoChoice: the run finished and wrote its outputs, but for some
	// outcome every candidate was rejected and the plan names no fallback,
	// or a sensitivity analysis of the plan could not be run.
	exitNoChoice = 3
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

func run(args []string, stdout, stderr io.Writer) (code int) {
	// No panic trace reaches the user, and exit code 2 keeps its meaning.
	defer func() {
		if p := recover(); p != nil {
			fmt.Fprintf(stderr, "ordplan: %s\n", simulate.InternalError(p))
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
		fs := newFlags("version", stderr)
		if stop, code := parseFlags(fs, args[1:]); stop {
			return code
		}
		if fs.NArg() > 0 {
			fmt.Fprintf(stderr, "ordplan version: unexpected argument %q (it takes none)\n", fs.Arg(0))
			return exitUsage
		}
		if rev := runner.Revision(); rev != "" {
			fmt.Fprintln(stdout, "ordplan", runner.Version, "("+rev+")")
		} else {
			fmt.Fprintln(stdout, "ordplan", runner.Version)
		}
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

// fail prints a one-line message begun "ordplan: " and returns the
// failure code.
func fail(stderr io.Writer, err error) int {
	return failLines(stderr, "ordplan: ", err)
}

// failLines is fail with the lines begun by prefix (a worker's are begun
// by its label by the writer itself: prefix "").
func failLines(stderr io.Writer, prefix string, err error) int {
	var ve *data.ValidationError
	if errors.As(err, &ve) {
		// One problem per line, each with its file, line and column.
		for _, l := range strings.Split(err.Error(), "\n") {
			fmt.Fprintf(stderr, "%s%s\n", prefix, l)
		}
		return exitFail
	}
	msg := strings.ReplaceAll(err.Error(), "\n", "; ")
	fmt.Fprintf(stderr, "%s%s\n", prefix, msg)
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
// It is every command's parser of flags, and refuses what the flag package
// lets through: a flag given twice (the last would silently win, and
// parseFlags may be called again on the same set for the flags after the
// plan: planArg), and an empty value of a flag naming a file, folder or
// server (pathFlags).
func parseFlags(fs *flag.FlagSet, args []string) (bool, int) {
	helpAsked = isHelp(args)
	defer func() { helpAsked = false }()
	uses := flagUsesOf(fs)
	err := uses.parse(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			printCommandHelp(fs.Output(), fs, strings.TrimPrefix(fs.Name(), "ordplan "))
			return true, exitOK
		}
		return true, exitUsage
	}
	if msg := uses.problem(fs); msg != "" {
		fmt.Fprintf(fs.Output(), "%s: %s\n", fs.Name(), msg)
		return true, exitUsage
	}
	return false, 0
}

// pathFlags are the flags naming a file, a folder, a server or columns,
// with what they name: given empty (--out=, --previous "", --weights "")
// they would name nothing (or the current folder) without a word, and a
// fit would go on without the weights, offset or codes the command line
// meant to give.
var pathFlags = map[string]string{
	"out": "a folder", "previous": "the output folder of an earlier run", "queue": "the server's URL",
	"data": "a data file", "parts": "the data's part files", "cache": "a folder",
	"outcome": "the outcome column", "predictors": "the predictor terms", "weights": "the column of weights",
	"offset": "the offset column", "cluster": "the cluster column", "nonparallel": "predictors",
	"constrained": "constraint groups", "categories": "the outcome's categories",
	"missing-codes": "columns and their missing-value codes", "sheet": "a worksheet",
}

// flagUses are the values given to the flags of one flag set, over every
// call of parseFlags on it.
type flagUses struct {
	given    map[string][]string // the values given to each flag, in order
	repeated string              // the first flag given a second time
}

var (
	flagUsesMu sync.Mutex
	flagUsesBy = map[*flag.FlagSet]*flagUses{}
)

// flagUsesOf is the record of fs's flags given so far.
func flagUsesOf(fs *flag.FlagSet) *flagUses {
	flagUsesMu.Lock()
	defer flagUsesMu.Unlock()
	u := flagUsesBy[fs]
	if u == nil {
		u = &flagUses{given: map[string][]string{}}
		flagUsesBy[fs] = u
	}
	return u
}

// parse runs fs.Parse with each flag's value recording what it is given
// (countedValue), then puts the values back as they were (the help reads
// their types).
func (u *flagUses) parse(fs *flag.FlagSet, args []string) error {
	var flags []*flag.Flag
	fs.VisitAll(func(f *flag.Flag) {
		flags = append(flags, f)
		f.Value = &countedValue{Value: f.Value, name: f.Name, uses: u}
	})
	defer func() {
		for _, f := range flags {
			f.Value = f.Value.(*countedValue).Value
		}
	}()
	return fs.Parse(args)
}

// problem says what is wrong with the flags given ("" when nothing is).
func (u *flagUses) problem(fs *flag.FlagSet) string {
	if n := u.repeated; n != "" {
		v := u.given[n]
		if f := fs.Lookup(n); f != nil && isBoolFlag(f) {
			return fmt.Sprintf("--%s is given %s; give each flag once", n, timesWord(len(v)))
		}
		quoted := make([]string, len(v))
		for i, x := range v {
			quoted[i] = strconv.Quote(x)
		}
		hint := ""
		if f := fs.Lookup(n); f != nil && strings.Contains(f.Usage, "comma separated") {
			hint = fmt.Sprintf(" (several items go in one value, comma separated: --%s %s)", n, strings.Join(v, ","))
		}
		return fmt.Sprintf("--%s is given %s (%s); give each flag once%s", n, timesWord(len(v)), strings.Join(quoted, ", then "), hint)
	}
	names := slices.Sorted(maps.Keys(u.given))
	for _, n := range names {
		if what, ok := pathFlags[n]; ok && strings.TrimSpace(u.given[n][0]) == "" {
			return fmt.Sprintf("--%s is given an empty value (%q), but it names %s: give one, or leave the flag out", n, u.given[n][0], what)
		}
	}
	return ""
}

// workersFlag defines --workers, how many things run at once (what, such
// as "fits"): 1 or more when given, 0 (all cores) when not.
func workersFlag(fs *flag.FlagSet, what string) *int {
	n := new(int)
	fs.Var((*workersValue)(n), "workers", "`N` "+what+" run at once (default: all cores); results do not depend on it")
	return n
}

// workersValue is --workers: a number of 1 or more.
type workersValue int

func (w *workersValue) String() string { return strconv.Itoa(int(*w)) }

func (w *workersValue) Set(s string) error {
	n, err := strconv.Atoi(strings.TrimSpace(s))
	if err != nil || n < 1 {
		return errors.New("want a whole number of 1 or more (leave --workers out to use all cores)")
	}
	*w = workersValue(n)
	return nil
}

// timesWord is "twice", or "N times" above 2.
func timesWord(n int) string {
	if n == 2 {
		return "twice"
	}
	return strconv.Itoa(n) + " times"
}

// countedValue is a flag's value that records what it is given: a second
// value is recorded, not set (the flags are refused: flagUses.problem).
type countedValue struct {
	flag.Value
	name string
	uses *flagUses
}

func (c *countedValue) Set(s string) error {
	u := c.uses
	u.given[c.name] = append(u.given[c.name], s)
	if len(u.given[c.name]) > 1 {
		if u.repeated == "" {
			u.repeated = c.name
		}
		return nil
	}
	return numberWanted(c.Value, c.Value.Set(s))
}

// numberWanted words the flag package's "parse error" and "value out of
// range" of a numeric flag (--replicates 1.5, --n 1e3, --alpha abc) as
// the kind of number the flag takes (C15); other errors pass unchanged.
func numberWanted(v flag.Value, err error) error {
	g, ok := v.(flag.Getter)
	if err == nil || !ok || err.Error() != "parse error" && err.Error() != "value out of range" {
		return err
	}
	if err.Error() == "value out of range" {
		return errors.New("the number is too large for this flag")
	}
	switch g.Get().(type) {
	case int, int64:
		return errors.New("want a whole number written in digits (not 1.5, 1e3 or 2k)")
	case uint, uint64:
		return errors.New("want a whole number of 0 or more written in digits (not 1.5, 1e3 or 2k)")
	case float64:
		return errors.New("want a number written in digits, such as 0.05")
	case time.Duration:
		return errors.New("want a duration with its unit, such as 30s, 5m or 1h")
	}
	return err
}

// IsBoolFlag keeps a bool flag one without a value.
func (c *countedValue) IsBoolFlag() bool {
	b, ok := c.Value.(interface{ IsBoolFlag() bool })
	return ok && b.IsBoolFlag()
}

// fitFlags are the flags of `ordplan fit`.
type fitFlags struct {
	dataFile, outcome, categories, predictors, direction *string
	nonparallel, constrained, weights, weightKind        *string
	cluster, offset, missing, baseline, parts            *string
	delimiter, decimal, sheet, missingCodes              *string
	headerRow                                            *int
	allFree, stereotype, asJSON                          *bool
	level                                                *float64
	approach                                             fit.Comparison
	link                                                 fit.Link
	covariance                                           fit.Covariance
	fewClusters                                          fit.ClusterCorrection
	queue                                                *queueFlags
}

// fitGCPercent is the garbage collector's target of `ordplan fit`: a new
// cycle when the heap has grown by this percentage of what the last one
// kept.
const fitGCPercent = 25

// cmdFit fits one model from the command line, in phases: the flags, their
// checks, the model they describe, the fit (here, or over parts on queue
// workers), and
// the table or JSON it prints.
func cmdFit(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("fit", stderr)
	f := defineFitFlags(fs)
	if stop, code := parseFlags(fs, args); stop {
		return code
	}
	if msg := f.usageProblem(fs); msg != "" {
		fmt.Fprintf(stderr, "ordplan fit: %s\n", msg)
		return exitUsage
	}
	s, err := f.single()
	if err != nil {
		return fail(stderr, err)
	}
	if *f.queue.url != "" {
		return fitPartitioned(s, f, s.Parts, stdout, stderr)
	}
	// The data, the design and the fits' large arrays hold no pointers, so
	// collecting garbage more often costs little and keeps the peak memory
	// near what is in use (within 3 times the design matrix at n = 1e6).
	defer debug.SetGCPercent(debug.SetGCPercent(fitGCPercent))
	res, ds, checks, warnings, err := runner.FitOneChecked(s)
	if err != nil {
		return fail(stderr, err)
	}
	for _, w := range warnings {
		fmt.Fprintf(stderr, "warning: %s\n", w)
	}
	base, err := f.baselineOf(res)
	if err != nil {
		return fail(stderr, err)
	}
	drop := ds.DropSummary()
	if ps := data.PartSheets(ds.Parts, nil); ps != "" {
		drop += "; the workbook parts were read from " + ps
	}
	for _, n := range ds.Notes {
		drop += "; " + strings.TrimSuffix(n, ".")
	}
	sum := render.DataSummary{File: s.DataName(), Sheet: ds.Sheet, Outcome: *f.outcome, RowsRead: ds.RowsRead, RowsUsed: ds.N, DropSummary: drop, Sampling: s.Sampling}
	if w := s.FewClusters(ds); w != "" {
		// In the table; on standard error beside JSON.
		sum.Warnings = append(sum.Warnings, w)
		if *f.asJSON {
			fmt.Fprintf(stderr, "warning: %s\n", w)
		}
	}
	if err := f.print(stdout, res, sum, base, checks); err != nil {
		return fail(stderr, err)
	}
	if !res.OK() {
		return noEstimates(stderr, res)
	}
	return exitOK
}

// noEstimates says on standard error that the fit gave no estimates (its
// table on standard output says why in full): a script reading only
// standard error sees more than an exit status.
func noEstimates(stderr io.Writer, res *fit.Result) int {
	msg := string(res.Status)
	if res.Message != "" {
		msg += ": " + res.Message
	}
	what := "no estimates"
	if res.Status == fit.StatusFlatMaximum {
		what = "no reliable estimates" // its maximum is finite, but flat
	}
	fmt.Fprintf(stderr, "ordplan fit: %s has %s (%s)\n", res.Name, what, msg)
	return exitFail
}

// defineFitFlags declares the flags of `ordplan fit` on fs.
func defineFitFlags(fs *flag.FlagSet) *fitFlags {
	f := &fitFlags{
		dataFile:     fs.String("data", "", "the data file (required unless --parts): CSV text with a header line, an .xlsx workbook (*.xlsx) or a flat Parquet file (*.parquet)"),
		outcome:      fs.String("outcome", "", "outcome column (required)"),
		categories:   fs.String("categories", "", "the outcome's category labels in order, lowest first (default: integer codes sorted)"),
		predictors:   fs.String("predictors", "", "predictor terms, comma separated: columns, or the compact forms of categorical columns, transformations and interactions (see below)"),
		approach:     fit.Cumulative,
		direction:    fs.String("direction", "forward", "stage direction: forward or backward"),
		link:         fit.Logit,
		covariance:   fit.Observed,
		nonparallel:  fs.String("nonparallel", "", "predictors whose slopes vary freely across equations"),
		allFree:      fs.Bool("all-nonparallel", false, "make every predictor nonparallel"),
		constrained:  fs.String("constrained", "", "predictors whose slopes vary by a common factor: a,b or name:a,b;other:c"),
		stereotype:   fs.Bool("stereotype", false, "adjacent model with every predictor in one constrained group"),
		weights:      fs.String("weights", "", "column of weights (frequency weights unless --weight-kind sampling)"),
		weightKind:   fs.String("weight-kind", "frequency", "frequency or sampling weights; sampling weights imply sandwich errors"),
		cluster:      fs.String("cluster", "", "column of cluster ids, for --covariance clustered"),
		offset:       fs.String("offset", "", "column added to x'b in every equation"),
		missing:      fs.String("missing", "drop", "rows with a missing value: drop (counted) or refuse"),
		missingCodes: fs.String("missing-codes", "", "a column's own missing-value codes, as the plan's dictionary.COLUMN.missing: COLUMN=CODE/CODE, comma separated (a code that is a number also marks it written otherwise, -9.0 for -9); the usual markers (empty, NA, NaN, .) stay missing"),
		delimiter:    fs.String("delimiter", "comma", "the character between the data file's fields: comma, semicolon or tab"),
		decimal:      fs.String("decimal", "point", "the decimal mark of the data file's numbers: point (1.5) or comma (1,5)"),
		sheet:        fs.String("sheet", "", "for an .xlsx workbook: the worksheet to read, hidden or not (default: the one visible sheet with cells filled)"),
		headerRow:    fs.Int("header-row", 1, "for an .xlsx workbook: the sheet row holding the column names (rows above it are skipped)"),
		baseline:     fs.String("baseline", "", "also show an adjacent nonparallel logit as baseline-category logits against this category"),
		level:        fs.Float64("confidence-level", 0.95, "confidence level of the intervals"),
		asJSON:       fs.Bool("json", false, "print one JSON object instead of the table"),
		queue:        addQueueFlags(fs, "with --parts: the NATS JetStream server whose workers hold the parts and sum the fit and its Lipsitz test over them", true),
		parts:        fs.String("parts", "", "the data held as parts instead of --data: files with the same columns, comma separated (names or patterns, parts/*.csv: its files in name order), read in order as one data set (as the plan key data.parts); with --queue, workers hold the parts and sum the fit and its Lipsitz test over them"),
	}
	fs.TextVar(&f.approach, "approach", fit.Cumulative, "how categories are compared: "+fit.ComparisonWords.OrList())
	fs.TextVar(&f.link, "link", fit.Logit, "link: "+fit.LinkWords.OrList())
	fs.TextVar(&f.covariance, "covariance", fit.Observed, "standard errors: observed (information), expected (information), sandwich (HC1), sandwich_plain (HC0) or clustered (CR1)")
	fs.TextVar(&f.fewClusters, "few-clusters", fit.NoCorrection, "with --covariance clustered, a correction for few clusters: none, or jackknife (the delete-one-cluster jackknife covariance, the model refitted without each cluster in turn; with either, t references on G-1 degrees of freedom and F(q, G-q) for a joint Wald test of q restrictions)")
	return f
}

// usageProblem checks the parsed flags: no arguments, the required flags,
// the choices among fixed words ("" when all is well).
func (f *fitFlags) usageProblem(fs *flag.FlagSet) string {
	if fs.NArg() > 0 {
		return fmt.Sprintf("unexpected argument %q", fs.Arg(0))
	}
	for _, req := range []struct{ name, v string }{{"data FILE (or --parts a.csv,b.csv,...)", *f.dataFile + *f.parts}, {"outcome", *f.outcome}} {
		if req.v == "" {
			return fmt.Sprintf("--%s is required", req.name)
		}
	}
	for _, l := range []struct{ name, v string }{{"predictors", *f.predictors}, {"categories", *f.categories},
		{"nonparallel", *f.nonparallel}, {"parts", *f.parts}} {
		if _, err := listItems(l.v); err != nil {
			return fmt.Sprintf("--%s: %v", l.name, err)
		}
	}
	if _, err := parseMissingCodes(*f.missingCodes); err != nil {
		return "--missing-codes: " + err.Error()
	}
	if _, err := parseGroups(*f.constrained); errors.Is(err, errEmptyGroup) || errors.As(err, new(*emptyItemError)) {
		return "--constrained: " + err.Error()
	}
	for _, c := range []struct{ name, v, a, b string }{
		{"missing", *f.missing, "drop", "refuse"},
		{"weight-kind", *f.weightKind, "frequency", "sampling"},
		{"direction", *f.direction, "forward", "backward"},
	} {
		if c.v != c.a && c.v != c.b {
			return fmt.Sprintf("--%s must be %s or %s, not %q", c.name, c.a, c.b, c.v)
		}
	}
	if _, err := data.ParseDialect(*f.delimiter, *f.decimal); err != nil {
		return "--delimiter/--decimal: " + err.Error()
	}
	if l := *f.level; !(l > 0 && l < 1) {
		// As the plan's report.confidence_level: a probability, never
		// replaced by a default the user did not ask for.
		hint := ""
		if l > 1 && l < 100 {
			hint = fmt.Sprintf(" (for %g%% intervals give %g)", l, l/100)
		}
		return fmt.Sprintf("--confidence-level must be a number strictly between 0 and 1, not %g%s", l, hint)
	}
	if *f.headerRow < 1 {
		return fmt.Sprintf("--header-row must be a sheet row number, 1 or more (got %d)", *f.headerRow)
	}
	if *f.cluster != "" && f.covariance != fit.Clustered {
		// The plan's data.cluster check, in the flags' names.
		return fmt.Sprintf("--cluster: the cluster column is used only with --covariance clustered (--covariance is %s); give --covariance clustered or leave --cluster out", f.covariance)
	}
	if f.fewClusters != fit.NoCorrection && f.covariance != fit.Clustered {
		return fmt.Sprintf("--few-clusters %s corrects clustered errors, but --covariance is %s: give --covariance clustered --cluster COL, or leave --few-clusters out", f.fewClusters, f.covariance)
	}
	switch parts, url := checkedList(*f.parts), *f.queue.url; {
	case len(parts) > 0 && *f.dataFile != "":
		return "give --data (one file) or --parts (the data as several files), not both"
	case url != "" && len(parts) == 0:
		return "--queue needs --parts a.csv,b.csv,... (the files the workers hold and sum the fit over)"
	}
	if (*f.sheet != "" || *f.headerRow != 1) && !f.workbooks() {
		return "--sheet and --header-row are for .xlsx workbooks; the data file is not named *.xlsx"
	}
	return ""
}

// checkedList is the items of a list flag that usageProblem has checked
// (listItems: no empty item).
func checkedList(s string) []string {
	items, _ := listItems(s)
	return items
}

// workbooks reports whether the data files are .xlsx workbooks.
func (f *fitFlags) workbooks() bool {
	files := checkedList(*f.parts)
	if *f.dataFile != "" {
		files = append(files, *f.dataFile)
	}
	for _, p := range files {
		if !data.IsWorkbook(p) {
			return false
		}
	}
	return len(files) > 0
}

// single is the model and data the flags describe.
func (f *fitFlags) single() (runner.SingleFit, error) {
	dspec, err := parseCompactTerms(*f.predictors)
	if err != nil {
		return runner.SingleFit{}, fmt.Errorf("--predictors: %w", err)
	}
	var termNames []string
	for _, t := range dspec.Terms {
		termNames = append(termNames, t.Name)
	}
	parts, err := f.partFiles()
	if err != nil {
		return runner.SingleFit{}, err
	}
	s := runner.SingleFit{DataFile: *f.dataFile, Parts: parts, Outcome: *f.outcome, Categories: checkedList(*f.categories),
		Predictors: termNames, Design: &dspec, Approach: f.approach, Backward: *f.direction == "backward",
		Link: f.link, Nonparallel: checkedList(*f.nonparallel), Weights: *f.weights, Offset: *f.offset,
		Refuse: *f.missing == "refuse", Covariance: f.covariance, Correction: f.fewClusters, Cluster: *f.cluster, Sampling: *f.weightKind == "sampling"}
	s.Dialect, _ = data.ParseDialect(*f.delimiter, *f.decimal) // checked in usageProblem
	s.ColumnMissing, _ = parseMissingCodes(*f.missingCodes)    // checked in usageProblem
	s.Dialect.Sheet, s.Dialect.HeaderRow = *f.sheet, *f.headerRow
	if *f.allFree {
		s.Nonparallel = s.Predictors
	}
	groups, err := parseGroups(*f.constrained)
	if err != nil {
		return s, fmt.Errorf("--constrained: %w", err)
	}
	s.Groups = groups
	if *f.stereotype {
		if len(groups) > 0 || len(s.Nonparallel) > 0 {
			return s, errors.New("--stereotype puts every predictor in one constrained group: do not combine it with --constrained or --nonparallel")
		}
		s.Groups = []runner.Group{{Predictors: s.Predictors}}
	}
	return s, nil
}

// partFiles are the files of --parts: names, and patterns (parts/*.csv)
// expanded into their files in name order, as the plan key data.parts
// reads them (plan.ExpandParts); nil without --parts.
func (f *fitFlags) partFiles() ([]string, error) {
	parts := checkedList(*f.parts)
	if parts == nil {
		return nil, nil
	}
	for i, p := range parts {
		if j := slices.Index(parts[:i], p); j >= 0 {
			return nil, fmt.Errorf("--parts: %q is listed twice (items %d and %d of %q); every part is read once", p, j+1, i+1, *f.parts)
		}
	}
	files, paths, _ := plan.ExpandParts(".", parts)
	for i, file := range files {
		if _, err := os.Stat(paths[i]); err != nil && strings.ContainsAny(file, "*?[") {
			where, _ := filepath.Abs(paths[i])
			return nil, fmt.Errorf("--parts: the pattern %q matches no file (looked for %s)", file, where)
		}
	}
	if twice := slices.Concat(plan.PartsTwice(files, paths), plan.PartsTwins(files, paths)); len(twice) > 0 {
		return nil, fmt.Errorf("--parts: %s", twice[0].Msg)
	}
	return paths, nil
}

// baselineOf is the baseline-category view --baseline asks for (nil when
// it asks for none).
func (f *fitFlags) baselineOf(res *fit.Result) (*fit.Baseline, error) {
	if *f.baseline == "" {
		return nil, nil
	}
	ref := -1
	for i, l := range res.Categories {
		if l == *f.baseline {
			ref = i
		}
	}
	if ref < 0 {
		return nil, fmt.Errorf("--baseline: %q is not a category of %s (%s)", *f.baseline, *f.outcome, strings.Join(res.Categories, ", "))
	}
	return res.Baseline(ref)
}

// print writes the fit as one JSON object or as the tables (below the
// summary of the data sum), with the checks of the fit (nil when it has no
// finite maximum) and their odds ratios at the level of --confidence-level,
// the same in both; a fit over parts on queue workers prints through it too.
func (f *fitFlags) print(stdout io.Writer, res *fit.Result, sum render.DataSummary, base *fit.Baseline, checks *runner.SingleChecks) error {
	if checks != nil {
		checks.AddOddsRatios(res, *f.level)
	}
	if *f.asJSON {
		rec := runner.Record(res)
		out := struct {
			runner.FitRecord
			Baseline *fit.Baseline        `json:"baseline,omitempty"`
			Checks   *runner.SingleChecks `json:"checks,omitempty"`
		}{rec, base, checks}
		b, err := runner.MarshalStable(out)
		if err != nil {
			return err
		}
		_, err = stdout.Write(b)
		return err
	}
	if err := render.FitTable(stdout, res, sum, *f.level); err != nil {
		return err
	}
	if base != nil {
		render.BaselineTable(stdout, res, base)
	}
	if *f.stereotype && res.OK() {
		if err := render.StereotypeTable(stdout, res); err != nil {
			return err
		}
	}
	if !res.OK() {
		return nil
	}
	return render.FitChecksText(stdout, res, checks)
}
