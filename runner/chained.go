package runner

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"

	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
	"ordplan/runner/impute/chained"
)

// ChainedRecord is how the program imputed an outcome's data (data.missing:
// impute); run.json and decisions.json carry it.
type ChainedRecord struct {
	Outcome    string `json:"outcome"`
	Method     string `json:"method"`
	Sets       int    `json:"sets"`
	Iterations int    `json:"iterations"`
	Seed       uint64 `json:"seed"`
	// Stream is the outcome's index: set s draws from the stream
	// Stream<<32 xor s of the seed.
	Stream uint64 `json:"stream"`
	Donors int    `json:"donors"`
	// RowsIncomplete counts the rows kept with a missing value (as the
	// report counts rows), under frequency weights too.
	RowsIncomplete int `json:"rows_incomplete"`
	// UnitsIncomplete, under frequency weights only, counts the units
	// those rows stand for, each imputed on its own (expandCounts).
	UnitsIncomplete *int `json:"units_incomplete,omitempty"`
	// Rows counts the rows kept, complete and incomplete (the rows, not
	// the units of frequency weights that ImputedRun.Rows counts).
	Rows   int                  `json:"-"`
	Visits []string             `json:"visits"`
	Models []chained.Model      `json:"models"`
	Trace  []chained.TracePoint `json:"trace"`
	Notes  []string             `json:"notes,omitempty"`
	// Unheld says how many imputed values of a numeric column lie outside
	// what the data dictionary declares or below 0 where no observed value
	// is (chained.Result.Unheld).
	Unheld []string `json:"unheld,omitempty"`
	// Unlinked says, per incomplete column and level of another
	// categorical column, where the column is never observed at that
	// level though rows there miss it (unlinkedLevels): what the sets hold
	// there comes from the imputation models alone. check and run warn of
	// it (ImputationWarnings), the report says it.
	Unlinked         []string `json:"unlinked,omitempty"`
	ConvergenceTable bool     `json:"-"`
}

// chainedDonors is the number of donors of predictive mean matching.
const chainedDonors = 5

// errNothingToImpute: data.missing is impute but no used value is missing.
var errNothingToImpute = errors.New("nothing to impute")

// ImputationProgress, when a run's Progress also implements it, hears of
// every imputed set made by chained equations (done of total sets).
type ImputationProgress interface {
	Imputed(outcome string, done, total int)
}

// loadIncomplete reads outcome r's rows as data.missing: impute keeps
// them, rows with missing values included.
func (a *Analysis) loadIncomplete(r Reading) (*data.Dataset, error) {
	dopt := r.Options
	dopt.Refuse, dopt.KeepIncomplete = false, true
	ds, err := data.LoadFiles(a.Paths(), dopt)
	if err != nil {
		return nil, fmt.Errorf("%s (plan %s, outcome %q%s)", err, a.Source, r.Outcome, r.keyOf(err))
	}
	return ds, nil
}

// chainedSets imputes an outcome's data by chained equations: the rows
// with a missing outcome or predictor are kept, the outcome and the raw
// columns of the terms (with the offset as a complete column) are imputed
// data.imputation.sets times, and the imputed sets get the design frozen
// on the first of them.
func chainedSets(a *Analysis, r Reading, opt Options) (*ImputedRun, []*data.Dataset, *design.Design, error) {
	ds, err := a.loadIncomplete(r)
	if err != nil {
		return nil, nil, nil, err
	}
	if err := a.Observed(r, ds); err != nil {
		return nil, nil, nil, err
	}
	if ds.Incomplete == 0 {
		return nil, nil, nil, errNothingToImpute
	}
	return imputeChained(a, r, ds, a.Imputation.Seed, nil, opt)
}

// imputeChained imputes ds, an outcome's rows read with the incomplete
// ones kept (or a bootstrap resample of them, selection_stability), by
// chained equations with the plan's data.imputation settings and the
// given seed. The imputed sets get the design frozen on the first of
// them, or the design frozen, when given (a resample keeps the primary
// analysis's).
func imputeChained(a *Analysis, r Reading, ds *data.Dataset, seed uint64, frozen *design.Design, opt Options) (*ImputedRun, []*data.Dataset, *design.Design, error) {
	spec := r.Design
	var err error
	var notes []string
	observed := ds
	var units *int
	if ds.Weights != nil {
		rows := ds.N
		if ds, err = expandCounts(ds); err != nil {
			return nil, nil, nil, fmt.Errorf("%s: data.weights: %v (data.missing: impute, outcome %q)", a.Source, err, r.Outcome)
		}
		n := ds.Incomplete
		units = &n
		notes = append(notes, fmt.Sprintf("The frequency weights count identical units: for imputation each of the %d rows was expanded into as many rows as its weight, %d rows in all, and every unit was imputed on its own; the imputed sets and their row counts are those of the expanded rows", rows, ds.N))
	}
	im := a.Imputation
	if im.WriteSets && frozen == nil && ds.N*im.Sets > maxWrittenRows {
		return nil, nil, nil, fmt.Errorf("%s: data.imputation.write_sets: the %d imputed sets of outcome %q, %d rows each, would write %d rows, more than the %d ordplan writes into the output folder (the file is made in memory and written with the other outputs, all or nothing): impute fewer sets (data.imputation.sets), or leave write_sets off",
			a.Source, im.Sets, r.Outcome, ds.N, ds.N*im.Sets, maxWrittenRows)
	}
	cols := chainedColumns(im, r, ds, a.Declared)
	unlinked := unlinkedLevels(cols, chainedLevels(r, ds))
	stream := uint64(slices.IndexFunc(a.Outcomes, func(o Reading) bool { return o.Outcome == r.Outcome }))
	cfg := chained.Config{Sets: im.Sets, Iterations: im.Iterations, Seed: seed, Stream: stream, Donors: chainedDonors, Workers: opt.Workers}
	if ip, ok := opt.Progress.(ImputationProgress); ok {
		cfg.Progress = func(done, total int) { ip.Imputed(r.Outcome, done, total) }
	}
	res, err := chained.Impute(cols, cfg)
	if err != nil {
		return nil, nil, nil, fmt.Errorf("%s: data.missing: impute, outcome %q: %v", a.Source, r.Outcome, err)
	}
	sets := make([]*data.Dataset, im.Sets)
	for s, set := range res.Sets {
		sets[s] = completed(ds, set, len(spec.Sources))
	}
	dz, fds := frozen, make([]*fit.Data, len(sets))
	if frozen == nil {
		dz, fds, err = designSets(spec, sets)
	} else {
		for k, set := range sets {
			if fds[k], err = frozenData(frozen, set); err != nil {
				break
			}
		}
	}
	var de *design.Error
	if err != nil && frozen == nil && errors.As(err, &de) && de.Levels {
		// A level no row has, imputed or not: named and explained as
		// on the rows without imputation.
		return nil, nil, nil, a.designRefusal(r, observed, de)
	}
	if err != nil {
		return nil, nil, nil, fmt.Errorf("%s: %v (outcome %q)", a.Source, err, r.Outcome)
	}
	run := &ImputedRun{M: im.Sets, Source: "chained", Files: []string{a.DataFile}, Rows: ds.N, Sets: fds, Data: sets, observed: observed,
		Chained: &ChainedRecord{Outcome: r.Outcome, Method: "chained equations", Sets: im.Sets, Iterations: im.Iterations, Seed: seed,
			Stream: stream, Donors: chainedDonors, RowsIncomplete: observed.Incomplete, UnitsIncomplete: units, Rows: observed.N, Visits: res.Visits, Models: res.Models, Trace: res.Trace,
			Notes: append(notes, res.Notes...), Unheld: res.Unheld, Unlinked: unlinked, ConvergenceTable: im.ConvergenceTable}}
	if im.WriteSets && frozen == nil {
		run.completed = func() ([]byte, error) { return completedCSV(sets, r) }
	}
	for k, set := range sets {
		run.sources = append(run.sources, setSource{name: fmt.Sprintf("imputed set %d of %s.csv", k+1, r.Outcome),
			bytes: func() ([]byte, error) { return setCSV(set, r.Options) }, options: setOptions(set, r.Options)})
	}
	return run, sets, dz, nil
}

// maxExpanded bounds the rows frequency weights expand into for
// imputation.
const maxExpanded = 5_000_000

// maxWrittenRows bounds the rows of all the completed sets one outcome
// writes (data.imputation.write_sets).
const maxWrittenRows = 5_000_000

// CompletedSetsCSV gives the completed sets of an outcome imputed by
// chained equations as one CSV text (data.imputation.write_sets), or nil
// when the plan does not ask for them.
func (ir *ImputedRun) CompletedSetsCSV() ([]byte, error) {
	if ir == nil || ir.completed == nil {
		return nil, nil
	}
	return ir.completed()
}

// WritesSets reports whether the run writes the completed sets
// (CompletedSetsCSV).
func (ir *ImputedRun) WritesSets() bool { return ir != nil && ir.completed != nil }

// completedCSV writes the completed sets one after another in one table,
// for reading elsewhere: imputed_set (1..m), the row's data_line in the
// data file (with data.parts, data_part, the part's file, first), the
// outcome by its category label, each raw column the terms read
// (categorical columns by their level labels, numbers in the shortest
// form that reads back to the same float64), the offset and the cluster
// when the plan has them. The index columns take a trailing "_" until
// their names differ from the data's columns.
func completedCSV(sets []*data.Dataset, r Reading) ([]byte, error) {
	first := sets[0]
	cols := append([]string{r.Options.Outcome}, r.Options.Predictors...)
	if first.Offset != nil {
		cols = append(cols, r.Options.Offset)
	}
	if first.Cluster != nil {
		cols = append(cols, r.Options.Cluster)
	}
	unique := func(name string) string {
		for slices.Contains(cols, name) {
			name += "_"
		}
		return name
	}
	header := []string{unique("imputed_set")}
	if first.Parts != nil {
		header = append(header, unique("data_part"))
	}
	header = append(header, unique("data_line"))
	lead := len(header)
	header = append(header, cols...)
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	if err := w.Write(header); err != nil {
		return nil, err
	}
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	row := make([]string, len(header))
	for s, ds := range sets {
		row[0] = strconv.Itoa(s + 1)
		for i := 0; i < ds.N; i++ {
			file, line := ds.Place(ds.Lines[i])
			if first.Parts != nil {
				row[1] = file
			}
			row[lead-1] = strconv.Itoa(line)
			row[lead] = ds.Categories[ds.Y[i]]
			for k := 0; k < ds.K; k++ {
				x := ds.X[i*ds.K+k]
				if c := r.Design.Sources[k].Cat; c != nil {
					row[lead+1+k] = c.Levels[int(x)]
				} else {
					row[lead+1+k] = num(x)
				}
			}
			c := lead + 1 + ds.K
			if ds.Offset != nil {
				row[c] = num(ds.Offset[i])
				c++
			}
			if ds.Cluster != nil {
				row[c] = ds.Cluster[i]
			}
			if err := w.Write(row); err != nil {
				return nil, err
			}
		}
	}
	w.Flush()
	return buf.Bytes(), w.Error()
}

// expandCounts turns frequency weights into rows: a row of weight w
// becomes w rows of weight 1, so that each unit the row counts is imputed
// on its own, as in the data the weights stand for. The fits of the
// expanded rows are the weighted fits (a sum over w identical rows is w
// times the row's term). The reader has refused frequency weights that
// are not whole numbers (data's wholeCounts); a row of weight 0, kept for
// its missing values, stands for no unit and becomes no row.
func expandCounts(ds *data.Dataset) (*data.Dataset, error) {
	total := 0
	for _, w := range ds.Weights {
		if total += int(w); total > maxExpanded {
			return nil, fmt.Errorf("the frequency weights add up to more than %d rows, the most imputation expands them into (each row becomes as many rows as its weight); impute elsewhere and name the sets under data.imputed", maxExpanded)
		}
	}
	e := *ds
	e.N, e.Weights, e.Incomplete = total, nil, 0
	e.Y, e.X, e.Lines = make([]int, 0, total), make([]float64, 0, total*ds.K), make([]int, 0, total)
	if ds.Offset != nil {
		e.Offset = make([]float64, 0, total)
	}
	if ds.Cluster != nil {
		e.Cluster = make([]string, 0, total)
	}
	for i, w := range ds.Weights {
		row := ds.X[i*ds.K : (i+1)*ds.K]
		incomplete := ds.Y[i] < 0 || slices.ContainsFunc(row, math.IsNaN)
		for range int(w) {
			e.Y, e.X, e.Lines = append(e.Y, ds.Y[i]), append(e.X, row...), append(e.Lines, ds.Lines[i])
			if ds.Offset != nil {
				e.Offset = append(e.Offset, ds.Offset[i])
			}
			if ds.Cluster != nil {
				e.Cluster = append(e.Cluster, ds.Cluster[i])
			}
			if incomplete {
				e.Incomplete++
			}
		}
	}
	return &e, nil
}

// setCSV writes an imputed set as CSV text that the ordinary reader, with
// setOptions, reads back to the same fit input: the outcome's category
// labels, the raw columns of the terms (numbers written so that they read
// back exactly; categorical columns as their level indexes, read as
// numbers), the weights and the offset.
func setCSV(ds *data.Dataset, o data.Options) ([]byte, error) {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	header := append([]string{o.Outcome}, o.Predictors...)
	if ds.Weights != nil {
		header = append(header, o.Weights)
	}
	if ds.Offset != nil {
		header = append(header, o.Offset)
	}
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	if err := w.Write(header); err != nil {
		return nil, err
	}
	row := make([]string, len(header))
	for i := 0; i < ds.N; i++ {
		row[0] = ds.Categories[ds.Y[i]]
		for k := 0; k < ds.K; k++ {
			row[1+k] = num(ds.X[i*ds.K+k])
		}
		c := 1 + ds.K
		if ds.Weights != nil {
			row[c] = num(ds.Weights[i])
			c++
		}
		if ds.Offset != nil {
			row[c] = num(ds.Offset[i])
		}
		if err := w.Write(row); err != nil {
			return nil, err
		}
	}
	w.Flush()
	return buf.Bytes(), w.Error()
}

// setOptions reads the text of setCSV: the categories in order, every
// raw column as a number, only empty cells missing (there are none).
func setOptions(ds *data.Dataset, o data.Options) data.Options {
	out := data.Options{Outcome: o.Outcome, Categories: ds.Categories, Predictors: o.Predictors,
		MissingTokens: []string{""}, Dialect: data.Dialect{HeaderRow: 1}}
	if ds.Weights != nil {
		out.Weights = o.Weights
	}
	if ds.Offset != nil {
		out.Offset = o.Offset
	}
	return out
}

// chainedColumns is the table to impute: the outcome (ordered), the raw
// columns of the terms (categorical ones as level indexes), and the
// offset.
func chainedColumns(im *plan.Imputation, r Reading, ds *data.Dataset, declared map[string]*chained.Bounds) []chained.Column {
	outcome, spec := r.Outcome, r.Design
	y := make([]float64, ds.N)
	for i, v := range ds.Y {
		y[i] = float64(v)
		if v < 0 {
			y[i] = math.NaN()
		}
	}
	cols := []chained.Column{{Name: outcome, Kind: chained.Ordered, Levels: len(ds.Categories), Values: y, Method: im.ModelOf(outcome)}}
	for k, s := range spec.Sources {
		c := chained.Column{Name: s.Name, Values: make([]float64, ds.N), Method: im.ModelOf(s.Name)}
		for i := range c.Values {
			c.Values[i] = ds.X[i*ds.K+k]
		}
		if s.Cat != nil {
			c.Kind, c.Levels = chained.Categorical, len(s.Cat.Levels)
			if s.Cat.Ordered {
				c.Kind = chained.Ordered
			}
		} else {
			c.Bounds = declared[s.Name]
		}
		cols = append(cols, c)
	}
	if ds.Offset != nil {
		cols = append(cols, chained.Column{Name: r.Options.Offset, Values: ds.Offset})
	}
	return cols
}

// chainedLevels are the level labels of the columns of chainedColumns:
// the outcome's categories, a categorical column's levels, nil for a
// numeric column (and the offset).
func chainedLevels(r Reading, ds *data.Dataset) [][]string {
	out := [][]string{ds.Categories}
	for _, s := range r.Design.Sources {
		var levels []string
		if s.Cat != nil {
			levels = s.Cat.Levels
		}
		out = append(out, levels)
	}
	return out
}

// unlinkedLevels finds, for each incomplete column of cols and each level
// of another column with levels (labels: each column's level labels, nil
// for a numeric one; cols[0] is the outcome), the level at which the column is observed in no
// row though some rows there miss it: say the outcome is missing in every
// row of a group. Nothing in the data then links the column to that
// level: what the imputed sets hold for it there comes from the
// imputation models alone (the columns imputed in turn from each other),
// and so does every estimate of the analysis that involves both. One
// sentence per such pair, in column order.
func unlinkedLevels(cols []chained.Column, labels [][]string) []string {
	var out []string
	for c, col := range cols {
		if !slices.ContainsFunc(col.Values, math.IsNaN) {
			continue
		}
		for k, by := range cols {
			if k == c || k >= len(labels) || labels[k] == nil {
				continue
			}
			both := make([]int, len(labels[k]))
			missing := make([]int, len(labels[k]))
			for i, v := range by.Values {
				if math.IsNaN(v) {
					continue
				}
				if math.IsNaN(col.Values[i]) {
					missing[int(v)]++
				} else {
					both[int(v)]++
				}
			}
			// The effect of a level is an estimate of the analysis when the
			// column with levels is a predictor (cols[0] is the outcome).
			such := " (such as the effect of that level)"
			if k == 0 {
				such = ""
			}
			for l, n := range missing {
				if n > 0 && both[l] == 0 {
					out = append(out, fmt.Sprintf("%s is missing in all %d rows where %s is %s: nothing in the data links %s to %s = %s, so its imputed values there, and every estimate that involves both%s, come from the imputation models alone, not from the data", col.Name, n, by.Name, labels[k][l], col.Name, by.Name, labels[k][l], such))
				}
			}
		}
	}
	return out
}

// ImputationWarnings are the warnings of a run whose outcomes' data it
// imputed where a column is never observed at a level of another
// (ChainedRecord.Unlinked), one per such pair, as check words them too.
func ImputationWarnings(res *Result) []string {
	var out []string
	for _, or := range res.Outcomes {
		if or.Imputed == nil || or.Imputed.Chained == nil {
			continue
		}
		out = append(out, unlinkedWarnings(or.Outcome.Column, or.Imputed.Chained.Unlinked)...)
	}
	return out
}

// unlinkedWarnings words the sentences of ChainedRecord.Unlinked of an
// outcome as warnings.
func unlinkedWarnings(outcome string, unlinked []string) []string {
	var out []string
	for _, u := range unlinked {
		out = append(out, fmt.Sprintf("outcome %s: data.missing: impute: %s", outcome, u))
	}
	return out
}

// completed is the data set ds with its outcome and predictors taken from
// an imputed set (column 0 the outcome, then the K predictors).
func completed(ds *data.Dataset, set [][]float64, K int) *data.Dataset {
	c := *ds
	c.Incomplete = 0
	c.Y = make([]int, ds.N)
	c.X = make([]float64, ds.N*ds.K)
	for i := 0; i < ds.N; i++ {
		c.Y[i] = int(set[0][i])
		for k := 0; k < K; k++ {
			c.X[i*ds.K+k] = set[1+k][i]
		}
	}
	c.Counts = make([]float64, len(ds.Categories))
	for _, y := range c.Y {
		c.Counts[y]++
	}
	return &c
}
