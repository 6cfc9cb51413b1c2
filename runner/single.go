package runner

import (
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// SingleFit is what `ordplan fit` asks for.
type SingleFit struct {
	DataFile string
	// Parts are the data held as parts (DataFile empty): files with the
	// same columns read in order as one data set (data.LoadFiles), as the
	// plan key data.parts reads them.
	Parts       []string
	Outcome     string
	Categories  []string
	Predictors  []string     // term names (plain columns when Design is nil)
	Design      *design.Spec // the terms, when any is not a plain numeric column
	Approach    fit.Comparison
	Backward    bool
	Link        fit.Link
	Nonparallel []string
	Groups      []Group
	Weights     string
	Sampling    bool // the weights are sampling weights
	Offset      string
	Cluster     string // cluster column for clustered covariance
	Refuse      bool
	Dialect     data.Dialect // the data file's delimiter and decimal mark
	// ColumnMissing are columns' own missing-value codes (--missing-codes),
	// as a plan's dictionary.COLUMN.missing.
	ColumnMissing map[string][]string
	Covariance    fit.Covariance
	// Correction is the few-cluster correction of clustered errors
	// (--few-clusters; the plan's few_clusters).
	Correction fit.ClusterCorrection
	Workers    int
}

// DataName names the data in messages and summaries: the file, or the
// parts (data.PartsName).
func (s SingleFit) DataName() string {
	if s.Parts != nil {
		return data.PartsName(s.Parts)
	}
	return s.DataFile
}

// FitOne fits one model: it resolves the flags, reads the data, builds
// the design, fits and applies the sandwich step of the covariance policy.
func FitOne(s SingleFit) (*fit.Result, *data.Dataset, error) {
	res, ld, _, err := fitOne(s)
	if ld == nil {
		return res, nil, err
	}
	return res, ld.Data, err
}

// SingleChecks is what `ordplan fit` prints after the estimates: the odds
// ratios (logit link), how well the model fits against its thresholds-only
// model, and the goodness-of-fit tests.
type SingleChecks struct {
	// OddsRatios are the odds ratios of a logit fit (AddOddsRatios).
	OddsRatios   *OddsRatiosRecord   `json:"odds_ratios,omitempty"`
	Overall      OverallRecord       `json:"overall_fit"`
	Lipsitz      *fit.Lipsitz        `json:"lipsitz,omitempty"`
	PatternSplit *PatternSplitRecord `json:"pulkstenis_robinson,omitempty"`
	// Readings say what each model column's odds ratio compares
	// (OddsRatios).
	Readings []ColumnReading `json:"-"`
}

// FitOneChecked is FitOne followed, when the fit has a finite maximum, by
// its checks: the thresholds-only model with the likelihood-ratio test and
// pseudo-R2, the Lipsitz test and, with categorical predictors, the
// Pulkstenis-Robinson tests (as ordplan run computes them for the chosen
// model).
//
// Its warnings are those of the data the fit used, as check and run give
// them: the levels of categorical predictors with few rows
// (Analysis.FewRowLevels; one whose column the fit's separation names is
// left out, its message saying why).
func FitOneChecked(s SingleFit) (*fit.Result, *data.Dataset, *SingleChecks, []string, error) {
	res, ld, a, err := fitOne(s)
	if ld == nil {
		return res, nil, nil, nil, err
	}
	var warnings []string
	if err == nil && res != nil {
		if w := a.FewRowLevels(a.Outcomes[0], ld.Design, ld.Data, []*FitEntry{{Result: res}}); w != "" {
			warnings = append(warnings, w)
		}
	}
	if err != nil || !res.OK() {
		return res, ld.Data, nil, warnings, err
	}
	// The comparison with the thresholds-only model (its spread of the
	// linear predictor a serial pass) beside the goodness of fit; both
	// only read the data and the fit.
	var o fit.Overall
	done := make(chan struct{})
	go func() {
		defer close(done)
		null, _ := fit.FitNull(ld.FitData, res.Model, a.Fit)
		o = overallFit(ld.FitData, res, null, a.Errors.Sampling)
	}()
	c := &SingleChecks{Readings: columnReadings(ld.Design, ld.Data, ld.FitData, ld.Data)}
	c.Lipsitz, c.PatternSplit = goodnessOfFit(ld, res, a.Fit, a.Errors.Sampling)
	<-done
	c.Overall = OverallRecord{Model: res.Name, Null: fit.ModelID(res.Model.ComparisonName(), "thresholds-only", res.Model.Link), Overall: o}
	return res, ld.Data, c, warnings, nil
}

// fitOne fits the model of s, returning what it loaded (nil when the
// data could not be read) and the resolved analysis.
func fitOne(s SingleFit) (*fit.Result, *Loaded, *Analysis, error) {
	a, err := ResolveFit(s)
	if err != nil {
		return nil, nil, nil, err
	}
	ld, err := a.Load(a.Outcomes[0])
	if err != nil {
		return nil, nil, a, err
	}
	ds := ld.Data
	ds.Notes = append(ds.Notes, ld.Design.Notes...)
	terms := termsOf(ld.Design)
	var groups []Group
	for _, g := range s.Groups {
		groups = append(groups, Group{Name: g.Name, Predictors: columnsOf(terms, g.Predictors)})
	}
	model, err := s.spec(ld.Design.Columns, columnsOf(terms, s.Nonparallel), groups).Model()
	if err != nil {
		return nil, ld, a, err
	}
	res, err := fit.Fit(ld.FitData, model, a.Fit)
	if err != nil {
		return nil, ld, a, a.designError(a.Outcomes[0], ld.Design, ld.Data.FewRowsSentence(), err, "")
	}
	if res.OK() {
		if err := a.Errors.Settle(ds, ld.FitData, terms)(res); err != nil {
			return nil, ld, a, err
		}
	}
	return res, ld, a, nil
}

// FewClusters is the warning of clustered errors on the fit's data ds
// when they hold too few clusters (Analysis.FewClusters), or "".
func (s SingleFit) FewClusters(ds *data.Dataset) string {
	a, err := ResolveFit(s)
	if err != nil || len(a.Outcomes) == 0 || ds == nil {
		return ""
	}
	return a.FewClusters(a.Outcomes[0], ds)
}

// Model is the model the flags describe, on the term names (which are the
// columns when every term is a plain numeric column).
func (s SingleFit) Model() (fit.Model, error) {
	return s.spec(s.Predictors, s.Nonparallel, s.Groups).Model()
}

// spec is the model the flags describe on the given predictor columns
// (the term names before the design is built).
func (s SingleFit) spec(predictors, nonparallel []string, groups []Group) Spec {
	return Spec{Approach: s.Approach, Backward: s.Backward, Link: s.Link, Predictors: predictors,
		Nonparallel: nonparallel, Groups: groups}
}

// FitData turns a loaded data set into fit input.
func FitData(ds *data.Dataset) *fit.Data {
	return &fit.Data{Y: ds.Y, J: len(ds.Categories), X: ds.X, Predictors: ds.Predictors, Categories: ds.Categories,
		Weights: ds.Weights, Offset: ds.Offset}
}

// designSpec gives the design of the fit: its terms, or the predictors as
// plain numeric columns.
func (s SingleFit) designSpec() design.Spec {
	if s.Design != nil {
		return *s.Design
	}
	var spec design.Spec
	for _, c := range s.Predictors {
		spec.Sources = append(spec.Sources, design.Source{Name: c})
		spec.Terms = append(spec.Terms, design.TermSpec{Name: c, Source: c})
	}
	return spec
}

// PlainColumns reports whether every term is a numeric column as it is.
func (s SingleFit) PlainColumns() bool { return plainColumns(s.designSpec()) }

func plainColumns(spec design.Spec) bool {
	for _, src := range spec.Sources {
		if src.Cat != nil {
			return false
		}
	}
	for _, t := range spec.Terms {
		if len(t.Interact) > 0 || !t.Transform.Empty() || t.Name != t.Source {
			return false
		}
	}
	return true
}
