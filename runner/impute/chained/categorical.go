package chained

import (
	"math"
	"math/rand/v2"

	"ordplan/runner/fit"
)

// imputeColumn imputes column c of the current table once: its model's
// predictors from the current values of the other columns, the model
// fitted on the rows where c is observed, its parameters drawn, and the
// missing cells drawn from the drawn model.
func imputeColumn(cols []Column, cur [][]float64, c int, cfg Config, rng *rand.Rand, fb *fallbacks) {
	p := designFor(cols, cur, c)
	for _, n := range p.dropped {
		fb.dropped[n] = true
	}
	fb.fits++
	y := cols[c].Values
	var imp []float64
	switch m := methodOf(cols[c]); m {
	case MeanMatching, NormalDraw:
		ld, ok := linearModel(p, y, rng)
		switch {
		case !ok:
			fb.marginal++
			imp = observedDraw(p, y, rng)
		case m == MeanMatching:
			imp = meanMatching(p, y, ld, cfg.Donors, rng)
		default:
			imp = normalImpute(ld, rng)
		}
	default:
		imp = levelDraws(p, y, cols[c].Levels, m, rng, fb)
	}
	for r, i := range p.mis {
		cur[c][i] = imp[r]
	}
}

// levelDraws imputes a categorical or ordered column: the model (cumulative
// logit with parallel slopes for logistic and ordinal, the adjacent
// nonparallel logit, which is the multinomial logit, for multinomial) is
// fitted on the levels observed; when it has no finite maximum or does not
// converge it is refitted with weighted pseudo-observations; when even
// that fails, or no predictor is left, the levels are drawn from shares
// drawn from their posterior given the observed counts.
func levelDraws(p *predictors, y []float64, levels int, m Method, rng *rand.Rand, fb *fallbacks) []float64 {
	counts := make([]float64, levels)
	for _, i := range p.obs {
		counts[int(y[i])]++
	}
	var present []int // compact index -> level
	index := make([]int, levels)
	for l, n := range counts {
		index[l] = len(present)
		if n > 0 {
			present = append(present, l)
		}
	}
	out := make([]float64, len(p.mis))
	if len(present) == 1 {
		for r := range out {
			out[r] = float64(present[0])
		}
		return out
	}
	marginal := func() []float64 {
		alpha := make([]float64, len(present))
		for j, l := range present {
			alpha[j] = counts[l]
		}
		shares := dirichletDraw(rng, alpha)
		for r := range out {
			out[r] = float64(present[categoryDraw(rng, shares)])
		}
		return out
	}
	if len(p.names) == 0 {
		return marginal()
	}
	d := &fit.Data{Y: make([]int, len(p.obs)), J: len(present), X: p.xObs, Predictors: p.names}
	for r, i := range p.obs {
		d.Y[r] = index[int(y[i])]
	}
	model := levelModel(m, len(p.names))
	res := levelFit(d, model)
	if res == nil {
		fb.augmented++
		res = levelFit(augmented(d), model)
	}
	if res == nil {
		fb.marginal++
		return marginal()
	}
	drawn := *res
	drawn.Estimates = normalDraw(rng, res.Estimates, res.Cov)
	probs, err := drawn.Probabilities(p.xMis, nil)
	if err != nil {
		fb.marginal++
		return marginal()
	}
	J := len(present)
	for r := range out {
		out[r] = float64(present[categoryDraw(rng, probs[r*J:(r+1)*J])])
	}
	return out
}

// levelModel is the fitted model of a method with K predictors.
func levelModel(m Method, K int) fit.Model {
	effects := make([]fit.Effect, K)
	if m == Multinomial {
		for k := range effects {
			effects[k] = fit.Nonparallel
		}
		return fit.Model{Comparison: fit.Adjacent, Link: fit.Logit, Effects: effects}
	}
	return fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: effects}
}

// levelFit fits the model and returns it when it has a finite maximum,
// converged and has a covariance to draw from.
func levelFit(d *fit.Data, m fit.Model) *fit.Result {
	res, err := fit.Fit(d, m, fit.Options{Workers: 1, RandomStarts: -1})
	if err != nil || !res.OK() || res.Cov == nil {
		return nil
	}
	for _, v := range res.Estimates {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil
		}
	}
	return res
}

// augmented adds weighted pseudo-observations that keep the maximum
// finite under separation: for every predictor column and every category,
// two rows with that column at its mean plus and minus one SD (within its
// observed range) and the other columns at their means; together they
// weigh K + 1, against one per real row.
func augmented(d *fit.Data) *fit.Data {
	n, K, J := len(d.Y), len(d.Predictors), d.J
	mean, sd := make([]float64, K), make([]float64, K)
	lo, hi := make([]float64, K), make([]float64, K)
	for k := 0; k < K; k++ {
		lo[k], hi[k] = math.Inf(1), math.Inf(-1)
		for i := 0; i < n; i++ {
			v := d.X[i*K+k]
			mean[k] += v / float64(n)
			lo[k], hi[k] = min(lo[k], v), max(hi[k], v)
		}
		for i := 0; i < n; i++ {
			e := d.X[i*K+k] - mean[k]
			sd[k] += e * e / float64(n)
		}
		sd[k] = math.Sqrt(sd[k])
	}
	out := &fit.Data{J: J, Predictors: d.Predictors, Categories: d.Categories,
		Y: append([]int(nil), d.Y...), X: append([]float64(nil), d.X...), Weights: make([]float64, n)}
	for i := range out.Weights {
		out.Weights[i] = 1
	}
	w := float64(K+1) / float64(2*K*J)
	for k := 0; k < K; k++ {
		for j := 0; j < J; j++ {
			for _, sign := range []float64{-1, 1} {
				row := append([]float64(nil), mean...)
				row[k] = min(hi[k], max(lo[k], mean[k]+sign*sd[k]))
				out.X = append(out.X, row...)
				out.Y = append(out.Y, j)
				out.Weights = append(out.Weights, w)
			}
		}
	}
	return out
}
