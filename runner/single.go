package runner

import (
	"fmt"

	"ordplan/data"
	"ordplan/runner/fit"
)

// SingleFit is what `ordplan fit` asks for.
type SingleFit struct {
	DataFile    string
	Outcome     string
	Levels      []string
	Predictors  []string
	Approach    string
	Backward    bool
	Link        string
	Nonparallel []string
	Groups      []Group
	Weights     string
	Offset      string
	Refuse      bool
	Covariance  string
	Workers     int
}

// FitOne loads the data and fits one model.
func FitOne(s SingleFit) (*fit.Result, *data.Dataset, error) {
	spec := Spec{Approach: s.Approach, Backward: s.Backward, Link: s.Link, Predictors: s.Predictors,
		Nonparallel: s.Nonparallel, Groups: s.Groups}
	model, err := spec.Model()
	if err != nil {
		return nil, nil, err
	}
	ds, err := data.Load(s.DataFile, data.Options{Outcome: s.Outcome, Levels: s.Levels, Predictors: s.Predictors,
		Weights: s.Weights, Offset: s.Offset, Refuse: s.Refuse})
	if err != nil {
		return nil, nil, err
	}
	if len(ds.Unobserved) > 0 {
		return nil, ds, fmt.Errorf("%s: outcome %q: category %q is declared but never observed in the rows used; drop it or merge it with a neighbour", s.DataFile, s.Outcome, ds.Unobserved[0])
	}
	if s.Covariance != "" && s.Covariance != fit.CovOIM && s.Covariance != fit.CovEIM {
		return nil, ds, fmt.Errorf("unknown covariance %q (want oim or eim)", s.Covariance)
	}
	res, err := fit.Fit(FitData(ds), model, fit.Options{Covariance: s.Covariance, Workers: s.Workers})
	if err != nil {
		return nil, ds, fmt.Errorf("%s: %w", s.DataFile, err)
	}
	return res, ds, nil
}

// FitData turns a loaded data set into fit input.
func FitData(ds *data.Dataset) *fit.Data {
	return &fit.Data{Y: ds.Y, J: len(ds.Levels), X: ds.X, Predictors: ds.Predictors, Levels: ds.Levels,
		Weights: ds.Weights, Offset: ds.Offset}
}
