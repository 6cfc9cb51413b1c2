package fit

import (
	"fmt"
	"hash/fnv"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// auxiliary holds the fits made once per call to build the starts.
type auxiliary struct {
	par     *Result // constrained predictors parallel (nil when screening)
	partial *Result // constrained predictors nonparallel (nil if no finite maximum)
	pLy     *layout // layout of the partial model (always set)
	sd      []float64
	sur     *surrogate
	base    []float64 // the parallel start: phi = 1, the rest from the parallel fit
	screen  bool      // screen starts on the approximation (large data)
	partM   Model     // the partial model
}

func auxModels(m Model) (par, partial Model) {
	par, partial = m, m
	par.Effects = make([]Effect, len(m.Effects))
	partial.Effects = make([]Effect, len(m.Effects))
	for k, e := range m.Effects {
		par.Effects[k], partial.Effects[k] = e, e
		if e == Constrained {
			par.Effects[k], partial.Effects[k] = Parallel, Nonparallel
		}
	}
	par.Groups, par.GroupNames, partial.Groups, partial.GroupNames = nil, nil, nil, nil
	return par, partial
}

func newAuxiliary(d *Data, m Model, ly *layout, opt Options, sh *shared) (*auxiliary, error) {
	parM, partM := auxModels(m)
	// The auxiliary fits keep the subsample threshold: a grid shares one
	// subsample and hands its partial fit over as this one (FitGrid).
	o := Options{MaxIter: opt.MaxIter, Workers: opt.Workers, SubsampleAbove: opt.SubsampleAbove}
	sd, m3 := sh.spread(d)
	a := &auxiliary{sd: sd, partM: partM}
	pLy, err := newLayout(partM, d.J, d.Predictors)
	if err != nil {
		return nil, err
	}
	a.pLy = pLy
	// Without a finite partial maximum there is no rank-1 start and no
	// approximation; that is not an error.
	if partial, err := sh.fit(d, partM, o); err == nil && partial.OK() {
		a.partial = partial
		if info, err := invertSym(partial.Cov, len(partial.Estimates)); err == nil {
			a.sur = &surrogate{rankMap: newRankMap(ly, pLy, m.Effects, nil), hat: partial.Estimates, info: info,
				peak: partial.LogLik, ratio: thirdOverSecond(m, d.J), shape: largestShape(m3, a.sd)}
		}
	}
	a.screen = a.sur != nil && d.N() > opt.screenAbove()
	if a.screen {
		// The parallel fit is replaced by its counterpart on the
		// approximation (phi = 1, the rest by generalized least squares).
		a.base = a.sur.parallelStart()
		return a, nil
	}
	par, err := sh.fit(d, parM, o)
	if err != nil {
		return nil, err
	}
	a.par = par
	a.base = a.parallelStart(d, m, ly)
	return a, nil
}

// predictorSD returns the (weighted) standard deviation of each predictor.
func predictorSD(d *Data) []float64 {
	return SpreadOf(d).SD()
}

// starts lists the starts in order: user, rank1, parallel, random.
func (a *auxiliary) starts(d *Data, m Model, ly *layout, opt Options) []startPoint {
	var out []startPoint
	if opt.Start != nil {
		out = append(out, startPoint{label: "user", kind: "user", theta: append([]float64(nil), opt.Start...)})
	}
	base := a.base
	if a.partial != nil {
		th, note := a.rank1Start(d, m, ly)
		out = append(out, startPoint{label: "rank1" + note, kind: "rank1", theta: th})
	}
	label := "parallel"
	if a.screen {
		label = "parallel (from the approximation)"
	}
	out = append(out, startPoint{label: label, kind: "parallel", theta: base})
	n := opt.RandomStarts
	if n == 0 {
		n = defaultRandomStarts
	}
	rng := rand.New(rand.NewPCG(seedOf(m, d), 0x6f7264706c616e))
	q := d.J - 1
	for i := 0; i < n; i++ {
		r := i % q
		th := a.randomStart(rng, r, base, ly)
		out = append(out, startPoint{label: fmt.Sprintf("random%d (drawn with phi[%d] = 1)", i+1, r+1), kind: "random", theta: th})
	}
	return out
}

// seedOf derives the random-start seed from the model and the predictor
// names, so that a given analysis always draws the same starts.
func seedOf(m Model, d *Data) uint64 {
	h := fnv.New64a()
	h.Write([]byte(m.Name()))
	h.Write([]byte(effectsString(m.Effects, d.Predictors)))
	for k := range m.Effects {
		fmt.Fprintf(h, "|%d", m.group(k))
	}
	return h.Sum64()
}

// parallelStart: phi = 1 and everything else from the parallel fit.
func (a *auxiliary) parallelStart(d *Data, m Model, ly *layout) []float64 {
	th := make([]float64, len(ly.params))
	r := a.par
	for j := 0; j < d.J-1; j++ {
		th[ly.cut[j]] = r.Cutpoints[j]
	}
	for k, e := range m.Effects {
		s := ly.slope[k]
		switch e {
		case Parallel, Constrained:
			th[s] = r.Effects[0][k]
		case Nonparallel:
			for j := 0; j < d.J-1; j++ {
				th[s+j] = r.Effects[j][k]
			}
		}
	}
	for g := range ly.groups {
		for j := 1; j < d.J-1; j++ {
			th[ly.phiIndex[g][j]] = 1
		}
	}
	return th
}

// rank1Start takes, for each group, the leading singular pair of the
// (J-1) x |group| slopes of the partial fit (columns scaled by the
// predictors' standard deviations), normalized so that phi_1 = 1. When the
// first equation's component is near zero it is moved to a small non-zero
// value, and the label says so.
func (a *auxiliary) rank1Start(d *Data, m Model, ly *layout) ([]float64, string) {
	q := d.J - 1
	th := make([]float64, len(ly.params))
	est := a.partial.Estimates
	for j := 0; j < q; j++ {
		th[ly.cut[j]] = est[a.pLy.cut[j]]
	}
	for k, e := range m.Effects {
		s, ps := ly.slope[k], a.pLy.slope[k]
		switch e {
		case Parallel:
			th[s] = est[ps]
		case Nonparallel:
			copy(th[s:s+q], est[ps:ps+q])
		}
	}
	note := ""
	for g, ks := range ly.groups {
		M := mat.NewDense(q, len(ks), nil)
		for t, k := range ks {
			for j := 0; j < q; j++ {
				M.Set(j, t, est[a.pLy.slope[k]+j]*a.sd[k])
			}
		}
		var svd mat.SVD
		u := make([]float64, q)
		v := make([]float64, len(ks))
		sigma := 0.0
		if svd.Factorize(M, mat.SVDThin) {
			var U, V mat.Dense
			svd.UTo(&U)
			svd.VTo(&V)
			sigma = svd.Values(nil)[0]
			for j := range u {
				u[j] = U.At(j, 0)
			}
			for t := range v {
				v[t] = V.At(t, 0)
			}
		} else {
			u[0] = 1
		}
		if math.Abs(u[0]) < 1e-3 {
			s := 1.0
			if u[0] < 0 {
				s = -1
			}
			u[0] = s * 1e-3
			note = " (equation-1 slopes near zero)"
		}
		for j := 1; j < q; j++ {
			th[ly.phiIndex[g][j]] = u[j] / u[0]
		}
		for t, k := range ks {
			th[ly.slope[k]] = sigma * u[0] * v[t] / a.sd[k]
		}
	}
	return th, note
}

// randomStart draws, for each group, phi' with phi'_r = 1 and the other
// components uniform on (-1, 3), and gamma' around the parallel slopes;
// the point phi' gamma' is then written in the phi_1 = 1 normalization.
func (a *auxiliary) randomStart(rng *rand.Rand, r int, base []float64, ly *layout) []float64 {
	q := ly.J - 1
	th := append([]float64(nil), base...)
	for g, ks := range ly.groups {
		ph := make([]float64, q)
		for j := range ph {
			ph[j] = 1
			if j != r {
				ph[j] = -1 + 4*rng.Float64()
			}
		}
		if math.Abs(ph[0]) < 0.1 {
			ph[0] = math.Copysign(0.1, ph[0])
		}
		for j := 1; j < q; j++ {
			th[ly.phiIndex[g][j]] = ph[j] / ph[0]
		}
		for _, k := range ks {
			s := ly.slope[k]
			gk := base[s]*(0.5+rng.Float64()) + 0.25*rng.NormFloat64()/a.sd[k]
			th[s] = ph[0] * gk
		}
	}
	return th
}

// validToward moves theta towards anchor until every observed category has
// a positive probability.
func (p *problem) validToward(theta, anchor []float64) []float64 {
	th := append([]float64(nil), theta...)
	for h := 0; h < 40; h++ {
		a := p.evaluate(th, 0, false)
		if !a.bad && !math.IsNaN(a.ll) && !math.IsInf(a.ll, 0) {
			return th
		}
		for i := range th {
			th[i] = 0.5 * (th[i] + anchor[i])
		}
	}
	return append([]float64(nil), anchor...)
}
