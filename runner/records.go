package runner

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"

	"ordplan/plan"
	"ordplan/plan/lock"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// Decisions is the content of decisions.json.
type Decisions struct {
	Program string  `json:"program"`
	Version string  `json:"version"`
	Plan    PlanRef `json:"plan"`
	Data    DataRef `json:"data"`
	// NewRows is the new-rows file of the plan's predictions (absent when none).
	NewRows *DataRef `json:"new_rows,omitempty"`
	// Registration is the plan compared with its lock (absent when not compared).
	Registration *RegistrationRecord `json:"registration,omitempty"`
	// Simulated is set when the data were simulated from the plan's assumptions.
	Simulated *Simulation        `json:"simulated_data,omitempty"`
	Notes     []string           `json:"notes"`
	Outcomes  []OutcomeDecisions `json:"outcomes"`
	// Sensitivity are the plan's sensitivity analyses (absent when it
	// has none).
	Sensitivity []SensitivityRecord `json:"sensitivity,omitempty"`
}

// PlanRef names the plan of a run.
type PlanRef struct {
	File   string `json:"file"`
	Title  string `json:"title"`
	SHA256 string `json:"sha256"`
	// Canonical is the plan's canonical form (plan.Plan.Canonical, as a
	// lock holds it), in the run.json of run and rehearse only (not in
	// decisions.json, which is the same for the same data in any format):
	// --previous names the keys that changed from it (ChangesFrom).
	Canonical json.RawMessage `json:"canonical,omitempty"`
}

// DataRef names the data of a run.
type DataRef struct {
	File   string `json:"file,omitempty"`
	SHA256 string `json:"sha256"`
	// Parts are the files of data held as parts, each with its SHA-256;
	// SHA256 is then the SHA-256 of their hex SHA-256s, one per line.
	Parts []DataRef `json:"parts,omitempty"`
	// Sheet names the worksheet of a workbook read, in run.json (absent
	// for other files, and in decisions.json); SheetHidden says it is hidden (read because the plan names
	// it), HiddenRows how many of the rows read the sheet hides from view,
	// HiddenColumns which of the columns read it hides (of any outcome).
	Sheet         string   `json:"sheet,omitempty"`
	SheetHidden   bool     `json:"sheet_hidden,omitempty"`
	HiddenRows    int      `json:"hidden_rows_read,omitempty"`
	HiddenColumns []string `json:"hidden_columns_read,omitempty"`
}

// OutcomeDecisions is one outcome's part of decisions.json.
type OutcomeDecisions struct {
	Outcome    string   `json:"outcome"`
	Categories []string `json:"categories"`
	// Counts per category: of the rows used; on imputed data, of the
	// outcome's observed values in the original file (not an imputed set).
	Counts   []float64        `json:"counts"`
	RowsRead int              `json:"rows_read"`
	RowsUsed int              `json:"rows_used"`
	Dropped  []data.DropCount `json:"rows_dropped"`
	// RowsSubsetUnknown are the rows no subset condition excludes that
	// miss a column one reads (data.Dataset.RowsUndecided): in Dropped
	// under their first missing column, not among the rows outside.
	RowsSubsetUnknown int                `json:"rows_subset_unknown,omitempty"`
	NObs              float64            `json:"nobs"`
	PartialSet        []FreeSetRecord    `json:"partial_sets"`
	Stepwise          []StepwiseJSON     `json:"stepwise,omitempty"`
	Fits              []FitDecision      `json:"fits"`
	Tests             []TestBlockJSON    `json:"tests"`
	Rules             []RuleJSON         `json:"rules"`
	Chosen            *string            `json:"chosen"`
	Choice            string             `json:"choice"`
	Fallback          bool               `json:"fallback"`
	Notes             []string           `json:"notes"`
	Final             map[string]Verdict `json:"final_verdicts"`
	// SelectionStability: the decision procedure repeated on bootstrap
	// resamples (selection_stability; absent when the plan does not ask).
	SelectionStability *Stability      `json:"selection_stability,omitempty"`
	Overall            []OverallRecord `json:"overall_fit"`
	Lipsitz            *fit.Lipsitz    `json:"lipsitz,omitempty"`
	// PatternSplit: the Pulkstenis-Robinson tests of the chosen model.
	PatternSplit *PatternSplitRecord `json:"pulkstenis_robinson,omitempty"`
	// GOFPooling: on imputed data, how those tests were pooled.
	GOFPooling *GOFPooling        `json:"goodness_of_fit_pooling,omitempty"`
	Hypotheses []HypothesisResult `json:"hypotheses,omitempty"`
	// TermTests: each term of the chosen model tested (absent without one).
	TermTests []TermTest `json:"term_tests,omitempty"`
	// TermTestsOff says why there are no term tests when the plan
	// switches them off (inference.term_tests: none).
	TermTestsOff string        `json:"term_tests_off,omitempty"`
	Marginal     []MarginalSet `json:"marginal_effects,omitempty"`
	// LevelPairs: comparisons between every pair of levels of the
	// categorical predictors of inference.level_pairs.
	LevelPairs []LevelPairSet `json:"level_pairs,omitempty"`
	// NewRowsOutside: the new rows to predict that lie outside the
	// population the chosen model was fitted to, with the reasons (the
	// predictions file's outside_why); absent when none.
	NewRowsOutside []NewRowOutside `json:"new_rows_outside,omitempty"`
	// NewRowsSkipped: the new rows left out of the predictions for a
	// missing value, every one, with the columns each misses; absent
	// when none.
	NewRowsSkipped []NewRowSkipped `json:"new_rows_skipped,omitempty"`
	// ProfileOutside: why the plan's profile (inference.profile) lies
	// outside the population the chosen model was fitted to, each reason
	// led by its plan key or the word extrapolation, as new rows' are;
	// absent when inside.
	ProfileOutside []string `json:"profile_outside,omitempty"`
	// NewRowsNotPredicted: the new rows that are not predicted because a
	// term cannot be computed for them (the log of 0, say), with the
	// reason; absent when none.
	NewRowsNotPredicted []NewRowNotPredicted `json:"new_rows_not_predicted,omitempty"`
	// PredictionPanels: the panels of the report's predictions over the
	// focus predictor (report.panels_by), the column and the values it is
	// held at, one panel each (the first column of
	// table-predicted-OUTCOME.csv); absent without panels or a chosen
	// model.
	PredictionPanels *PanelsRecord `json:"prediction_panels,omitempty"`
	// Terms: how each predictor term became design columns, with every
	// constant frozen from the data (omitted when every term is a numeric
	// column as it is).
	Terms []design.TermRecord `json:"terms,omitempty"`
	// Imputation: how the outcome was pooled over imputed data sets.
	Imputation *ImputationRecord `json:"imputation,omitempty"`
	// FewClusters: the few-cluster correction of the outcome's clustered
	// errors (absent without one).
	FewClusters *FewClustersRecord `json:"few_cluster_correction,omitempty"`
}

// PanelsRecord is the column of report.panels_by and its values, each
// the value of one panel of predictions: the levels of a categorical
// column (kind levels), or 0 and 1 (kind zero_one).
type PanelsRecord struct {
	Column string   `json:"column"`
	Kind   string   `json:"kind"`
	Values []string `json:"values"`
}

// panelsRecord is the outcome's PanelsRecord, or nil.
func panelsRecord(an *Analysis, or *OutcomeResult) *PanelsRecord {
	if an == nil || or.Chosen == nil {
		return nil
	}
	values, zeroOne := or.PanelValues(an.PanelsBy)
	if values == nil {
		return nil
	}
	kind := "levels"
	if zeroOne {
		kind = "zero_one"
	}
	return &PanelsRecord{Column: an.PanelsBy, Kind: kind, Values: values}
}

// FewClustersRecord says which covariance and references an outcome's
// inference used under the few-cluster correction, and why.
type FewClustersRecord struct {
	Correction  fit.ClusterCorrection `json:"correction"`
	Covariance  string                `json:"covariance"`
	Column      string                `json:"cluster_column"`
	Clusters    int                   `json:"clusters"`
	ReferenceDF int                   `json:"reference_df"`
	Single      string                `json:"single_estimates"`
	Joint       string                `json:"joint_wald_tests"`
	Why         string                `json:"why"`
}

// fewClustersRecord is the outcome's FewClustersRecord, or nil without
// the correction.
func fewClustersRecord(an *Analysis, or *OutcomeResult) *FewClustersRecord {
	if an == nil || !an.Errors.Jackknife() || or.Data == nil {
		return nil
	}
	g := ClusterCount(or.Data)
	return &FewClustersRecord{Correction: an.Errors.Correction, Covariance: fit.JackknifeDescribe, Column: or.dataOptions.Cluster,
		Clusters: g, ReferenceDF: g - 1, Single: fmt.Sprintf("t(%d)", g-1), Joint: fmt.Sprintf("W (G-q)/((G-1) q) on F(q, G-q), G = %d, q the restrictions, at most %d", g, g-1), Why: JackknifeWhy}
}

// ImputationRecord is the pooling of one outcome over imputed data sets:
// the sets, and Rubin's rules per parameter of every pooled candidate.
type ImputationRecord struct {
	Sets    int          `json:"sets"`
	Source  string       `json:"source"` // stacked or files
	Files   []string     `json:"files"`
	Column  string       `json:"column,omitempty"`
	Rows    int          `json:"rows_per_set"`
	Method  string       `json:"method"`
	Pooling []PoolingFit `json:"pooling"`
	// Imputation says how the program made the sets (data.missing: impute).
	Imputation *ChainedRecord `json:"imputation,omitempty"`
}

// PoolingFit is Rubin's rules for the parameters of one candidate.
type PoolingFit struct {
	Model      string         `json:"model"`
	Parameters []PoolingParam `json:"parameters"`
}

// PoolingParam is one pooled parameter (variances, not standard errors;
// df null when infinite).
type PoolingParam struct {
	Name     string   `json:"name"`
	Estimate float64  `json:"estimate"`
	Within   float64  `json:"within_variance"`
	Between  float64  `json:"between_variance"`
	Total    float64  `json:"total_variance"`
	DF       *float64 `json:"df"`
	RIV      float64  `json:"relative_increase_in_variance"`
	FMI      float64  `json:"fraction_missing_information"`
}

func imputationRecord(or *OutcomeResult, sampling bool) *ImputationRecord {
	im := or.Imputed
	if im == nil {
		return nil
	}
	method := "Rubin's rules with Barnard-Rubin degrees of freedom; likelihood-ratio tests pooled by D3, Wald tests by D1; log-likelihood, AIC and BIC are means over the sets"
	if sampling {
		method = "Rubin's rules with Barnard-Rubin degrees of freedom; " + SamplingPoolingText() + "; log-likelihood, AIC and BIC are means over the sets, descriptive only"
	}
	rec := &ImputationRecord{Sets: im.M, Source: im.Source, Files: im.Files, Column: im.Column, Rows: im.Rows, Imputation: im.Chained,
		Method: method, Pooling: []PoolingFit{}}
	for _, f := range or.Fits {
		if f.Auxiliary || f.Pooled == nil || !f.OK() {
			continue
		}
		pl := f.Pooled
		pf := PoolingFit{Model: f.ID}
		for j, n := range f.Result.ParamNames {
			w, b, t := PooledVariances(pl, j)
			pp := PoolingParam{Name: n, Estimate: pl.Estimate[j], Within: w, Between: b, Total: t, RIV: pl.RIV[j], FMI: pl.FMI[j]}
			pp.DF = finiteOrNull(PooledDF(pl, j))
			pf.Parameters = append(pf.Parameters, pp)
		}
		rec.Pooling = append(rec.Pooling, pf)
	}
	return rec
}

// FreeSetRecord is a partial set in JSON.
type FreeSetRecord struct {
	Approach   fit.Comparison `json:"approach"`
	Predictors []string       `json:"predictors"`
	Source     string         `json:"source"`
}

// StepwiseJSON is one stepwise selection in JSON.
type StepwiseJSON struct {
	Approach fit.Comparison      `json:"approach"`
	Link     fit.Link            `json:"link"`
	Result   *fit.StepwiseResult `json:"result"`
}

// FitDecision is one fit and what the rules made of it.
type FitDecision struct {
	ID        string `json:"id"`
	Auxiliary bool   `json:"auxiliary"`
	Error     string `json:"error,omitempty"`
	Verdict   string `json:"verdict,omitempty"`
	Rejected  string `json:"reason,omitempty"`
	FitRecord
}

// TestBlockJSON is a test block in JSON.
type TestBlockJSON struct {
	Approach    fit.Comparison `json:"approach"`
	Link        fit.Link       `json:"link"`
	Global      []fit.Test     `json:"parallel_lines"`
	PerVariable []VarTests     `json:"per_variable"`
	Nested      []NestedTest   `json:"nested_lr"`
}

// RuleJSON is one rule's outcome in JSON.
type RuleJSON struct {
	Kind        string    `json:"rule"`
	Line        int       `json:"line"`
	Description string    `json:"description"`
	Verdicts    []Verdict `json:"verdicts"`
	// SinceFrozen lists the changes from the plan's lock that touch this
	// rule (lock.Status.RuleChanges): added, moved or changed after the
	// plan was frozen, each with its stated reason.
	SinceFrozen []lock.Explained `json:"since_frozen,omitempty"`
}

// BuildDecisions assembles the decisions record of a run.
func BuildDecisions(r *Result) *Decisions {
	p := r.Plan
	d := &Decisions{Program: "ordplan", Version: r.Version,
		Plan:    PlanRef{File: filepath.Base(p.Path), Title: p.Title, SHA256: p.Hash},
		Data:    dataRef(r),
		NewRows: newRowsRef(r),
		Notes:   nonNil(r.RunNotes(PlainText, strconv.Quote)), Registration: registrationRecord(r.Registration), Simulated: r.Simulated}
	if d.Registration != nil {
		d.Registration.EarlierRegistered = r.EarlierRegistered
		d.Registration.UnderEarlierLocks = r.UnderEarlierLocks
	}
	sampling := r.Analysis != nil && r.Analysis.Errors.Sampling
	for _, or := range r.Outcomes {
		read := or.AsRead()
		od := OutcomeDecisions{Outcome: or.Outcome.Column, Categories: or.Data.Categories, Counts: or.Data.Counts,
			RowsRead: read.RowsRead, RowsUsed: read.N, Dropped: nonNil(read.Dropped), RowsSubsetUnknown: read.RowsUndecided, NObs: fit.Observations(read.N, read.NObs(), sampling),
			Choice: or.Choice, Fallback: or.Fallback, Notes: nonNil(or.Notes), Final: map[string]Verdict{}}
		if or.Observed != nil {
			od.Counts = or.Observed.Counts
		}
		od.FewClusters = fewClustersRecord(r.Analysis, or)
		if or.Design != nil && !or.Design.Trivial() {
			od.Terms = or.Design.Records()
		}
		for _, fs := range or.FreeSets {
			od.PartialSet = append(od.PartialSet, FreeSetRecord{fs.Approach, nonNil(fs.Predictors), fs.Source})
		}
		for _, s := range or.Stepwise {
			od.Stepwise = append(od.Stepwise, StepwiseJSON{s.Approach, s.Link, s.Result})
		}
		for _, f := range or.Fits {
			fd := FitDecision{ID: f.ID, Auxiliary: f.Auxiliary, Error: f.Err, Verdict: f.Verdict, Rejected: f.Rejected}
			if f.Result != nil {
				fd.FitRecord = Record(f.Result)
			}
			od.Fits = append(od.Fits, fd)
			if !f.Auxiliary {
				od.Final[f.ID] = Verdict{Model: f.ID, Kept: f.Verdict == "chosen" || f.Verdict == "kept", Reason: verdictText(f)}
			}
		}
		for _, tb := range or.Tests {
			od.Tests = append(od.Tests, TestBlockJSON{tb.Approach, tb.Link, nonNil(tb.Global), nonNil(tb.PerVariable), nonNil(tb.Nested)})
		}
		for i, ro := range or.Rules {
			od.Rules = append(od.Rules, RuleJSON{ro.Rule.Kind, ro.Rule.Line, ro.Description, nonNil(ro.Verdicts), r.Registration.RuleChanges(i)})
		}
		if or.Chosen != nil {
			id := or.Chosen.ID
			od.Chosen = &id
		}
		od.Overall = or.Overall
		od.Imputation = imputationRecord(or, sampling)
		if od.Overall == nil {
			od.Overall = []OverallRecord{}
		}
		od.Lipsitz = or.Lipsitz
		od.PatternSplit = or.PatternSplit
		od.GOFPooling = or.GOFPooling
		od.Hypotheses = or.Hypotheses
		od.SelectionStability = or.Stability
		od.TermTests = or.TermTests
		if r.Analysis != nil && termTestsOff(r.Analysis) && or.Chosen != nil {
			od.TermTestsOff = "switched off by the plan (inference.term_tests: none)"
		}
		od.Marginal = or.Marginal
		od.LevelPairs = or.LevelPairs
		od.ProfileOutside = or.ProfileOutside
		od.PredictionPanels = panelsRecord(r.Analysis, or)
		if or.NewRows != nil {
			od.NewRowsOutside = or.NewRows.Flagged
			od.NewRowsSkipped = SkippedNewRows(or.NewRows.Rows)
			od.NewRowsNotPredicted = or.NewRows.Unpredicted
		}
		d.Outcomes = append(d.Outcomes, od)
	}
	d.Sensitivity = sensitivityRecords(r)
	return d
}

func verdictText(f *FitEntry) string {
	if f.Rejected != "" {
		return f.Verdict + ": " + f.Rejected
	}
	return f.Verdict
}

// nonNil writes an empty list of decisions.json as [], never null.
func nonNil[T any](xs []T) []T {
	if xs == nil {
		return []T{}
	}
	return xs
}

// MarshalStable encodes v as indented JSON with a final newline; a number
// that does not exist (NaN, an infinity) is written as null.
func MarshalStable(v any) ([]byte, error) {
	return marshalFinite(v, func(v any) ([]byte, error) {
		var buf bytes.Buffer
		enc := json.NewEncoder(&buf)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		if err := enc.Encode(v); err != nil {
			return nil, err
		}
		return buf.Bytes(), nil
	})
}

// RunRecord is the content of run.json: what produced the outputs.
type RunRecord struct {
	Program string    `json:"program"`
	Version string    `json:"version"`
	Plan    PlanRef   `json:"plan"`
	Data    *DataRef  `json:"data,omitempty"` // absent when no data file is read (ordplan power)
	NewRows *DataRef  `json:"new_rows,omitempty"`
	Imputed []DataRef `json:"imputed,omitempty"` // the imputed data files
	// DataColumns summarise and fingerprint the columns each outcome
	// reads, in the rows it uses (OutcomeColumns; absent in records of
	// older programs, and in ordplan power's).
	DataColumns []OutcomeColumns `json:"data_columns,omitempty"`
	// Imputation: how the program imputed each outcome's data (data.missing: impute).
	Imputation []*ChainedRecord `json:"imputation,omitempty"`
	Seed       uint64           `json:"seed"`
	// Registration is the plan compared with its lock (absent when not compared).
	Registration *RegistrationRecord `json:"registration,omitempty"`
	Outputs      map[string]string   `json:"outputs_sha256"`
	Timestamp    string              `json:"timestamp,omitempty"`
	GoVersion    string              `json:"go_version"`
	// Revision: the source revision of the build, when stamped (Revision).
	Revision string `json:"revision,omitempty"`
	Platform string `json:"os_arch"`
	Command  string `json:"command_line,omitempty"`
	// MadeBy is the command whose outputs these are ("run", "rehearse",
	// "power"): an output folder holds one command's outputs (absent in
	// records written before it was kept, all of run or rehearse).
	MadeBy string `json:"made_by,omitempty"`
	// Sensitivity are the plan's sensitivity analyses run (absent when
	// none).
	Sensitivity []SensitivityRunRecord `json:"sensitivity,omitempty"`
}

// RunJSON is run.json for a run whose outputs are files (by name): the
// program, plan, data and seed, the SHA-256 of every output, and the
// command that made them (madeBy: run or rehearse).
func RunJSON(r *Result, madeBy string, files map[string][]byte) ([]byte, error) {
	data := withSheet(dataRef(r), r)
	rec := RunRecord{Program: "ordplan", Version: r.Version,
		Plan: PlanRef{File: filepath.Base(r.Plan.Path), Title: r.Plan.Title, SHA256: r.Plan.Hash, Canonical: r.Plan.Canonical()},
		Data: &data, NewRows: newRowsSheet(newRowsRef(r), r), Imputed: r.Imputed, DataColumns: r.DataColumns(), Seed: r.Plan.Seed}
	rec.Timestamp = r.Started
	rec.Imputation = imputationRecords(r)
	rec.Sensitivity = sensitivityRunRecords(r)
	rec.GoVersion, rec.Revision, rec.Platform, rec.Command, rec.MadeBy = r.GoVersion, r.Revision, r.Platform, r.Command, madeBy
	rec.Registration = registrationRecord(r.Registration)
	return rec.withOutputs(files)
}

// imputationRecords say how the program imputed each outcome's data.
func imputationRecords(r *Result) []*ChainedRecord {
	var out []*ChainedRecord
	for _, or := range r.Outcomes {
		if or.Imputed != nil && or.Imputed.Chained != nil {
			out = append(out, or.Imputed.Chained)
		}
	}
	return out
}

// SimulationRunJSON is run.json for `ordplan power`, which reads no data
// file (every data set is drawn from the plan's assumptions): the program,
// the plan, its registration (the plan compared with its lock, as run
// records it; nil: not compared), the seed, the command line and the
// SHA-256 of every output.
func SimulationRunJSON(p *plan.Plan, reg *lock.Status, command string, files map[string][]byte) ([]byte, error) {
	rec := RunRecord{Program: "ordplan", Version: Version,
		Plan: PlanRef{File: filepath.Base(p.Path), Title: p.Title, SHA256: p.Hash}, Seed: p.Seed,
		GoVersion: runtime.Version(), Revision: Revision(), Platform: runtime.GOOS + "/" + runtime.GOARCH, Command: command, MadeBy: "power",
		Registration: registrationRecord(reg)}
	return rec.withOutputs(files)
}

// withOutputs is the record with the SHA-256 of every output, encoded.
func (rec RunRecord) withOutputs(files map[string][]byte) ([]byte, error) {
	rec.Outputs = make(map[string]string, len(files))
	for n, b := range files {
		s := sha256.Sum256(b)
		rec.Outputs[n] = hex.EncodeToString(s[:])
	}
	return MarshalStable(rec)
}

// newRowsRef names the new-rows file of a run, or nil.
func newRowsRef(r *Result) *DataRef {
	if r.NewRowsHash == "" {
		return nil
	}
	return &DataRef{File: r.Plan.Inference.Predict, SHA256: r.NewRowsHash}
}

// newRowsSheet is ref (newRowsRef) with the worksheet the new rows were
// read from when the file is a workbook, for run.json.
func newRowsSheet(ref *DataRef, r *Result) *DataRef {
	if ref == nil {
		return nil
	}
	var sheets []*data.SheetRead
	for _, or := range r.Outcomes {
		if nr := or.NewRows; nr != nil && nr.Rows != nil {
			sheets = append(sheets, nr.Rows.Sheet)
		}
	}
	ref.setSheet(sheets)
	return ref
}

// setSheet writes into ref what run.json says of the worksheet rows were
// read from, as each outcome's reading saw it (nil: not a workbook): its
// name, whether it is hidden, the hidden rows read (the same rows for
// every outcome), and the hidden columns any outcome read, in the order
// first met.
func (ref *DataRef) setSheet(sheets []*data.SheetRead) {
	for _, s := range sheets {
		if s == nil {
			continue
		}
		if ref.Sheet == "" {
			ref.Sheet, ref.SheetHidden, ref.HiddenRows = s.Name, s.Hidden, s.HiddenRows
		}
		for _, c := range s.HiddenNames() {
			if !slices.Contains(ref.HiddenColumns, c) {
				ref.HiddenColumns = append(ref.HiddenColumns, c)
			}
		}
	}
}

// dataRef is the record of the data a run read: the file and its hash, or
// the parts with theirs.
func dataRef(r *Result) DataRef {
	if r.DataParts != nil {
		return DataRef{SHA256: r.DataHash, Parts: r.DataParts}
	}
	return DataRef{File: r.Plan.Data.File, SHA256: r.DataHash}
}

// withSheet is ref with the worksheet the rows were read from when the
// data file is a workbook (run.json names it; decisions.json, the same
// for the same data in any format, does not).
func withSheet(ref DataRef, r *Result) DataRef {
	var sheets []*data.SheetRead
	var parts [][]*data.SheetRead // by part
	for _, or := range r.Outcomes {
		ds := or.AsRead()
		if ds == nil {
			continue
		}
		sheets = append(sheets, ds.Sheet)
		for i, p := range ds.Parts {
			if i == len(parts) {
				parts = append(parts, nil)
			}
			parts[i] = append(parts[i], p.Sheet)
		}
	}
	ref.setSheet(sheets)
	if len(parts) == len(ref.Parts) && len(parts) > 0 {
		// A copy: decisions.json's parts, the same in any format, name no sheet.
		ref.Parts = slices.Clone(ref.Parts)
		for i := range ref.Parts {
			ref.Parts[i].setSheet(parts[i])
		}
	}
	return ref
}
