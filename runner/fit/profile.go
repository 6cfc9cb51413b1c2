package fit

import (
	"sync"
	"time"
)

// profile accumulates the time spent in the weighted cross-products and in
// the row kernels, read on the process's CPU clock.
type profile struct {
	mu          sync.Mutex
	cross, kern time.Duration
}

// cpuClock is the CPU time the process has used (user and system, all
// threads). With one worker it is the evaluation's own time, which other
// work on a shared machine does not lengthen as it does the wall clock.
func cpuClock() time.Duration { return CPUTime() }

func (p *profile) add(d time.Duration) {
	p.mu.Lock()
	p.cross += d
	p.mu.Unlock()
}

func (p *profile) addKernels(d time.Duration) {
	p.mu.Lock()
	p.kern += d
	p.mu.Unlock()
}

// IterationProfile is the cost of one Newton iteration of a model, in CPU
// time of the process (see ProfileIteration).
type IterationProfile struct {
	Iteration     time.Duration // assembly of score and information, the direction, and the evaluation at the step (log-likelihood with derivatives)
	CrossProducts time.Duration // the weighted cross-products U'WU inside it (with the weights they need)
	Kernels       time.Duration // the row kernels inside it: one pass, log-probabilities and their first and second derivatives in L
	// Reference is one weighted cross-product X'WX of the n x K design
	// alone (the rows read as the engine reads them, column-major blocks,
	// symCross), the yardstick of a parallel-effects iteration.
	Reference  time.Duration
	Parameters int
}

// ProfileIteration measures one Newton iteration of model m on d at the
// starting values, averaged over reps, with the given number of workers,
// on the process's CPU clock (with one worker: the iteration's own time).
// It is a measuring tool for benchmarks; fits never call it.
func ProfileIteration(d *Data, m Model, reps, workers int) (IterationProfile, error) {
	if err := d.validate(); err != nil {
		return IterationProfile{}, err
	}
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		return IterationProfile{}, err
	}
	pr := newProblem(d.design(), m, ly, workers)
	theta := make([]float64, len(ly.params))
	copy(theta, marginalCutpoints(d, m))
	for _, g := range ly.phiIndex {
		for _, i := range g {
			if i >= 0 {
				theta[i] = 1
			}
		}
	}
	for i, p := range ly.params {
		if p.kind == pGamma {
			theta[i] = 0.01
		}
	}
	if reps < 1 {
		reps = 1
	}
	a := pr.evaluate(theta, 2, false)
	pr.prof = &profile{}
	start := cpuClock()
	for r := 0; r < reps; r++ {
		// One iteration: direction from the current derivatives, then the
		// step's log-likelihood with derivatives (what Newton does when the
		// full step is accepted).
		g := pr.gradient(theta, a)
		H := pr.hessian(theta, a, true)
		dir, _, _ := newtonDirection(H, g)
		a = pr.evaluate(addScaled(theta, dir, 1e-3), 2, false)
	}
	total := cpuClock() - start
	start = cpuClock()
	for r := 0; r < reps; r++ {
		referenceCross(pr.d)
	}
	ref := cpuClock() - start
	per := func(d time.Duration) time.Duration { return d / time.Duration(reps) }
	return IterationProfile{Iteration: per(total), CrossProducts: per(pr.prof.cross), Kernels: per(pr.prof.kern), Reference: per(ref), Parameters: len(theta)}, nil
}

// referenceCross forms sum_i w_i x_i x_i' over the rows of d, block by
// block on one goroutine, as the engine reads them (the block's columns
// copied column-major, then symCross), with weights 1/(1+i mod 7) standing
// for a kernel's.
func referenceCross(d *design) []float64 {
	K := d.K
	rows := min(blockRows, max(d.n, 1))
	u := make([]float64, rows*K)
	w := make([]float64, rows)
	dst := make([]float64, K*K)
	buf := make([]float64, K)
	for lo := 0; lo < d.n; lo += blockRows {
		hi := min(lo+blockRows, d.n)
		n := hi - lo
		for i := 0; i < n; i++ {
			xi := d.row(lo+i, buf)
			for j, v := range xi {
				u[j*n+i] = v
			}
			w[i] = 1 / float64(1+(lo+i)%7)
		}
		symCross(dst, K, u[:n*K], K, n, w[:n])
	}
	mirrorLower(dst, K)
	return dst
}
