package runner

import (
	"fmt"
	"math"
	"slices"

	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// On imputed data the chosen model's marginal effects and predictions are
// computed on each imputed set, with that set's fit and rows, and pooled
// by Rubin's rules quantity by quantity (impute.PoolScalar): the estimate
// is the mean over the sets, its variance the mean squared delta-method
// standard error plus (1 + 1/m) times the variance between the sets, and
// intervals and p-values use t on the Barnard-Rubin degrees of freedom.

// PredictionDF holds the Barnard-Rubin degrees of freedom of pooled
// predictions, in the layout of fit.Prediction (+Inf when the sets agree).
type PredictionDF struct {
	Prob, Cum, Expected, Linear []float64
}

// completeObs is the number of observations in one imputed set d for the
// complete-data degrees of freedom: the frequency-weighted count, or the
// rows with sampling weights, which count no units (their scale is
// arbitrary), as the minimum-information rule counts them.
func completeObs(d *fit.Data, sampling bool) float64 {
	return fit.Observations(d.N(), d.NObs(), sampling)
}

// completeDF is the complete-data analysis of Rubin's rules for a model
// of params parameters fitted on imputed sets of obs observations, r
// being its fit on one set (nil: a model-based covariance): the one
// decision of the references every pooled quantity is referred to. Under
// a cluster-robust covariance from G clusters (r.RefDF = G-1, the
// clustered sandwich) a single estimate refers to t on G-1 degrees of
// freedom and a joint Wald test of q restrictions to F(q, G-q), as on one
// data set (fit.Result.waldTest); otherwise the observations less the
// parameters (+Inf when that is not positive).
func completeDF(obs float64, params int, r *fit.Result) impute.Complete {
	if r != nil && r.RefDF > 0 {
		return impute.Complete{DF: r.RefDF, Clusters: r.Clusters}
	}
	dfc := obs - float64(params)
	if !(dfc > 0) {
		return impute.Complete{DF: math.Inf(1)}
	}
	return impute.Complete{DF: dfc}
}

// onSet is the outcome seen through imputed set k: its rows and fit input.
func (or *OutcomeResult) onSet(k int) *OutcomeResult {
	c := *or
	c.Data, c.FitData = or.Imputed.Data[k], or.Imputed.Sets[k]
	return &c
}

// chosenPerSet returns the chosen model's fit on each imputed set, or why
// there is none.
func (or *OutcomeResult) chosenPerSet() ([]*fit.Result, error) {
	i := slices.Index(or.Fits, or.Chosen)
	if i < 0 || or.Chosen.Pooled == nil || len(or.Imputed.Fits) == 0 {
		return nil, fmt.Errorf("the chosen model has no fit on every imputed set")
	}
	out := make([]*fit.Result, len(or.Imputed.Fits))
	for k, fits := range or.Imputed.Fits {
		if !fits[i].OK() {
			return nil, fmt.Errorf("the chosen model has no usable fit in imputed set %d", k+1)
		}
		out[k] = fits[i].Result
	}
	return out, nil
}

// runPooledInference computes the marginal effects, the differences of
// probabilities between pairs of levels (averaged, and at the points of
// the marginal effects) and the predictions for new rows the plan asks for
// on every imputed set and pools them.
func runPooledInference(an *Analysis, or *OutcomeResult) error {
	if or.Chosen == nil {
		return nil
	}
	or.ProfileOutside = profileOutside(an, or.fittedRanges(), or.dataOptions.Keep)
	inf := an.Inference
	fits, ferr := or.chosenPerSet()
	var dfc float64
	if ferr == nil {
		dfc = completeDF(or.Imputed.obs, fits[0].NParams, fits[0]).DF
	}
	for _, kind := range inf.MarginalEffects {
		if ferr != nil {
			or.Marginal = append(or.Marginal, MarginalSet{Kind: kind, Error: ferr.Error()})
			continue
		}
		sets := make([]MarginalSet, len(fits))
		for k, r := range fits {
			sets[k] = marginalSet(an, or.onSet(k), r, kind)
		}
		or.Marginal = append(or.Marginal, poolMarginal(sets, dfc, an.Level))
	}
	or.LevelPairs = levelPairSets(an, or, or.Chosen.Result, func(kind string, s int, levels []string) MarginalSet {
		if ferr != nil {
			if kind == "average" {
				kind = "level_pairs"
			}
			return MarginalSet{Kind: kind, Error: ferr.Error()}
		}
		sets := make([]MarginalSet, len(fits))
		for k, r := range fits {
			sets[k] = pairSet(an, or.onSet(k), r, kind, s, levels)
		}
		return poolMarginal(sets, dfc, an.Level)
	})
	if inf.PredictPath == "" {
		return nil
	}
	nr, err := readNewRows(an, or)
	if err != nil {
		return err
	}
	or.NewRows = nr
	if ferr != nil {
		nr.Error = ferr.Error()
		return nil
	}
	preds := make([]*fit.Prediction, len(fits))
	for k, r := range fits {
		if preds[k], err = r.Predict(nr.Design, nr.Rows.Offset); err != nil {
			nr.Error = fmt.Sprintf("in imputed set %d: %v", k+1, err)
			return nil
		}
	}
	if nr.Pred, nr.DF, err = poolPredictions(preds, dfc); err != nil {
		nr.Error = err.Error()
	}
	return nil
}

// poolMarginal pools one kind of marginal effects computed on each imputed
// set. The sets must give the same effects (predictor, change, category)
// in the same order; the point of effects at one point is the mean of the
// sets' points (numeric columns at each set's means).
func poolMarginal(sets []MarginalSet, dfc, level float64) MarginalSet {
	first := sets[0]
	out := MarginalSet{Kind: first.Kind, PointLevels: first.PointLevels, Notes: first.Notes}
	if level <= 0 || level >= 1 {
		level = 0.95
	}
	for k, s := range sets {
		if s.Error != "" {
			out.Error = fmt.Sprintf("in imputed set %d: %s", k+1, s.Error)
			return out
		}
		if len(s.Effects) != len(first.Effects) || !slices.Equal(s.Notes, first.Notes) {
			out.Error = fmt.Sprintf("imputed set %d gives other effects than set 1 (%d against %d; a column that is 0/1 or has a finite derivative in one set only)", k+1, len(s.Effects), len(first.Effects))
			return out
		}
		for e, me := range s.Effects {
			f := first.Effects[e]
			if me.Predictor != f.Predictor || me.Category != f.Category || me.Change != f.Change || me.Discrete != f.Discrete {
				out.Error = fmt.Sprintf("imputed set %d gives the effect of %s (%s) where set 1 gives %s (%s)", k+1, me.Predictor, me.Change, f.Predictor, f.Change)
				return out
			}
		}
	}
	if first.Point != nil {
		out.Point = make([]float64, len(first.Point))
		for _, s := range sets {
			for j, v := range s.Point {
				out.Point[j] += v / float64(len(sets))
			}
		}
	}
	q, u := make([]float64, len(sets)), make([]float64, len(sets))
	for e, f := range first.Effects {
		for k, s := range sets {
			q[k], u[k] = s.Effects[e].Effect, s.Effects[e].SE*s.Effects[e].SE
		}
		sc, err := impute.PoolScalar(q, u, dfc)
		if err != nil {
			out.Error = err.Error()
			out.Effects, out.Pooling = nil, nil
			return out
		}
		me := f
		me.Effect, me.SE, me.Z = sc.Estimate, sc.SE, 0
		if sc.SE > 0 {
			me.Z = sc.Estimate / sc.SE
		}
		me.Low, me.High, me.P = sc.Interval(level)
		out.Effects = append(out.Effects, me)
		out.Pooling = append(out.Pooling, poolingParam(f.Predictor+" ("+f.Change+"), "+f.Category, sc))
	}
	return out
}

// poolPredictions pools the predictions of the same rows made on each
// imputed set: every probability, cumulative probability, expected
// category and linear predictor by Rubin's rules. The most likely category
// is that of the pooled probabilities; a row is flagged negative when a
// pooled probability is negative or a set's prediction was.
func poolPredictions(preds []*fit.Prediction, dfc float64) (*fit.Prediction, *PredictionDF, error) {
	p0 := preds[0]
	n, J := p0.N, p0.J
	out := &fit.Prediction{N: n, J: J, MostLikely: make([]int, n), Negative: make([]bool, n)}
	df := &PredictionDF{}
	var err error
	pool := func(get func(*fit.Prediction) ([]float64, []float64)) ([]float64, []float64, []float64) {
		v0, _ := get(p0)
		est, se, dfs := make([]float64, len(v0)), make([]float64, len(v0)), make([]float64, len(v0))
		q, u := make([]float64, len(preds)), make([]float64, len(preds))
		for a := range v0 {
			for k, pr := range preds {
				v, s := get(pr)
				q[k], u[k] = v[a], s[a]*s[a]
			}
			sc, e := impute.PoolScalar(q, u, dfc)
			if e != nil && err == nil {
				err = e
			}
			est[a], se[a], dfs[a] = sc.Estimate, sc.SE, sc.DF
		}
		return est, se, dfs
	}
	out.Prob, out.SE, df.Prob = pool(func(p *fit.Prediction) ([]float64, []float64) { return p.Prob, p.SE })
	out.Cum, out.CumSE, df.Cum = pool(func(p *fit.Prediction) ([]float64, []float64) { return p.Cum, p.CumSE })
	out.Expected, out.ExpectedSE, df.Expected = pool(func(p *fit.Prediction) ([]float64, []float64) { return p.Expected, p.ExpectedSE })
	out.Linear, out.LinearSE, df.Linear = pool(func(p *fit.Prediction) ([]float64, []float64) { return p.Linear, p.LinearSE })
	if err != nil {
		return nil, nil, err
	}
	for i := 0; i < n; i++ {
		best := 0
		for j := 0; j < J; j++ {
			v := out.Prob[i*J+j]
			if v > out.Prob[i*J+best] {
				best = j
			}
			if v < 0 {
				out.Negative[i] = true
			}
		}
		out.MostLikely[i] = best
		for _, pr := range preds {
			out.Negative[i] = out.Negative[i] || pr.Negative[i]
		}
	}
	return out, df, nil
}

// poolingParam is one pooled quantity in decisions.json.
func poolingParam(name string, s impute.Scalar) PoolingParam {
	return PoolingParam{Name: name, Estimate: s.Estimate, Within: s.Within, Between: s.Between, Total: s.Total,
		DF: finiteOrNull(s.DF), RIV: s.RIV, FMI: s.FMI}
}

// finiteOrNull is v, or nil (null in JSON) when it is infinite.
func finiteOrNull(v float64) *float64 {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return nil
	}
	return &v
}
