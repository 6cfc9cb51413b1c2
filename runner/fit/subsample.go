package fit

import (
	"math"
	"math/rand/v2"
	"slices"
)

// A fit on many rows without a start of the user's first maximizes the
// log-likelihood on a fixed subsample of the rows (one row drawn from each
// run of subsampleStride rows, with a fixed seed) and begins the Newton
// iterations on all rows there: the subsample's maximum lies within a few
// standard errors of the full data's, so the full-data iterations start
// in the quadratic region and need about two steps instead of four to
// five. The convergence rule on the full data is unchanged, so the result
// is the full data's maximum to the same tolerance. When the subsample
// lacks a category or does not converge, or the fit from its maximum does
// not converge or is not usable (no finite maximum), the fit runs from the
// usual start as if there were no subsample stage, so failures read
// exactly as they do without it.
const (
	// defaultSubsampleAbove is Options.SubsampleAbove when it is 0: the
	// number of rows (after merging repeated rows) from which the
	// subsample stage runs; below it, the subsample's iterations would
	// cost more than the full-data steps they save.
	defaultSubsampleAbove = 200_000
	// subsampleStride: the subsample has one row in subsampleStride.
	subsampleStride = 20
	// subsampleSeed fixes the rows drawn.
	subsampleSeed = 0x73756273616d706c
)

// subsample is the fixed subsample of the design's rows, whose outcome
// has J categories: in each run of subsampleStride rows one drawn at
// random, so that data sorted in any way are covered evenly. It is nil
// below above rows (never when above is negative), and when a category
// has no weight in the subsample (its cutpoints would have no maximum
// there).
func (d *design) subsample(J, above int) *design {
	if above < 0 || d.n < above {
		return nil
	}
	rng := rand.New(rand.NewPCG(subsampleSeed, uint64(d.n)))
	m := (d.n + subsampleStride - 1) / subsampleStride
	wd := d.width()
	s := &design{K: d.K, groups: d.groups, x: make([]float64, 0, m*wd), y: make([]int, 0, m)}
	if d.group != nil {
		s.group = make([]int, 0, m)
	}
	if d.w != nil {
		s.w = make([]float64, 0, m)
	}
	if d.off != nil {
		s.off = make([]float64, 0, m)
	}
	for lo := 0; lo < d.n; lo += subsampleStride {
		i := lo + rng.IntN(min(subsampleStride, d.n-lo))
		s.x = append(s.x, d.x[i*wd:(i+1)*wd]...)
		s.y = append(s.y, d.y[i])
		if d.group != nil {
			s.group = append(s.group, d.group[i])
		}
		if d.w != nil {
			s.w = append(s.w, d.w[i])
		}
		if d.off != nil {
			s.off = append(s.off, d.off[i])
		}
	}
	s.n = len(s.y)
	seen := make([]bool, J)
	for i, y := range s.y {
		seen[y] = seen[y] || s.weight(i) > 0
	}
	for _, ok := range seen {
		if !ok {
			return nil
		}
	}
	return s
}

// subsampleNewton runs the Newton iterations of p from the maximum on the
// subsample sub (model and layout those of p), the subsample's own
// iterations starting at theta0, after steps with the subsample's
// curvature (curvatureSteps). ok is false when there is no subsample, or it
// or the full-data iterations from it do not converge.
func (p *problem) subsampleNewton(sub *design, theta0 []float64, opt Options) (st newtonState, ok bool) {
	if sub == nil {
		return st, false
	}
	sst := newProblem(sub, p.model, p.ly, p.workers).newton(theta0, opt.MaxIter, opt.Scoring)
	if !sst.converged {
		return st, false
	}
	st = fromSubsample(p.evaluator(opt.Scoring), sst, p.d.totalWeight()/sub.totalWeight(), sub.n, opt.MaxIter)
	return st, st.converged
}

// fromSubsample runs the full-data Newton iterations (evaluations ev) from
// the subsample's maximum sst, after its curvature steps; scale is the
// full data's total weight over the subsample's, m the subsample's rows.
func fromSubsample(ev evalFunc, sst newtonState, scale float64, m, maxIter int) newtonState {
	theta, first := curvatureSteps(ev, sst, scale, m)
	return newtonLoop(theta, maxIter, reuseFirst(ev, theta, first))
}

// maxCurvatureSteps bounds the curvature steps before the Newton
// iterations.
const maxCurvatureSteps = 3

// curvatureSteps: the subsample's maximum lies a few standard errors from
// the full data's, too far for the convergence rule to begin there: its
// Newton decrement on the full data is about P (n/m - 1) for P parameters,
// n rows and m in the subsample, where the rule asks for 1e-6 |LL| before
// the last two steps. A pass over the data for the score alone, and a
// Newton step with the subsample's information scaled up to the full
// data's weight, shrink the decrement by about P/m (the squared relative
// error of that information); such steps are taken, each with a pass for
// the score, until the decrement they leave is predicted (with a margin)
// below 1e-6 |LL|. The Newton iterations then begin in that region and
// need two evaluations with second derivatives to converge and one for the
// last step, instead of three and one. Each step is kept only when it
// raises the log-likelihood; otherwise the iterations begin at the last
// point reached (the subsample's maximum at worst), as without the steps.
// first is the full-data evaluation at theta to second order, when made.
func curvatureSteps(ev evalFunc, sst newtonState, scale float64, m int) (theta []float64, first *evalOut) {
	theta = sst.theta
	a := ev(theta, 1)
	if a.bad || sst.hess == nil {
		return theta, nil
	}
	H := make([]float64, len(sst.hess))
	for i, v := range sst.hess {
		H[i] = scale * v
	}
	shrink := 1.5 * float64(len(theta)) / float64(m)
	prev := math.NaN()
	for k := 0; k < maxCurvatureSteps; k++ {
		d, dec, pd := newtonDirection(H, a.g)
		if !pd {
			return theta, nil
		}
		if k > 0 {
			// The shrinking observed, when slower than expected.
			shrink = math.Max(shrink, dec/prev)
		}
		prev = dec
		next := addScaled(theta, d, 1)
		last := shrink*dec <= 1e-6*math.Max(1, math.Abs(a.ll)) || k == maxCurvatureSteps-1
		order := 1
		if last {
			order = 2
		}
		b := ev(next, order)
		if b.bad || !(b.ll > a.ll) {
			return theta, nil
		}
		theta, a = next, b
		if last {
			return theta, &a
		}
	}
	return theta, nil
}

// reuseFirst is ev, except that its first call, when it asks for theta to
// at most the order of first, returns first (nil: none) without
// evaluating again.
func reuseFirst(ev evalFunc, theta []float64, first *evalOut) evalFunc {
	return func(th []float64, order int) evalOut {
		if f := first; f != nil {
			first = nil
			if order <= f.order && slices.Equal(th, theta) {
				return *f
			}
		}
		return ev(th, order)
	}
}

// totalWeight is the sum of the rows' weights.
func (d *design) totalWeight() float64 { return weightSum(d.w, d.n) }

// weightSum is the sum of the frequency weights w of n rows (nil: n).
func weightSum(w []float64, n int) float64 {
	if w == nil {
		return float64(n)
	}
	s := 0.0
	for _, v := range w {
		s += v
	}
	return s
}
