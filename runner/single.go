package runner

import (
	"fmt"

	"ordplan/runner/data"
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
	Probability bool // the weights are probability (sampling) weights
	Offset      string
	Cluster     string // cluster column for covariance "cluster"
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
		Weights: s.Weights, Offset: s.Offset, Cluster: s.Cluster, Refuse: s.Refuse})
	if err != nil {
		return nil, nil, err
	}
	if len(ds.Unobserved) > 0 {
		return nil, ds, fmt.Errorf("%s: outcome %q: category %q is declared but never observed in the rows used; drop it or merge it with a neighbour", s.DataFile, s.Outcome, ds.Unobserved[0])
	}
	cov := s.Covariance
	switch cov {
	case "", fit.CovOIM, fit.CovEIM, fit.CovRobust, fit.CovRobustHC0, fit.CovCluster:
	default:
		return nil, ds, fmt.Errorf("unknown covariance %q (want oim, eim, robust, robust_hc0 or cluster)", cov)
	}
	if cov == fit.CovCluster && s.Cluster == "" {
		return nil, ds, fmt.Errorf("covariance cluster needs a cluster column (--cluster COL)")
	}
	if s.Probability && s.Weights == "" {
		return nil, ds, fmt.Errorf("probability weights need a weights column (--weights COL)")
	}
	if s.Probability && cov != fit.CovCluster && cov != fit.CovRobustHC0 {
		cov = fit.CovRobust // pseudo-likelihood: sandwich errors
	}
	fopt := fit.Options{Covariance: fit.CovOIM, Workers: s.Workers}
	if cov == fit.CovEIM {
		fopt.Covariance = fit.CovEIM
	}
	d := FitData(ds)
	res, err := fit.Fit(d, model, fopt)
	if err != nil {
		return nil, ds, fmt.Errorf("%s: %w", s.DataFile, err)
	}
	if (cov == fit.CovRobust || cov == fit.CovRobustHC0 || cov == fit.CovCluster) && res.OK() {
		var clusters []string
		if cov == fit.CovCluster {
			clusters = ds.Cluster
		}
		sw := fit.Sandwich
		if cov == fit.CovRobustHC0 {
			sw = fit.SandwichHC0
		}
		V, info, err := sw(d, res, clusters, s.Probability)
		if err != nil {
			return nil, ds, err
		}
		res.UseCovariance(V, info.Type)
	}
	return res, ds, nil
}

// FitData turns a loaded data set into fit input.
func FitData(ds *data.Dataset) *fit.Data {
	return &fit.Data{Y: ds.Y, J: len(ds.Levels), X: ds.X, Predictors: ds.Predictors, Levels: ds.Levels,
		Weights: ds.Weights, Offset: ds.Offset}
}
