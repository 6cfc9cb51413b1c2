package fit

import "math/rand/v2"

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
// iterations starting at theta0. ok is false when there is no subsample,
// or it or the full-data iterations from it do not converge.
func (p *problem) subsampleNewton(sub *design, theta0 []float64, opt Options) (st newtonState, ok bool) {
	if sub == nil {
		return st, false
	}
	sst := newProblem(sub, p.model, p.ly, p.workers).newton(theta0, opt.MaxIter, opt.Scoring)
	if !sst.converged {
		return st, false
	}
	st = p.newton(sst.theta, opt.MaxIter, opt.Scoring)
	return st, st.converged
}
