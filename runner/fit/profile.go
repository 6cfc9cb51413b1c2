package fit

import (
	"sync"
	"time"
)

// profile accumulates the time spent in the weighted cross-products.
type profile struct {
	mu    sync.Mutex
	cross time.Duration
}

func (p *profile) add(d time.Duration) {
	p.mu.Lock()
	p.cross += d
	p.mu.Unlock()
}

// IterationProfile is the cost of one Newton iteration of a model.
type IterationProfile struct {
	Iteration     time.Duration // assembly of score and information, the direction, and the evaluation at the step (log-likelihood with derivatives)
	CrossProducts time.Duration // the weighted cross-products U'WU inside it (with the weights they need)
	Parameters    int
}

// ProfileIteration measures one Newton iteration of model m on d at the
// starting values, averaged over reps, with the given number of workers.
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
	start := time.Now()
	for r := 0; r < reps; r++ {
		// One iteration: direction from the current derivatives, then the
		// step's log-likelihood with derivatives (what Newton does when the
		// full step is accepted).
		g := pr.gradient(theta, a)
		H := pr.hessian(theta, a, true)
		dir, _, _ := newtonDirection(H, g)
		a = pr.evaluate(addScaled(theta, dir, 1e-3), 2, false)
	}
	total := time.Since(start)
	return IterationProfile{Iteration: total / time.Duration(reps), CrossProducts: pr.prof.cross / time.Duration(reps), Parameters: len(theta)}, nil
}
