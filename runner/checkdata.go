package runner

import (
	"errors"
	"fmt"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// CheckData checks a plan against its data file: the file reads, every
// named column exists, every declared category is observed, and the new
// rows of inference.predict read through the design. It returns the
// warnings the data bring (too few clusters for clustered errors:
// Analysis.FewClusters), one per outcome concerned.
func CheckData(p *plan.Plan) ([]string, error) {
	a := ResolvePlan(p)
	// The data read whole first, as run pins them (pinData): a file or
	// part that is not UTF-8 text, say, is named at its plan key and line
	// as run names it.
	_, _, unpin, err := pinData(a)
	if err != nil {
		return nil, err
	}
	defer unpin()
	if err := ValidateData(p); err != nil {
		return nil, err
	}
	var scopes []plan.ParameterScope
	var warnings []string
	for i, r := range a.Outcomes {
		ld, run, unlinked, err := a.checkLoad(r)
		if err != nil {
			return nil, err
		}
		warnings = append(warnings, unlinkedWarnings(r.Outcome, unlinked)...)
		if err := a.checkDesignAsRun(r, ld, run); err != nil {
			return nil, err
		}
		// The outcome as run holds it before any fit: on imputed data the
		// sets (Imputed) and the data file as read (Observed), whose notes,
		// ranges and levels run's warnings read (AsRead, levelRows,
		// fittedRanges, usedRows).
		or := &OutcomeResult{Design: ld.Design, Data: ld.Data, FitData: ld.FitData, dataOptions: r.Options, Imputed: run}
		if run != nil {
			or.Observed = run.observed
		}
		warnings = append(warnings, pointWarnings(r.Outcome, or.AsRead())...)
		if w := hiddenWarning(r.Outcome, p.Data.File, ld.Data.Sheet); w != "" {
			warnings = append(warnings, w)
		}
		used, err := a.rowsFitted(r, ld.Data, run)
		if err != nil {
			return nil, err
		}
		if w := a.FewClusters(r, used); w != "" {
			warnings = append(warnings, fmt.Sprintf("outcome %s: %s", r.Outcome, w))
		}
		if w := a.StabilityLevels(r, used); w != "" {
			warnings = append(warnings, fmt.Sprintf("outcome %s: %s", r.Outcome, w))
		}
		levelRows := used
		switch {
		case run != nil:
			// The rows as read, as run counts them.
			levelRows = or.levelRows()
		case a.Imputes():
			// Nothing to impute: the rows as read.
			if levelRows, err = a.loadIncomplete(r); err != nil {
				return nil, err
			}
		}
		if w := a.FewRowLevels(r, ld.Design, levelRows, nil); w != "" {
			warnings = append(warnings, fmt.Sprintf("outcome %s: %s", r.Outcome, w))
		}
		if w := a.SparseWithinUnmet(&OutcomeResult{Design: ld.Design, dataOptions: r.Options}, used); w != "" {
			warnings = append(warnings, fmt.Sprintf("outcome %s: %s", r.Outcome, w))
		}
		terms := termsOf(ld.Design)
		if w := a.SingularModels(r, used, gridModels(a, terms), len(ld.Data.Categories), allColumns(terms)); w != "" {
			warnings = append(warnings, fmt.Sprintf("outcome %s: %s", r.Outcome, w))
		}
		if w := ProfileOutsideWarning(r.Outcome, profileOutside(a, or.fittedRanges(), r.Options.Keep)); w != "" {
			warnings = append(warnings, w)
		}
		if w := ProfileUndefinedWarning(r.Outcome, profileUndefined(a, or)); w != "" {
			warnings = append(warnings, w)
		}
		scopes = append(scopes, hypothesisScope(p.Outcomes[i].Column, ld.Design, ld.Data.Categories))
		warnings = append(warnings, PartOfColumnWarnings(p, r.Outcome, ld.Design)...)
		// The new rows to predict: read through the design as run reads
		// them after the fits (an undeclared level, a value a
		// transformation cannot take), so that check finds what run would
		// stop on only after fitting every model.
		if a.Inference.PredictPath != "" {
			nr, err := readNewRows(a, &OutcomeResult{Design: ld.Design, dataOptions: r.Options})
			if err != nil {
				return nil, err
			}
			warnings = append(warnings, nr.notPredictedWarnings(r.Outcome)...)
			if nr.Rows != nil {
				if w := hiddenWarning(r.Outcome, "inference.predict: "+p.Inference.Predict, nr.Rows.Sheet); w != "" {
					warnings = append(warnings, w)
				}
			}
		}
	}
	if err := checkHypothesisNames(p, scopes); err != nil {
		return nil, err
	}
	// Each sensitivity analysis is checked against the data as a plan
	// of its own.
	for _, s := range p.Sensitivity {
		w, err := CheckData(s.OnData(p))
		if pe, ok := err.(*plan.Error); ok {
			if ce, ok := s.InChange(pe); ok {
				return nil, ce
			}
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %s: %w", p.Path, s.Title(), err)
		}
		for _, x := range w {
			warnings = append(warnings, s.Title()+": "+x)
		}
	}
	return warnings, nil
}

// hiddenWarning is check's warning of the rows and used columns of a
// workbook's sheet (of file, as the plan writes it) hidden from view and read as data
// (SheetRead.HiddenNote, which fit's Data line, the report and run.json
// say too); "" when none are, or the file is no workbook.
func hiddenWarning(outcome, file string, s *data.SheetRead) string {
	if s == nil || s.HiddenNote() == "" {
		return ""
	}
	return fmt.Sprintf("outcome %s: %s, %s: %s", outcome, file, s.Where(), s.HiddenNote())
}

// checkDesignAsRun checks outcome r's design before any fit as run does
// (CheckDesign on ld, checkLoad's data): with imputed sets made elsewhere
// (data.imputed; run, checkLoad's) on the sets, as run fits them
// (checkImputedDesign), not on the data file's complete rows, which run
// fits nowhere.
func (a *Analysis) checkDesignAsRun(r Reading, ld *Loaded, run *ImputedRun) error {
	if a.Imputed == nil {
		return a.CheckDesign(r, ld.Design, ld.Data, ld.FitData)
	}
	return a.checkImputedDesign(r, ld.Design, run.Data[0], run.Sets)
}

// checkLoad reads outcome r's data for check as run reads them: without
// imputation its complete rows (Load); on imputed data the imputed sets
// and what run refuses before any fit (Analysis.imputedOutcome), not the
// data file's complete rows, which run fits nowhere. With data.imputed
// the sets are read and matched against the data file as run does; with
// data.missing: impute check imputes the rows kept as run does, into two
// sets after one iteration (the plan's models and seed), stopping where
// run's imputation would (a column missing in every row, I9), and checks
// the design on the first imputed set, as run makes it: a level seen only
// in incomplete rows is a level of the rows used, and data in which no
// row is complete are imputed, not refused (I24). unlinked are the
// imputation's ChainedRecord.Unlinked, which check warns of as run does
// (I25); run is nil without imputed sets.
func (a *Analysis) checkLoad(r Reading) (ld *Loaded, run *ImputedRun, unlinked []string, err error) {
	if !a.Imputes() && a.Imputed == nil {
		ld, err = a.Load(r)
		return ld, nil, nil, err
	}
	quick := *a
	if a.Imputes() {
		im := *a.Imputation
		im.Sets, im.Iterations, im.WriteSets, im.ConvergenceTable = 2, 1, false, false
		quick.Imputation = &im
	}
	run, _, dz, ds, err := quick.imputedOutcome(r, Options{})
	switch {
	case errors.Is(err, errNothingToImpute):
		ld, err = a.Load(r)
		return ld, nil, nil, err
	case err != nil:
		return nil, nil, nil, err
	}
	if run.Chained != nil {
		unlinked = run.Chained.Unlinked
	}
	return &Loaded{Data: ds, Design: dz, FitData: run.Sets[0]}, run, unlinked, nil
}

// rowsFitted are the rows the fits of outcome r use, as run counts them
// for its warnings (its first imputed set): on imputed data the rows of
// an imputed set (checkLoad's ld, with run), with data.missing: impute
// the rows kept for imputation (frequency weights expanded, as
// chainedSets does), not the complete rows of the data file.
func (a *Analysis) rowsFitted(r Reading, ld *data.Dataset, run *ImputedRun) (*data.Dataset, error) {
	switch {
	case a.Imputed != nil && run != nil:
		return ld, nil
	case a.Imputes():
		ds, err := a.loadIncomplete(r)
		if err != nil {
			return nil, err
		}
		if ds.Weights != nil {
			if ds, err = expandCounts(ds); err != nil {
				return nil, fmt.Errorf("%s: data.weights: %v (data.missing: impute, outcome %q)", a.Source, err, r.Outcome)
			}
		}
		return ds, nil
	}
	return ld, nil
}

// levelRows are the rows the warning of levels with few rows counts
// (Analysis.FewRowLevels, W35): the rows the fits use, and on imputed data
// the rows as read (Observed), where a level counts only the rows at which
// it is observed, never the values imputed into it.
func (or *OutcomeResult) levelRows() *data.Dataset {
	if or.Imputed != nil && or.Observed != nil {
		return or.Observed
	}
	return or.Data
}

// FewClustersWarnings are the warnings of a run's outcomes whose data have
// too few clusters for clustered errors (Analysis.FewClusters), or levels
// that a bootstrap of whole clusters will often leave out
// (Analysis.StabilityLevels, when the resamples were drawn), and the
// other warnings of the data check makes (levels with few rows, ...,
// hypotheses restricting part of a data column's terms:
// PartOfColumnWarnings), as check words them.
func FewClustersWarnings(res *Result) []string {
	var out []string
	an := res.Analysis
	for i, or := range res.Outcomes {
		if an == nil || i >= len(an.Outcomes) || or.Data == nil {
			continue
		}
		out = append(out, pointWarnings(an.Outcomes[i].Outcome, or.AsRead())...)
		if w := an.FewClusters(an.Outcomes[i], or.Data); w != "" {
			out = append(out, fmt.Sprintf("outcome %s: %s", an.Outcomes[i].Outcome, w))
		}
		if w := an.StabilityLevels(an.Outcomes[i], or.Data); w != "" && or.Stability != nil {
			out = append(out, fmt.Sprintf("outcome %s: %s", an.Outcomes[i].Outcome, w))
		}
		if w := an.FewRowLevels(an.Outcomes[i], or.Design, or.levelRows(), or.Fits); w != "" {
			out = append(out, fmt.Sprintf("outcome %s: %s", an.Outcomes[i].Outcome, w))
		}
		if w := an.SparseWithinUnmet(or, or.Data); w != "" {
			out = append(out, fmt.Sprintf("outcome %s: %s", an.Outcomes[i].Outcome, w))
		}
		if w := an.SingularModels(an.Outcomes[i], or.Data, or.Fits, len(or.Data.Categories), allColumns(or.Terms)); w != "" {
			out = append(out, fmt.Sprintf("outcome %s: %s", an.Outcomes[i].Outcome, w))
		}
		if w := ProfileOutsideWarning(an.Outcomes[i].Outcome, or.ProfileOutside); w != "" {
			out = append(out, w)
		}
		if w := ProfileUndefinedWarning(an.Outcomes[i].Outcome, profileUndefined(an, or)); w != "" {
			out = append(out, w)
		}
		if res.Plan != nil && or.Design != nil {
			out = append(out, PartOfColumnWarnings(res.Plan, an.Outcomes[i].Outcome, or.Design)...)
		}
	}
	return out
}

// pointWarnings are the notes of the data read for outcome on columns
// whose points may separate thousands (data.Dataset.PointNotes), and on
// an outcome code that looks like a code for a missing answer
// (data.Dataset.StrayCode), and on predictor columns observed in fewer
// than half of the rows (data.Dataset.MostlyMissing), and on rows kept
// for imputation that observe nothing it fills (NothingObserved), which check and run
// print on the terminal as warnings (the report has them).
func pointWarnings(outcome string, ds *data.Dataset) []string {
	if ds == nil {
		return nil
	}
	out := make([]string, len(ds.PointNotes))
	for i, n := range ds.PointNotes {
		out[i] = fmt.Sprintf("outcome %s: %s", outcome, n)
	}
	if ds.StrayCode != "" {
		out = append(out, fmt.Sprintf("outcome %s: %s", outcome, ds.StrayCode))
	}
	for _, n := range ds.MostlyMissing {
		out = append(out, fmt.Sprintf("outcome %s: %s", outcome, n))
	}
	if ds.NothingObserved != "" {
		out = append(out, fmt.Sprintf("outcome %s: %s", outcome, ds.NothingObserved))
	}
	return out
}

// NotCheckedWithoutData lists, sorted, what `ordplan check` checks only
// with the data (the plan's check of the data file's columns, and
// CheckData) and so leaves out under --no-data, for the features p uses:
// each item begins with the plan key it concerns. Keep it in step with
// CheckData.
func NotCheckedWithoutData(p *plan.Plan) []string {
	file := "data.file: the data file opens and holds every column the plan names (its delimiter and decimal mark checked)"
	if p.Data.Parts != nil {
		file = "data.parts: every part opens and holds every column the plan names, the same columns in every part (the delimiter and decimal mark checked)"
	}
	out := []string{
		file,
		"data: every used cell reads as its column's kind (numbers, declared levels, outcome categories), and missing values are as data.missing says",
		"outcomes: the categories the rows used have (a declared category no row has is refused; at least two are needed)",
		"predictors: constant or collinear design columns (the rank of each outcome's design on the rows used)",
	}
	if p.Data.Weights != "" {
		out = append(out, "data.weights: every weight is a number of zero or more, at most 1e15, and none dwarfs the others together (they weigh at least 1.5e-8 of the total)")
	}
	if p.Data.Cluster != "" {
		out = append(out, fmt.Sprintf("data.cluster: the number of clusters in the rows used (fewer than %d gives a warning: cluster-robust errors too small, joint Wald tests of more than G-1 restrictions not computed; a model of more than G-1 parameters gives another: its cluster-robust covariance is singular)", fit.FewClusters))
	}
	if p.Data.Imputed != nil {
		out = append(out, "data.imputed: the imputed sets open and are data files ordplan reads, and match the data file (their rows, columns and the values the data observe)")
	}
	if p.Data.Imputes() {
		out = append(out, "data.missing: impute: the columns imputed (none missing in every row), imputed into two sets after one iteration as run imputes them, and the design on the first imputed set, as run makes it")
	}
	if len(p.Dictionary) > 0 {
		out = append(out, "dictionary: the data's values against the declared ranges, values and missing-value codes")
	}
	if len(p.Categorical) > 0 {
		out = append(out, "categorical: values that are not declared levels, and declared levels no row used has (unobserved: refuse stops, drop removes the level's column)")
	}
	if len(p.Subset) > 0 {
		out = append(out, "subset: the values its conditions name against those the rows hold, and the rows it keeps")
	}
	knots, quantiles := false, false
	terms := [][]design.TermSpec{p.Terms}
	for _, o := range p.Outcomes {
		terms = append(terms, o.Terms)
	}
	for _, ts := range terms {
		for _, t := range ts {
			knots = knots || t.Knots != nil
			quantiles = quantiles || t.Quantiles != nil
		}
	}
	if knots {
		out = append(out, "predictors: spline knots given as values against the range of the rows used")
	}
	if quantiles {
		out = append(out, "predictors: spline knots at quantiles that tie in the rows used")
	}
	if len(p.Inference.Hypotheses) > 0 {
		out = append(out, "inference.hypotheses: the boundaries and level columns that the data's categories and levels give the models")
	}
	if len(p.Inference.Profile) > 0 {
		out = append(out, "inference.profile: whether it lies outside the population fitted, and whether every term can be computed at it")
	}
	if p.Inference.PredictPath != "" {
		out = append(out, "inference.predict: the file of new rows opens and is a data file ordplan reads, and its rows read through each outcome's design (undeclared levels, levels no row used has, values a transformation cannot take)")
	}
	for _, r := range p.Rules {
		if slices.ContainsFunc(r.Grid, func(ax plan.GridAxis) bool { return ax.Levels != nil }) {
			out = append(out, "rules: the levels a closeness rule's grid lists that no row used has (unobserved: drop)")
			break
		}
	}
	if len(p.Sensitivity) > 0 {
		out = append(out, "sensitivity: each analysis, the plan with its changes, against the data as the plan is (the rows its subset keeps, its levels and design, its clusters)")
	}
	slices.Sort(out)
	return out
}

// SingularModels is the warning (W19) of clustered errors whose G
// clusters are fewer than the parameters of some model of the grid plus
// one: the candidates and the models the rules' tests compare them with
// (jobs; fits of one term alone parallel left out), each model's
// parameters counted from its structure on the columns cols and J
// categories. The cluster-robust covariance of such a model has rank at
// most G-1, so it is singular (fit.Result.SingularClustered): information
// about the model; a Wald test of at most G-1 restrictions made from it is
// read like any other (fit's waldDefined decides). "" without clustered errors or
// without such a model. One wording, which check, run (the outcome's notes
// in decisions.json and the report) and the report's chosen model give.
func (a *Analysis) SingularModels(r Reading, ds *data.Dataset, jobs []*FitEntry, J int, cols []string) string {
	if a.Errors.Covariance != fit.Clustered || len(ds.Cluster) == 0 {
		return ""
	}
	g := ClusterCount(ds)
	if g < 2 {
		return ""
	}
	var over []string
	for _, e := range jobs {
		if e.OnlyParallel != "" {
			continue
		}
		m, err := e.Spec.Model()
		if err != nil {
			continue
		}
		P, err := fit.NumParams(m, J, cols)
		if err != nil || !fit.SingularCovariance(P, g) {
			continue
		}
		over = append(over, fmt.Sprintf("%s (%d parameters)", e.ID, P))
	}
	if len(over) == 0 {
		return ""
	}
	hasParams := words.AndList(over) + " have"
	if len(over) == 1 {
		hasParams = strings.Replace(over[0], " (", " has ", 1)
		hasParams = strings.TrimSuffix(hasParams, ")") + ","
	}
	return fmt.Sprintf("%s: column %q holds %d clusters in the %d rows used, and %s more than G-1 = %d: a cluster-robust covariance from G clusters has rank at most G-1, so such a model's covariance is singular (some combinations of its estimates have no estimated variance): a joint Wald test of G or more restrictions cannot be made from it, and a test of fewer is made and read where the covariance of its restrictions has full rank, but its errors, intervals and tests rest on few clusters. Fewer parameters (a partial or parallel model, fewer terms) or more clusters avoid it",
		a.clusterKey(), r.Options.Cluster, g, ds.N, hasParams, g-1)
}

// gridModels are the fits of the grid of an outcome as check sees them,
// before any fit: the listed partial sets (a stepwise one is unknown, and
// its partial model left out).
func gridModels(a *Analysis, terms []fit.Term) []*FitEntry {
	var sets []FreeSet
	for _, ap := range a.Models.Approaches {
		fs := FreeSet{Approach: ap, Source: "stepwise"}
		if a.Models.Partial.Select == nil {
			fs = FreeSet{Approach: ap, Predictors: termsIn(terms, a.Models.Partial.Free), Source: "plan"}
		}
		sets = append(sets, fs)
	}
	jobs, _ := gridJobs(a, terms, sets, a.Models.Backward())
	return jobs
}
