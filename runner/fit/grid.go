package fit

import (
	"fmt"
	"runtime"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
)

// shared is what the fits of one data set share: the rank check, the
// compressed design and its subsample (each made once), and fitted models that a model with
// constrained predictors would otherwise fit again to build its starts
// (its parallel and its partial counterpart: see auxModels).
type shared struct {
	rankOnce sync.Once
	rankSD   []float64
	rankMean []float64
	rankErr  error
	// base: sums of an earlier rank check of the same rows, which the
	// check takes X's sums from (LipsitzTest); sums: this check's.
	base, sums *rankSums
	// first: the sums of a refit's first evaluation at a given point, made
	// from the last of the fit it extends (LipsitzTest).
	first   *firstSums
	desOnce sync.Once
	des     *design
	subOnce sync.Once
	sub     *design
	sdOnce  sync.Once
	sd, m3  []float64 // spread
	mu      sync.Mutex
	fitted  map[string]gridFit // by modelKey, options of the auxiliary fits
	// columns: the design and its subsample hold their columns
	// column-major too (design.withColumns), a copy the size of X that
	// pays over the many passes of a grid's fits (FitGrid); a single fit
	// keeps its memory to X and transposes the rows of each block.
	columns bool
	// copied: the design's columns were copied (a second X held while the
	// grid runs; FitGrid collects after each fit).
	copied atomic.Bool
}

// collectAbove is the size of X, bytes, from which a grid holding a
// second copy of it collects after each fit (FitGrid): below it the
// memory at stake is a few megabytes, while a collection per fit costs
// wall time that many small grids (selection_stability's resamples, at
// some thousands of rows each) would add up: 14% on the example plan
// with 40 resamples.
const collectAbove = 32 << 20

// gridFit is a finished fit as a later fit may read it.
type gridFit struct {
	res *Result
	err error
}

// rank is d.checkRank, made once (it does not depend on the model).
func (sh *shared) rank(d *Data, workers int) ([]float64, error) {
	sh.rankOnce.Do(func() { sh.rankSD, sh.rankMean, sh.sums, sh.rankErr = d.checkRankMean(workers, sh.base) })
	return sh.rankSD, sh.rankErr
}

// centred is the data the fits of d run on: d itself, or d with the
// predictors far from zero centred (c, nil when none; see centreAbove),
// from the rank check made here (which the fits then share; on data it
// refuses, d, for the fits to report its error).
func (sh *shared) centred(d *Data, workers int) (*Data, *centring) {
	if _, err := sh.rank(d, workers); err != nil {
		return d, nil
	}
	c := centringOf(d, sh.rankMean, sh.rankSD)
	if c == nil {
		return d, nil
	}
	return c.data(d), c
}

// fitOuter is fitValid for a caller outside the fits of one data set,
// with starts and results in the data's units: on data centred by c
// (cd, see centred) the start is moved into centred coordinates and the
// result back; the fits inside (auxiliary fits, the starts a constrained
// model builds from them) stay in centred coordinates. keep, when not
// nil, is given the result as the fit made it (FitGrid's copies for the
// fits that build on it).
func (sh *shared) fitOuter(d, cd *Data, c *centring, m Model, opt Options, keep func(*Result, error)) (*Result, error) {
	if c != nil && opt.Start != nil {
		opt.Start = c.start(m, d.J, d.Predictors, opt.Start)
	}
	res, err := fitValid(cd, m, opt, sh)
	if keep != nil {
		keep(res, err)
	}
	if c != nil {
		c.restore(res)
	}
	return res, err
}

// design is d's compressed design, made once; in a grid (sh.columns) with
// its columns held column-major (withColumns), but for rows centred (a
// copy of X already: centring.data), not copied again so that the memory
// stays within three times X.
func (sh *shared) design(d *Data) *design {
	sh.desOnce.Do(func() {
		des := d.design()
		c := des.compressed()
		if sh.columns && (c != des || d.uncentred == nil) {
			c = c.withColumns()
			sh.copied.Store(true)
		}
		sh.des = c
	})
	return sh.des
}

// subsample is the fixed subsample of d's compressed design (nil on
// fewer rows than the options' SubsampleAbove), in a grid with its columns
// held column-major, made once: the fits of a grid share one Options.
func (sh *shared) subsample(d *Data, o Options) *design {
	sh.subOnce.Do(func() {
		sh.sub = sh.design(d).subsample(d.J, o.subsampleAbove())
		if sh.sub != nil && sh.columns {
			sh.sub = sh.sub.withColumns()
		}
	})
	return sh.sub
}

// spread is the predictors' standard deviations and third absolute
// central moments (spreadOf), made once (read, not written, by the fits
// that share them).
func (sh *shared) spread(d *Data) (sd, m3 []float64) {
	sh.sdOnce.Do(func() {
		s, m3 := spreadOf(d, true)
		sh.sd, sh.m3 = s.SD(), m3
	})
	return sh.sd, sh.m3
}

// fit is Fit of m on the valid data d with the options o of an auxiliary
// fit, or the same fit made earlier in the grid.
func (sh *shared) fit(d *Data, m Model, o Options) (*Result, error) {
	sh.mu.Lock()
	f, ok := sh.fitted[modelKey(m)]
	sh.mu.Unlock()
	if ok {
		return f.res, f.err
	}
	return fitValid(d, m, o, sh)
}

// keep records a grid's fit for the fits that start from it: a copy of
// the parts they read, so that what the caller does to res afterwards
// (such as replacing its covariance) does not reach them.
func (sh *shared) keep(m Model, res *Result, err error) {
	if res != nil {
		c := *res
		c.Estimates = slices.Clone(res.Estimates)
		c.Cov = slices.Clone(res.Cov)
		c.Cutpoints = slices.Clone(res.Cutpoints)
		c.Effects = make([][]float64, len(res.Effects))
		for j := range res.Effects {
			c.Effects[j] = slices.Clone(res.Effects[j])
		}
		res = &c
	}
	sh.mu.Lock()
	sh.fitted[modelKey(m)] = gridFit{res, err}
	sh.mu.Unlock()
}

// modelKey identifies a model's likelihood and parameter layout: the
// comparison and its direction, the link, each predictor's effect and,
// for constrained predictors, their groups.
func modelKey(m Model) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d/%t/%d/", m.Comparison, m.Backward && m.Comparison == Stage, m.Link)
	for k, e := range m.Effects {
		if e == Constrained {
			fmt.Fprintf(&b, "%d.%d,", e, m.group(k))
		} else {
			fmt.Fprintf(&b, "%d,", e)
		}
	}
	return b.String()
}

// FitGrid fits every model on d, up to workers fits at once, each with
// opt (opt.Workers goroutines over row blocks). The fits share the checks
// of the data and the compressed design; a model with constrained
// predictors whose partial counterpart (the constrained predictors
// nonparallel) is in the grid waits for that fit and builds its starts
// from it instead of fitting it again, so every result is the one Fit
// gives, bit for bit. Fits are started longest first (the critical path
// of these waits), so that the cores stay busy to the end. done is called
// once per model, from the goroutine that fitted it, as each fit ends.
func FitGrid(d *Data, models []Model, opt Options, workers int, done func(i int, res *Result, err error)) {
	// X's non-finite values: found by the rank check, shared by the fits.
	if err := d.validateRows(true); err != nil {
		for i := range models {
			done(i, nil, err)
		}
		return
	}
	sh := &shared{fitted: map[string]gridFit{}, columns: true}
	if 8*d.N()*d.width() >= limitAbove {
		defer holdGridLimit(gridBudget(d, workers))()
	}
	cd, c := sh.centred(d, opt.Workers)
	deps := gridDeps(d, models, opt)
	order := gridOrder(d, models, deps)
	// waiting[i]: the fits i still waits for; later[j]: the fits waiting for j.
	waiting := make([]int, len(models))
	later := make([][]int, len(models))
	for i, ds := range deps {
		waiting[i] = len(ds)
		for _, j := range ds {
			later[j] = append(later[j], i)
		}
	}
	var mu sync.Mutex
	cond := sync.NewCond(&mu)
	started := make([]bool, len(models))
	// next returns the first model in order that is ready, or -1 when none
	// is left to start; it waits while some are left but none is ready.
	next := func() int {
		mu.Lock()
		defer mu.Unlock()
		for {
			pending := false
			for _, i := range order {
				if started[i] {
					continue
				}
				pending = true
				if waiting[i] == 0 {
					started[i] = true
					return i
				}
			}
			if !pending {
				return -1
			}
			cond.Wait()
		}
	}
	var wg sync.WaitGroup
	for w := 0; w < max(workers, 1); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := next(); i >= 0; i = next() {
				var keep func(*Result, error)
				if len(later[i]) > 0 {
					keep = func(res *Result, err error) { sh.keep(models[i], res, err) }
				}
				res, err := sh.fitOuter(d, cd, c, models[i], opt, keep)
				mu.Lock()
				for _, j := range later[i] {
					waiting[j]--
				}
				cond.Broadcast()
				mu.Unlock()
				if (c != nil || sh.copied.Load()) && 8*d.N()*d.width() >= collectAbove {
					// The grid holds a second copy of X (the design's
					// columns, or the centred rows) for all its fits:
					// the collector, pacing from twice the live heap,
					// would let the fits' garbage pass a third X before
					// collecting. Collect what this fit left (the fits
					// waiting for it already free to start): no more
					// CPU, the big arrays hold no pointers to mark.
					runtime.GC()
				}
				done(i, res, err)
			}
		}()
	}
	wg.Wait()
}

// gridDeps lists, for each model, the models of the grid whose fits it
// builds its starts from: for a model with constrained predictors, its
// partial counterpart, and on data small enough that the starts are not
// screened its parallel counterpart. Only fits made with the options of
// the auxiliary fits are shared (the observed information, Newton-Raphson,
// no user start), so that the shared fit is the one the model would make.
func gridDeps(d *Data, models []Model, opt Options) [][]int {
	deps := make([][]int, len(models))
	if opt.Covariance != Observed || opt.Scoring || opt.Start != nil {
		return deps
	}
	index := map[string]int{}
	for i, m := range models {
		if _, dup := index[modelKey(m)]; !dup {
			index[modelKey(m)] = i
		}
	}
	for i, m := range models {
		if !slices.Contains(m.Effects, Constrained) {
			continue
		}
		par, partial := auxModels(m)
		want := []Model{partial}
		if d.N() <= opt.screenAbove() {
			want = append(want, par)
		}
		for _, a := range want {
			if j, ok := index[modelKey(a)]; ok && j != i {
				deps[i] = append(deps[i], j)
			}
		}
	}
	return deps
}

// gridOrder is the order in which the fits are started: by the cost of
// the longest chain of fits that starts with each (its own cost plus the
// most costly fit waiting for it), longest first, ties in grid order.
func gridOrder(d *Data, models []Model, deps [][]int) []int {
	cost := make([]float64, len(models))
	for i, m := range models {
		cost[i] = fitCost(d, m)
		if len(deps[i]) > 0 {
			cost[i] /= 2 // the partial fit it starts from is not repeated
		}
	}
	chain := slices.Clone(cost)
	for i := range models {
		for _, j := range deps[i] {
			chain[j] = max(chain[j], cost[j]+cost[i])
		}
	}
	order := make([]int, len(models))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		switch {
		case chain[a] > chain[b]:
			return -1
		case chain[a] < chain[b]:
			return 1
		}
		return 0
	})
	return order
}

// fitCost is a rough relative cost of fitting m, for ordering only: the
// row kernels grow with the equations a row's probability involves (all of
// them for the adjacent comparison), the cross-products with the
// per-equation columns, and a model with constrained predictors fits its
// partial counterpart and then searches from several starts.
func fitCost(d *Data, m Model) float64 {
	q := float64(d.J - 1)
	kernel := 1.0
	if m.Comparison == Adjacent {
		kernel = 1.6
	}
	free := 1.0
	for _, e := range m.Effects {
		if e != Parallel {
			free++
		}
	}
	c := kernel + 0.05*free*free*q/4
	if slices.Contains(m.Effects, Constrained) {
		c *= 2
	}
	return c
}
