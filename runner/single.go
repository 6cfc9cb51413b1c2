package runner

import (
	"fmt"

	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// SingleFit is what `ordplan fit` asks for.
type SingleFit struct {
	DataFile    string
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
	Covariance  fit.Covariance
	Workers     int
}

// FitOne loads the data and fits one model.
func FitOne(s SingleFit) (*fit.Result, *data.Dataset, error) {
	dspec := s.designSpec()
	// Check the model's names before reading: terms stand for their
	// columns, which are known once the design is built.
	if _, err := (Spec{Approach: s.Approach, Backward: s.Backward, Link: s.Link, Predictors: s.Predictors,
		Nonparallel: s.Nonparallel, Groups: s.Groups}).Model(); err != nil {
		return nil, nil, err
	}
	dopt := data.Options{Outcome: s.Outcome, Categories: s.Categories,
		Weights: s.Weights, Offset: s.Offset, Cluster: s.Cluster, Refuse: s.Refuse, Dialect: s.Dialect}
	for _, src := range dspec.Sources {
		dopt.Predictors = append(dopt.Predictors, src.Name)
		if src.Cat != nil {
			if dopt.PredictorLevels == nil {
				dopt.PredictorLevels = map[string][]string{}
			}
			dopt.PredictorLevels[src.Name] = src.Cat.Levels
		}
	}
	ds, err := data.Load(s.DataFile, dopt)
	if err != nil {
		return nil, nil, err
	}
	if len(ds.Unobserved) > 0 {
		return nil, ds, fmt.Errorf("%s: outcome %q: category %q is declared but never observed in the rows used; drop it or merge it with a neighbour", s.DataFile, s.Outcome, ds.Unobserved[0])
	}
	dz, d, err := buildDesign(dspec, ds)
	if err != nil {
		return nil, ds, fmt.Errorf("%s: %v", s.DataFile, err)
	}
	ds.Notes = append(ds.Notes, dz.Notes...)
	terms := termsOf(dz)
	spec := Spec{Approach: s.Approach, Backward: s.Backward, Link: s.Link, Predictors: dz.Columns,
		Nonparallel: columnsOf(terms, s.Nonparallel)}
	for _, g := range s.Groups {
		spec.Groups = append(spec.Groups, Group{Name: g.Name, Predictors: columnsOf(terms, g.Predictors)})
	}
	model, err := spec.Model()
	if err != nil {
		return nil, ds, err
	}
	cov := s.Covariance
	if cov == fit.Clustered && s.Cluster == "" {
		return nil, ds, fmt.Errorf("clustered covariance needs a cluster column (--cluster COL)")
	}
	if s.Sampling && s.Weights == "" {
		return nil, ds, fmt.Errorf("sampling weights need a weights column (--weights COL)")
	}
	if s.Sampling && !cov.IsSandwich() {
		cov = fit.Sandwich // pseudo-likelihood: sandwich errors
	}
	fopt := fit.Options{Covariance: fit.Observed, Workers: s.Workers}
	if cov == fit.Expected {
		fopt.Covariance = fit.Expected
	}
	res, err := fit.Fit(d, model, fopt)
	if err != nil {
		return nil, ds, fmt.Errorf("%s: %w", s.DataFile, err)
	}
	if cov.IsSandwich() && res.OK() {
		var clusters []string
		if cov == fit.Clustered {
			clusters = ds.Cluster
		}
		V, info, err := fit.SandwichEstimate(d, res, cov, clusters, s.Sampling)
		if err != nil {
			return nil, ds, err
		}
		res.UseCovariance(V, info.Type)
	}
	return res, ds, nil
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
func (s SingleFit) PlainColumns() bool {
	spec := s.designSpec()
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
