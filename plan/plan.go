package plan

import (
	"slices"

	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
	"ordplan/runner/impute/chained"
)

// Plan is a resolved analysis plan.
type Plan struct {
	Path     string // file it was read from
	Dir      string // directory of the plan file (data paths resolve against it)
	Hash     string // hex SHA-256 of the plan file bytes
	Title    string
	Seed     uint64 // default 1
	Data     Data
	Outcomes []Outcome
	// Predictors are the names of the terms, in order; Terms say what
	// each is (a column as it is, a transformed or categorical column, or
	// an interaction).
	Predictors []string
	Terms      []design.TermSpec
	// Categorical declares the columns read as levels.
	Categorical []CategoricalColumn
	// Subset: the conditions a row must meet to be used.
	Subset     []data.Condition
	Models     Models
	Tests      Tests
	Rules      []Rule
	Report     Report
	Covariance fit.Covariance // default observed
	// FewClusters is the few-cluster correction of clustered errors
	// (default none).
	FewClusters fit.ClusterCorrection
	Inference   Inference
	// SelectionStability asks run to repeat the decision procedure on
	// bootstrap resamples (nil: not asked).
	SelectionStability *SelectionStability
	Assumptions        *Assumptions // expected data, for rehearse and power (optional)
	Dictionary         []Entry      // what each used column holds (optional; when given, every used column)
	Deviations         []Deviation  // why the plan departs from its frozen form; not in the canonical form
	// Sensitivity are the sensitivity analyses fixed in the plan, in its
	// order (in the canonical form).
	Sensitivity []Sensitivity
	// Unedited are the places still marked by `ordplan init` (EditMarker):
	// guesses to confirm, placeholders to replace. Not in the canonical
	// form; freeze refuses a plan that has any, check and run warn.
	Unedited []*Error
	// Warnings are the keys the plan sets that do little or nothing for
	// its files (data.delimiter for a workbook: checkDialectKeys), which
	// check and run print; not in the canonical form.
	Warnings []*Error
	// Derived are the keys of the canonical form that the plan does not
	// write, whose value is taken from a key it does (report.title from
	// title): key -> the key it follows. A change of one that comes with
	// a change of the key it follows is that key's change (lock.Compare).
	Derived map[string]string
}

// Data says where the observations are and how to read them.
type Data struct {
	File string // as written in the plan (required unless Parts)
	Path string // File resolved against Plan.Dir
	// Parts are the data as several files with the same columns, as
	// written (names or patterns); PartFiles each part as named (a
	// pattern's matches relative to the plan's folder, in name order) and
	// PartPaths resolved. A pattern that matches nothing stays as written.
	Parts, PartFiles, PartPaths []string
	// PartOf gives, for each part of PartFiles, the entry of data.parts
	// it comes from (a name, or a pattern among whose matches it is):
	// PartKey and PartWhere name it.
	PartOf []PartEntry
	// FileAt is where data.file's value is in the plan file (Line 0:
	// not known, as for a file set by SetFile): FileWhere names it.
	FileAt        PartEntry
	Missing       string   // "drop" (default), "refuse" or "impute" (MissingImpute)
	MissingValues []string // nil = reader default; empty = nothing counts as missing
	Delimiter     string   // "comma" (default), "semicolon" or "tab"
	Decimal       string   // decimal mark: "point" (default) or "comma"
	Sheet         string   // .xlsx worksheet ("" = the one visible sheet with cells)
	HeaderRow     int      // .xlsx header row (0 = the first row)
	Weights       string   // column, optional
	WeightKind    string   // "frequency" (default) or "sampling"
	Offset        string   // column, optional
	Cluster       string   // column, optional
	// Written: the data are a file ordplan wrote (SetFile: simulated
	// data), comma-separated with a decimal point, read so whatever
	// Delimiter, Decimal, Sheet and HeaderRow say; those still say how the
	// new rows of inference.predict are written (NewRowsDialect).
	Written bool
	// Imputed names multiply imputed versions of the data (nil: none):
	// File then holds the original data with its missing values.
	Imputed *Imputed
	// Imputation says how to impute with Missing "impute" (nil otherwise).
	Imputation *Imputation
}

// MissingImpute is the data.missing word of imputation by chained equations.
const MissingImpute = "impute"

// Imputes reports whether the program imputes the missing values itself.
func (d Data) Imputes() bool { return d.Missing == MissingImpute }

// Imputation is how the program imputes missing values (data.imputation).
type Imputation struct {
	Sets       int    // default 20
	Iterations int    // default 10
	Seed       uint64 // default: the plan's seed
	// Models gives columns their imputation model, in the plan's order.
	Models           []ColumnModel
	ConvergenceTable bool
	// WriteSets writes the completed sets among the outputs
	// (imputed-sets-OUTCOME.csv). Not in the canonical form: it changes
	// which files a run writes, not the analysis.
	WriteSets bool
}

// ColumnModel is one column's imputation model, as the plan names it.
type ColumnModel struct {
	Column string
	Method chained.Method
	Key    string // its plan key
}

// ModelOf gives the model the plan names for a column (chained.Default: none).
func (im *Imputation) ModelOf(col string) chained.Method {
	for _, m := range im.Models {
		if m.Column == col {
			return m.Method
		}
	}
	return chained.Default
}

// Imputed is a set of multiply imputed data sets: one stacked file with an
// imputation-number column (rows numbered 0 are the original data and are
// not analysed), or one file per imputed set.
type Imputed struct {
	File, Path string   // stacked file, as written and resolved
	Column     string   // its imputation-number column
	Files      []string // or one file per set, as written
	Paths      []string // resolved
}

// Outcome is one ordinal response column.
type Outcome struct {
	Column     string   // required
	Categories []string // optional order, lowest first; nil = take from data
	Label      string   // human name; defaults to Column
	// Predictors and Terms: the outcome's own predictor list (nil: the
	// plan's).
	Predictors []string
	Terms      []design.TermSpec
}

// Models describes the grid of models to fit.
type Models struct {
	Approaches []fit.Comparison // default all three
	Direction  string           // stage direction: forward (default) | backward
	Effects    []fit.Structure  // effect structures; default all but stereotype
	Links      []fit.Link       // default [logit]
	Partial    Partial
	// RunEveryStart runs every start of a constrained or stereotype
	// search to its end (fit.Options.KeepStarts).
	RunEveryStart bool
}

// Partial says which predictors leave the parallel structure in the
// partial and constrained effect structures.
type Partial struct {
	Free   []string // predictors made nonparallel (partial) or constrained (constrained)
	Select *Select  // or chosen by stepwise selection
	Groups []Group  // constraint groups for constrained models
}

// Select configures stepwise selection of the partial set.
type Select struct {
	Method string       // "stepwise"
	Alpha  float64      // default 0.05, 0 < Alpha < 1
	Test   fit.TestKind // wald (default) or lr
}

// Group is a named set of constrained predictors sharing one factor.
type Group struct {
	Name       string
	Predictors []string
}

// Tests lists the parallel-lines tests to run.
type Tests struct {
	ParallelLines []fit.TestKind // default brant, lr, score, wald
	Alpha         float64        // default 0.05
}

// Rule is one step of model selection, applied in plan order. Each kind
// reads only its own options; the others keep their zero values.
type Rule struct {
	Line int    // line of the rule in the plan
	Kind string // one of the Rule* kinds

	// reject_if_test_rejects
	Test      fit.TestKind    // lr (default), wald, score or brant
	Alpha     float64         // default Tests.Alpha
	Against   string          // one of the Against* words (default AgainstLeast)
	AppliesTo []fit.Structure // effect structures the rule tests (nil: every one with a less constrained model)

	// choose, prefer_simpler
	By        string  // aic | bic | tic (default bic)
	Margin    float64 // choose (default 0), prefer_simpler (default 2); >= 0
	Otherwise string  // when every candidate is rejected: OtherwiseStop (default) or a model "approach/effects/link"

	// reject_if_simpler_is_close
	MaxDifference float64    // largest difference in a predicted category probability, in (0, 1)
	Grid          []GridAxis // where the predictions are compared (nil: the rows used)

	// reject_if_sparse
	PerParameter     float64 // observations per parameter at least this (0: not checked)
	SmallestCategory float64 // every outcome category count at least this (0: not checked)
	Within           string  // count the categories within each value of this column

	// reject_if_unstable
	MaxCondition      float64 // information condition at most this (0: not checked)
	MinStartsAgreeing int     // constrained search: starts reaching the best value at least this (0: not checked)
}

// GridAxis is one predictor of a grid of prediction points and its values;
// predictors the grid leaves out are held at their means (numeric) or
// reference levels (categorical).
type GridAxis struct {
	Predictor string
	Values    []float64 // a numeric column's values
	// A categorical column: the levels listed, or with AllLevels every
	// level the rows used have (Levels nil).
	Levels    []string
	AllLevels bool
	Key       string // the plan key of the axis (rules[i].KIND.grid.COLUMN)
	Line, Col int    // where the axis's column is named in the plan
}

// Categorical reports whether the axis gives levels of a categorical
// column.
func (ax GridAxis) Categorical() bool { return ax.AllLevels || ax.Levels != nil }

// GridAllLevels is the grid's word for every level of a categorical
// column.
const GridAllLevels = "all"

// Rule kinds.
const (
	RuleRejectUnconverged           = "reject_unconverged"
	RuleRejectNegativeProbabilities = "reject_negative_probabilities"
	RuleRejectIfTestRejects         = "reject_if_test_rejects"
	RuleRejectIfSimplerIsClose      = "reject_if_simpler_is_close"
	RuleRejectIfSparse              = "reject_if_sparse"
	RuleRejectIfUnstable            = "reject_if_unstable"
	RuleChoose                      = "choose"
	RulePreferSimpler               = "prefer_simpler"
)

// What a test rule tests a model against.
const (
	AgainstLeast = "least_constrained"     // the least constrained model of its approach and link
	AgainstNext  = "next_less_constrained" // the nearest less constrained one
	AgainstEach  = "each_less_constrained" // every less constrained one in turn
)

// OtherwiseStop is the default of a final rule's otherwise option: when
// every candidate is rejected, nothing is chosen and the run fails.
const OtherwiseStop = "stop"

// Final reports whether the rule picks the model (the last rule).
func (r Rule) Final() bool { return r.Kind == RuleChoose || r.Kind == RulePreferSimpler }

// Report controls the written report.
type Report struct {
	Title           string  // defaults to Plan.Title
	FocusPredictor  string  // x axis of the predicted-probability chart (default: first predictor)
	PanelsBy        string  // a categorical column: one prediction panel per level (optional)
	ConfidenceLevel float64 // default 0.95, in (0,1)
	Timestamp       bool    // default false: no timestamps in the report
}

// HasApproach reports whether the plan fits models of the given approach.
func (m Models) HasApproach(a fit.Comparison) bool { return slices.Contains(m.Approaches, a) }

// Sampling reports whether the weights are sampling weights,
// so that the fits maximize a pseudo-likelihood.
func (d Data) Sampling() bool { return d.Weights != "" && d.WeightKind == "sampling" }

// HasEffects reports whether the plan fits models of the given effect structure.
func (m Models) HasEffects(s fit.Structure) bool { return slices.Contains(m.Effects, s) }

// Backward reports whether stage models run backward.
func (m Models) Backward() bool { return m.Direction == "backward" }

// SetFile makes the data one file (named file, read at path), in place
// of the plan's file or parts: simulated data, which ordplan writes
// comma-separated with a decimal point (Written), whatever dialect or
// sheet the plan's own data have.
func (d *Data) SetFile(file, path string) {
	d.File, d.Path = file, path
	d.Parts, d.PartFiles, d.PartPaths, d.PartOf = nil, nil, nil, nil
	d.FileAt = PartEntry{}
	d.Written = true
}

// PartEntry is an entry of data.parts: its index in the list and its
// place in the plan file.
type PartEntry struct{ Index, Line, Col int }

// PartKey is the plan key of the entry of data.parts that part k (of
// PartFiles) comes from, data.parts[i]: every message about one part
// names it (data.parts itself when the entry is not known).
func (d *Data) PartKey(k int) string {
	if k < 0 || k >= len(d.PartOf) {
		return "data.parts"
	}
	return itemPath("data.parts", d.PartOf[k].Index)
}

// PartWhere is an error about part k (of PartFiles) found after the plan
// was read, at its entry of data.parts: PLAN:LINE:COL: data.parts[i]: err.
func (d *Data) PartWhere(planFile string, k int, err error) error {
	e := &Error{File: planFile, Key: d.PartKey(k), Msg: err.Error()}
	if k >= 0 && k < len(d.PartOf) {
		e.Line, e.Col = d.PartOf[k].Line, d.PartOf[k].Col
	}
	return e
}

// FileWhere is an error about the data file found after the plan was
// read, at the plan's data.file: PLAN:LINE:COL: data.file: err.
func (d *Data) FileWhere(planFile string, err error) error {
	return &Error{File: planFile, Key: "data.file", Line: d.FileAt.Line, Col: d.FileAt.Col, Msg: err.Error()}
}

// Paths are the files the data are read from: the parts, or the file.
func (d *Data) Paths() []string {
	if d.Parts != nil {
		return d.PartPaths
	}
	return []string{d.Path}
}

// Files are the data files as the plan names them: the parts, or the file.
func (d *Data) Files() []string {
	if d.Parts != nil {
		return d.PartFiles
	}
	return []string{d.File}
}

// Name names the data in messages: the file, or the parts.
func (d *Data) Name() string {
	if d.Parts != nil {
		return data.PartsName(d.PartFiles)
	}
	return d.File
}

// Dialect is how the data file writes fields and numbers.
func (d *Data) Dialect() data.Dialect {
	if d.Written {
		return data.Dialect{}
	}
	return d.NewRowsDialect()
}

// NewRowsDialect is how the plan's data, and so the new rows of
// inference.predict, write fields and numbers: Dialect, also when the data
// read are a file ordplan wrote.
func (d *Data) NewRowsDialect() data.Dialect {
	dl, _ := data.ParseDialect(d.Delimiter, d.Decimal)
	dl.Sheet, dl.HeaderRow = d.Sheet, d.HeaderRow
	return dl
}

// The bounds of selection_stability.resamples: fewer than 20 resamples
// give shares too rough to read, more than 10000 cost hours for no gain
// a reader can see (the Monte Carlo error at 10000 is below 0.005).
const (
	MinStabilityResamples = 20
	MaxStabilityResamples = 10000
)

// SelectionStability is the plan's selection_stability: the bootstrap
// of the whole decision procedure.
type SelectionStability struct {
	Resamples int
	Seed      uint64
	// Draw is how each repetition's data are drawn: StabilityBootstrap
	// (resamples of the rows used) or StabilityChosenModel (outcomes
	// simulated from the primary analysis's chosen model as fitted, at
	// the rows used).
	Draw string
}

// The values of selection_stability.draw.
const (
	StabilityBootstrap   = "bootstrap"
	StabilityChosenModel = "chosen_model"
)

var stabilityDrawWords = []string{StabilityBootstrap, StabilityChosenModel}
