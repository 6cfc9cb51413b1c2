package fit

import (
	"math"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"
	"time"
)

// blockRows is the number of rows of one block of work. Blocks are summed in
// order, so results do not depend on the number of workers.
const blockRows = 4096

// rowsEvaluated counts the rows of every evaluation of a log-likelihood
// (RowsEvaluated).
var rowsEvaluated atomic.Int64

// rowsCrossed counts the rows of the evaluations that formed the
// cross-products of the design's columns (second order, evaluate).
var rowsCrossed atomic.Int64

// RowsEvaluated is the number of rows over which this process has
// evaluated a log-likelihood (with or without derivatives), summed over
// every evaluation: divided by a data set's rows, the number of passes over
// the data. Benchmarks read it to count the work of a fit.
func RowsEvaluated() int64 { return rowsEvaluated.Load() }

// design is the data of one fit, row-major, never expanded per equation.
type design struct {
	n, K int
	x    []float64 // n x (K - groups)
	y    []int     // 0..J-1
	w    []float64 // nil: all 1
	off  []float64 // nil: all 0
	mult []int     // rows merged into each row (compressed designs; nil: 1)
	// The last groups columns are indicators held as each row's group
	// (Data.ind): column K-groups+g-1 is 1 where group is g.
	group  []int
	groups int
	// cols, when not nil, holds x column-major as well (withColumns):
	// predictor k of rows lo..hi-1 is cols[k*n+lo:k*n+hi], so that a pass
	// over the data copies a block's columns, or reads them in place,
	// rather than transposing its rows.
	cols []float64
}

// withColumns is d with x's columns held column-major too (design.cols):
// the design the fits of a grid share (shared.design, shared.columns).
// The copy is made once, for the many passes of the fits over the rows.
func (d *design) withColumns() *design {
	c := *d
	w := d.width()
	c.cols = make([]float64, d.n*w)
	// In runs of rows whose values stay in the cache across the columns.
	const run = 512
	for lo := 0; lo < d.n; lo += run {
		hi := min(lo+run, d.n)
		for k := 0; k < w; k++ {
			dst := c.cols[k*d.n+lo : k*d.n+hi]
			for i := range dst {
				dst[i] = d.x[(lo+i)*w+k]
			}
		}
	}
	return &c
}

// heldColumns reports whether the predictors ks are all held column-major
// (cols; an indicator never is).
func (d *design) heldColumns(ks []int) bool {
	return d.cols != nil && !slices.ContainsFunc(ks, func(k int) bool { return k >= d.width() })
}

// column is predictor k's values in rows lo..lo+rows-1, read in place from
// cols.
func (d *design) column(k, lo, rows int) []float64 {
	return d.cols[k*d.n+lo : k*d.n+lo+rows]
}

// width is the number of columns x holds per row.
func (d *design) width() int { return d.K - d.groups }

// row returns the K predictor values of row i: the row of x itself, or
// buf (length K) filled with it and the indicators.
func (d *design) row(i int, buf []float64) []float64 {
	w := d.width()
	if d.groups == 0 {
		return d.x[i*w : (i+1)*w]
	}
	copy(buf, d.x[i*w:(i+1)*w])
	for g := 1; g <= d.groups; g++ {
		buf[w+g-1] = 0
	}
	if g := d.group[i]; g > 0 {
		buf[w+g-1] = 1
	}
	return buf[:d.K]
}

// rowsBehind is the number of original rows that row i stands for.
func (d *design) rowsBehind(i int) int {
	if d.mult == nil {
		return 1
	}
	return d.mult[i]
}

func (d *design) weight(i int) float64 {
	if d.w == nil {
		return 1
	}
	return d.w[i]
}

// problem binds a design, a model and its parameter layout.
type problem struct {
	d       *design
	model   Model
	ly      *layout
	ker     kernel
	q       int
	workers int

	parCols  []int    // predictor index of each parallel-type column
	freeCols []column // per-equation columns: the constant, predictors, then the z of each group
	freeOf   []int    // predictor -> its per-equation column (or -1)
	parOf    []int    // predictor -> its parallel column (or -1)
	pairs    [][2]int
	pairAt   []int // q x q: the index in pairs of (m, l), m <= l (-1: not needed)
	// parInd is the number of indicator columns (design.group) that end
	// the parallel columns and are summed by group rather than held in the
	// block's columns (0: none, or they are held like any column).
	parInd int
	parAt  []int     // 0, 1, ..., Kp-1: where gatherRows puts the parallel columns
	shape  pairShape // how pairs lie in a row's q x q second derivatives
	prof   *profile  // optional timing of the cross-products
	// first: the sums of an evaluation at one point, made otherwise
	// (firstSums); last: the last evaluation to second order (lastSums).
	first  *firstSums
	lastMu sync.Mutex
	last   *lastSums
	pools  *pools
}

// pools are what a problem's evaluations reuse, allocated apart from the
// problem and holding nothing of its design (putScratch): the runtime
// keeps a pool used since the last collection until the next one, which,
// were the pools fields of the problem, would keep the problem, its
// design and the design's copy of X alive one collection longer than the
// fit (the term tests' refits, each on a copy of X without the term's
// columns, then held two or three copies at once).
type pools struct {
	scratch sync.Pool // *scratch, reused across evaluations
	// parts: the sums of one block (*acc) by order, reused across
	// evaluations (blockAcc), so that a pass leaves one acc behind, not
	// one per block.
	parts [3]sync.Pool
}

// getScratch is a block's scratch: one an earlier block gave back, or a
// new one.
func (p *problem) getScratch() *scratch {
	if s, _ := p.pools.scratch.Get().(*scratch); s != nil {
		return s
	}
	return p.newScratch()
}

// putScratch gives s back for the next block, first dropping what it
// reads of the design in place (the parallel columns, the sources of a
// combination), which every block sets again before reading.
func (p *problem) putScratch(s *scratch) {
	s.xpv = s.xp
	clear(s.src[:cap(s.src)])
	p.pools.scratch.Put(s)
}

func newProblem(d *design, m Model, ly *layout, workers int) *problem {
	q := ly.J - 1
	p := &problem{d: d, model: m, ly: ly, q: q, workers: workers, pools: &pools{},
		ker: kernel{cmp: m.Comparison, backward: m.Backward, link: m.Link, nEq: q}}
	p.freeCols = []column{{kind: constantColumn}}
	p.freeOf = make([]int, d.K)
	p.parOf = make([]int, d.K)
	for k, e := range m.Effects {
		p.freeOf[k], p.parOf[k] = -1, -1
		if e == Parallel {
			p.parOf[k] = len(p.parCols)
			p.parCols = append(p.parCols, k)
		} else {
			p.freeOf[k] = len(p.freeCols)
			p.freeCols = append(p.freeCols, column{kind: predictorColumn, index: k})
		}
	}
	for g := range ly.groups {
		p.freeCols = append(p.freeCols, column{kind: groupColumn, index: g})
	}
	if d.groups > 0 && !slices.ContainsFunc(m.Effects[d.width():], func(e Effect) bool { return e != Parallel }) {
		p.parInd = d.groups
	}
	p.pairAt = make([]int, q*q)
	for a := 0; a < q; a++ {
		for b := 0; b < q; b++ {
			p.pairAt[a*q+b] = -1
			if b >= a && p.ker.pairNeeded(a, b) {
				p.pairAt[a*q+b] = len(p.pairs)
				p.pairs = append(p.pairs, [2]int{a, b})
			}
		}
	}
	p.parAt = upTo(len(p.parCols))
	p.shape = shapeOf(p.pairs, q)
	if p.workers <= 0 {
		p.workers = runtime.GOMAXPROCS(0)
	}
	return p
}

// acc holds the sums over rows of one evaluation.
type acc struct {
	ll    float64
	minLP float64 // smallest log-probability of an observed category (rows of positive weight)
	bad   bool
	V     []float64   // q x Kf: sum w g_m u_a
	Vp    []float64   // Kp: sum w (sum_m g_m) x_a
	S     [][]float64 // per pair: Kf x Kf
	R     []float64   // Kp x (q Kf): column l Kf + b weighted by sum_m H_ml
	T     []float64   // Kp x Kp, weight sum_ml H_ml
	order int
}

func (p *problem) newAcc(order int) *acc {
	kf, kp := len(p.freeCols), len(p.parCols)
	a := &acc{order: order, minLP: math.Inf(1)}
	if order >= 1 {
		a.V = make([]float64, p.q*kf)
		a.Vp = make([]float64, kp)
	}
	if order >= 2 {
		a.S = make([][]float64, len(p.pairs))
		for i := range a.S {
			a.S[i] = make([]float64, kf*kf)
		}
		if kp > 0 {
			a.R = make([]float64, kp*p.q*kf)
			a.T = make([]float64, kp*kp)
		}
	}
	return a
}

// blockAcc is an acc of the given order with every sum 0, as newAcc
// makes it: one that an earlier evaluation gave back (p.parts), cleared,
// or a new one.
func (p *problem) blockAcc(order int) *acc {
	a, _ := p.pools.parts[order].Get().(*acc)
	if a == nil {
		return p.newAcc(order)
	}
	a.ll, a.minLP, a.bad = 0, math.Inf(1), false
	clear(a.V)
	clear(a.Vp)
	for _, S := range a.S {
		clear(S)
	}
	clear(a.R)
	clear(a.T)
	return a
}

func (a *acc) add(b *acc) {
	a.ll += b.ll
	a.minLP = min(a.minLP, b.minLP)
	a.bad = a.bad || b.bad
	addTo(a.V, b.V)
	addTo(a.Vp, b.Vp)
	for i := range a.S {
		addTo(a.S[i], b.S[i])
	}
	addTo(a.R, b.R)
	addTo(a.T, b.T)
}

func addTo(dst, src []float64) {
	for i := range dst {
		dst[i] += src[i]
	}
}

// coefs holds, for the current theta, the slopes of per-equation columns
// and the parallel slopes, used to form L.
type coefs struct {
	tau []float64 // q
	bp  []float64 // Kp
	bf  []float64 // Kf x q (column a, equation m); the constant and z columns are 0
	gam [][]float64
	phi [][]float64
}

func (p *problem) coefs(theta []float64) *coefs {
	ly, q := p.ly, p.q
	c := &coefs{tau: make([]float64, q), bp: make([]float64, len(p.parCols)), bf: make([]float64, len(p.freeCols)*q)}
	for m := 0; m < q; m++ {
		c.tau[m] = theta[ly.cut[m]]
	}
	for d := range ly.groups {
		c.phi = append(c.phi, ly.phi(theta, d))
		g := make([]float64, len(ly.groups[d]))
		for i, k := range ly.groups[d] {
			g[i] = theta[ly.slope[k]]
		}
		c.gam = append(c.gam, g)
	}
	for k, e := range p.model.Effects {
		s := ly.slope[k]
		switch e {
		case Parallel:
			c.bp[p.parOf[k]] = theta[s]
		case Nonparallel:
			a := p.freeOf[k]
			for m := 0; m < q; m++ {
				c.bf[a*q+m] = theta[s+m]
			}
		case Constrained:
			a := p.freeOf[k]
			ph := c.phi[ly.groupOf[k]]
			for m := 0; m < q; m++ {
				c.bf[a*q+m] = ph[m] * theta[s]
			}
		}
	}
	return c
}

// evaluate sums log-likelihood (order 0), score pieces (1) and information
// pieces (2) over all rows; expected=true uses the expected information.
func (p *problem) evaluate(theta []float64, order int, expected bool) *acc {
	rowsEvaluated.Add(int64(p.d.n))
	if order >= 2 {
		rowsCrossed.Add(int64(p.d.n))
	}
	c := p.coefs(theta)
	nb := (p.d.n + blockRows - 1) / blockRows
	if nb == 0 {
		return p.newAcc(order)
	}
	parts := make([]*acc, nb)
	p.eachBlock(func(b, lo, hi int) {
		s := p.getScratch()
		a := p.blockAcc(order)
		p.block(c, lo, hi, order, expected, a, s)
		parts[b] = a
		p.putScratch(s)
	})
	total := parts[0]
	for _, a := range parts[1:] {
		total.add(a)
		p.pools.parts[order].Put(a)
	}
	if order >= 2 {
		for _, S := range total.S {
			mirrorLower(S, len(p.freeCols))
		}
		mirrorLower(total.T, len(p.parCols))
	}
	return total
}

// eachBlock runs f for every block of rows (b its index, rows lo..hi-1) on
// p.workers goroutines; f writes only into the slots of its block.
func (p *problem) eachBlock(f func(b, lo, hi int)) { forBlocks(p.d.n, p.workers, f) }

// forBlocks runs f for every block of blockRows rows of n (b its index,
// rows lo..hi-1) on workers goroutines (0: GOMAXPROCS); f writes only into
// the slots of its block, so what is summed over blocks in order does not
// depend on the workers.
func forBlocks(n, workers int, f func(b, lo, hi int)) {
	forEach((n+blockRows-1)/blockRows, workers, func(b int) {
		lo := b * blockRows
		f(b, lo, min(lo+blockRows, n))
	})
}

// forEach runs f(0), ..., f(count-1) on workers goroutines (0: GOMAXPROCS).
func forEach(count, workers int, f func(i int)) {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, count)
	var wg sync.WaitGroup
	next := make(chan int, count)
	for i := 0; i < count; i++ {
		next <- i
	}
	close(next)
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				f(i)
			}
		}()
	}
	wg.Wait()
}

// scratch is per-worker memory for one block. The block's columns, linear
// predictors, first and second derivatives and weight vectors are
// column-major (one contiguous run of rows per column), so that every
// phase reads and writes contiguous memory.
type scratch struct {
	uf, xp []float64 // Kf x rows, Kp x rows
	// xpv holds the parallel columns the cross-products read, xpStride
	// apart: xp (rows apart), or the design's own columns read in place
	// (design.cols, n apart; parallelInPlace).
	xpv      []float64
	xpStride int
	// eta holds x'b + offset per equation, q x rows; when no equation has
	// slopes of its own (parallel effects) the equations share one column,
	// etaStride 0 (else rows): equation m of row i is eta[m*etaStride+i].
	eta       []float64
	etaStride int
	gs        []float64 // q x rows: weighted dlogP/dL_m
	hp        []float64 // pairs x rows: weighted d2logP/dL_m dL_l of each pair the comparison needs
	wt        []float64 // rows: the weights of one cross-product
	rl, ru    []float64 // q x rows: sum_m H_ml per equation l; Kf q x rows: those times the per-equation columns
	L, g, h   []float64
	p         []float64
	sums      []float64   // pairs: the constant's information pieces of a block (pairSums)
	kt        []float64   // the logit kernels' per-row values between their sweeps (kernelTemp)
	ki        []int       // the logit kernels' lists of rows (kernelTemp)
	src       [][]float64 // the columns of one linear combination (combine)
	bs        []float64   // their coefficients
}

func (p *problem) newScratch() *scratch {
	kf, kp, q := len(p.freeCols), len(p.parCols), p.q
	rows := min(blockRows, max(p.d.n, 1))
	s := &scratch{
		uf: make([]float64, rows*kf), xp: make([]float64, rows*kp),
		eta: make([]float64, rows*q), gs: make([]float64, rows*q),
		hp: make([]float64, rows*len(p.pairs)), wt: make([]float64, rows),
		L: make([]float64, q), g: make([]float64, q), h: make([]float64, q*q),
		p: make([]float64, q+1), sums: make([]float64, len(p.pairs)),
	}
	if kp > 0 {
		s.rl = make([]float64, rows*q)
		if kf > 1 {
			s.ru = make([]float64, rows*q*kf)
		}
	}
	return s
}

// block adds the sums of rows lo..hi-1 to a, in phases: the block's
// columns, its linear predictors, the row kernels, then the score and
// information pieces (cross-products of the columns weighted by the
// kernels' derivatives). A row with a non-positive probability of its
// observed category makes the whole evaluation bad.
func (p *problem) block(c *coefs, lo, hi, order int, expected bool, a *acc, s *scratch) {
	rows := hi - lo
	p.blockColumns(c, lo, rows, s)
	p.blockLinear(c, lo, rows, order >= 1, s)
	var t0 time.Duration
	if p.prof != nil {
		t0 = cpuClock()
	}
	ok := p.blockKernels(c, lo, rows, order, expected, a, s)
	if p.prof != nil {
		p.prof.addKernels(cpuClock() - t0)
	}
	if !ok {
		a.bad = true
		a.ll = math.Inf(-1)
		return
	}
	if order < 1 {
		return
	}
	p.blockScore(lo, rows, a, s)
	if order < 2 {
		return
	}
	if p.prof != nil {
		t0 := cpuClock()
		defer func() { p.prof.add(cpuClock() - t0) }()
	}
	p.blockInformation(lo, rows, a, s)
}

// blockColumns fills s.uf with the per-equation columns (Kf x rows; the
// constant only when it is not the only one, since alone its sums are the
// weights' column sums) and s.xp with the parallel columns (Kp x rows) of
// the block; the predictors of x are copied from the design's columns
// (design.cols), or else in one sweep over the rows (gatherRows). The
// parallel columns are left to blockLinear when it reads them from the
// rows or the design's columns (parFromRows).
func (p *problem) blockColumns(c *coefs, lo, rows int, s *scratch) {
	d := p.d
	s.xpv, s.xpStride = s.xp, rows
	w := d.width()
	x := d.x[lo*w : (lo+rows)*w]
	var at, from []int // the predictors of x among the columns: where they go, where they are
	for j, col := range p.freeCols {
		dst := s.uf[j*rows : (j+1)*rows]
		switch col.kind {
		case constantColumn:
			// Read only by the cross-products of several per-equation
			// columns: the constant's own sums are column sums.
			if len(p.freeCols) > 1 {
				for i := range dst {
					dst[i] = 1
				}
			}
		case predictorColumn:
			if col.index < w && d.cols == nil {
				at, from = append(at, j), append(from, col.index)
			} else {
				p.column(dst, x, lo, col.index)
			}
		default:
			if ks := p.ly.groups[col.index]; d.heldColumns(ks) {
				// z = x'g summed in the order of the group, as value does
				// (x_k g_k and g_k x_k are the same product).
				src := s.src[:0]
				for _, k := range ks {
					src = append(src, d.column(k, lo, rows))
				}
				s.src = src
				combine(dst, c.gam[col.index], src)
				continue
			}
			buf := make([]float64, d.K)
			for i := range dst {
				dst[i] = col.value(d.row(lo+i, buf), p.ly.groups, c.gam)
			}
		}
	}
	if len(from) > 0 {
		gatherRows(s.uf, at, x, w, rows, from, nil, nil)
	}
	if p.parFromRows() {
		return
	}
	for j, k := range p.parCols[:len(p.parCols)-p.parInd] {
		p.column(s.xp[j*rows:(j+1)*rows], x, lo, k)
	}
}

// gatherRows copies the columns from of the block's rows x (row-major, w
// values a row, rows rows) into dst, column from[j] to dst[at[j]*rows:],
// eight rows at a time: each row is read once, and a column's values of the
// eight rows are one contiguous store. With e (rows values) it also forms
// each row's e_i = sum_j b_j x_i,from[j], the terms added to 0 in the
// order of from, as axpy over the columns would; with dst nil, only those
// (the columns not copied).
func gatherRows(dst []float64, at []int, x []float64, w, rows int, from []int, b, e []float64) {
	if dst != nil {
		at = at[:len(from)]
	}
	if e != nil {
		b = b[:len(from)]
	}
	i := 0
	for ; i+8 <= rows; i += 8 {
		r0 := x[i*w : (i+1)*w]
		r1 := x[(i+1)*w : (i+2)*w][:len(r0)]
		r2 := x[(i+2)*w : (i+3)*w][:len(r0)]
		r3 := x[(i+3)*w : (i+4)*w][:len(r0)]
		r4 := x[(i+4)*w : (i+5)*w][:len(r0)]
		r5 := x[(i+5)*w : (i+6)*w][:len(r0)]
		r6 := x[(i+6)*w : (i+7)*w][:len(r0)]
		r7 := x[(i+7)*w : (i+8)*w][:len(r0)]
		if e == nil {
			for j, k := range from {
				v := (*[8]float64)(dst[at[j]*rows+i:])
				v[0], v[1], v[2], v[3], v[4], v[5], v[6], v[7] = r0[k], r1[k], r2[k], r3[k], r4[k], r5[k], r6[k], r7[k]
			}
			continue
		}
		var e0, e1, e2, e3, e4, e5, e6, e7 float64
		for j, k := range from {
			bj := b[j]
			x0, x1, x2, x3 := r0[k], r1[k], r2[k], r3[k]
			x4, x5, x6, x7 := r4[k], r5[k], r6[k], r7[k]
			if dst != nil {
				v := (*[8]float64)(dst[at[j]*rows+i:])
				v[0], v[1], v[2], v[3], v[4], v[5], v[6], v[7] = x0, x1, x2, x3, x4, x5, x6, x7
			}
			e0 += bj * x0
			e1 += bj * x1
			e2 += bj * x2
			e3 += bj * x3
			e4 += bj * x4
			e5 += bj * x5
			e6 += bj * x6
			e7 += bj * x7
		}
		v := (*[8]float64)(e[i:])
		v[0], v[1], v[2], v[3], v[4], v[5], v[6], v[7] = e0, e1, e2, e3, e4, e5, e6, e7
	}
	for ; i < rows; i++ {
		r := x[i*w : (i+1)*w]
		var ei float64
		for j, k := range from {
			if dst != nil {
				dst[at[j]*rows+i] = r[k]
			}
			if e != nil {
				ei += b[j] * r[k]
			}
		}
		if e != nil {
			e[i] = ei
		}
	}
}

// upTo is 0, 1, ..., n-1.
func upTo(n int) []int {
	s := make([]int, n)
	for i := range s {
		s[i] = i
	}
	return s
}

// column fills dst with column k of the block's rows x (from row lo): a
// predictor, or a group's indicator.
func (p *problem) column(dst, x []float64, lo, k int) {
	d := p.d
	w := d.width()
	if k >= w {
		for i, g := range d.group[lo : lo+len(dst)] {
			dst[i] = 0
			if g == k-w+1 {
				dst[i] = 1
			}
		}
		return
	}
	if d.cols != nil {
		copy(dst, d.column(k, lo, len(dst)))
		return
	}
	for i := range dst {
		dst[i] = x[i*w+k]
	}
}

// parFromRows reports whether the parallel columns held in the blocks are
// all predictors of x (no indicator among them): then blockLinear copies
// them into the block and forms x'b in the same sweep (gatherRows), or
// forms x'b alone when no sum needs them as columns.
func (p *problem) parFromRows() bool {
	w := p.d.width()
	for _, k := range p.parCols[:len(p.parCols)-p.parInd] {
		if k >= w {
			return false
		}
	}
	return true
}

// parallelInPlace reports whether the cross-products read the parallel
// columns of the blocks in place from the design (design.cols): they are
// predictors (parFromRows) side by side there, in the order of the
// parallel columns.
func (p *problem) parallelInPlace() bool {
	kp0 := len(p.parCols) - p.parInd
	if p.d.cols == nil || kp0 == 0 || !p.parFromRows() {
		return false
	}
	for j, k := range p.parCols[:kp0] {
		if k != p.parCols[0]+j {
			return false
		}
	}
	return true
}

// blockLinear fills s.eta with Uf Bf + (Xp bp + offset) 1', each sum in the
// order of its terms; when no equation has slopes of its own, the
// equations share one column (s.etaStride 0). held asks for the parallel
// columns in s.xpv (the score's and the information's cross-products: s.xp,
// or the design's columns in place, parallelInPlace); without it, those
// read from the rows or the design's columns (parFromRows) are not copied.
func (p *problem) blockLinear(c *coefs, lo, rows int, held bool, s *scratch) {
	q := p.q
	// The shared sum goes straight to eta when it is all there is.
	shared := !slices.ContainsFunc(c.bf, func(b float64) bool { return b != 0 })
	e := s.wt[:rows]
	if shared {
		e = s.eta[:rows]
	}
	kp0 := len(c.bp) - p.parInd
	if p.parFromRows() && kp0 > 0 {
		// The parallel values go to their columns and into x'b in one
		// sweep over the rows, summed in the order of the columns as below.
		d := p.d
		w := d.width()
		x := d.x[lo*w : (lo+rows)*w]
		switch {
		case d.cols != nil:
			// Column by column, read in place; when held and not side by
			// side in the design, copied to the block's columns.
			copied := held && !p.parallelInPlace()
			src := s.src[:0]
			for j, k := range p.parCols[:kp0] {
				col := d.column(k, lo, rows)
				if copied {
					col = s.xp[j*rows : (j+1)*rows]
					copy(col, d.column(k, lo, rows))
				}
				src = append(src, col)
			}
			s.src = src
			combine(e, c.bp[:kp0], src)
			if held && !copied {
				k0 := p.parCols[0]
				s.xpv, s.xpStride = d.cols[k0*d.n+lo:(k0+kp0-1)*d.n+lo+rows], d.n
			}
		case held:
			gatherRows(s.xp, p.parAt, x, w, rows, p.parCols[:kp0], c.bp[:kp0], e)
		default:
			gatherRows(nil, nil, x, w, rows, p.parCols[:kp0], c.bp[:kp0], e)
		}
	} else {
		clear(e)
		for j, b := range c.bp[:kp0] {
			axpy(e, b, s.xp[j*rows:(j+1)*rows])
		}
	}
	if p.parInd > 0 {
		// An indicator adds its slope in the rows of its group (and 0, which
		// changes no sum, elsewhere).
		for i, g := range p.d.group[lo : lo+rows] {
			if g > 0 {
				e[i] += c.bp[kp0+g-1]
			}
		}
	}
	if p.d.off != nil {
		addTo(e, p.d.off[lo:lo+rows])
	}
	if shared {
		s.etaStride = 0
		return
	}
	s.etaStride = rows
	for m := 0; m < q; m++ {
		em := s.eta[m*rows : (m+1)*rows]
		src, bs := s.src[:0], s.bs[:0]
		for a := range p.freeCols {
			if b := c.bf[a*q+m]; b != 0 {
				src, bs = append(src, s.uf[a*rows:(a+1)*rows]), append(bs, b)
			}
		}
		s.src, s.bs = src, bs
		combine(em, bs, src)
		addTo(em, e)
	}
}

// combine sets y to the sum over j of b[j] x[j] (each x[j] at least as
// long as y), each y_i the terms added to 0 in the order of j, as axpy
// column after column would: the same bits, with y read and written once
// for four columns.
func combine(y, b []float64, x [][]float64) {
	clear(y)
	j := 0
	for ; j+4 <= len(x); j += 4 {
		axpy4(y, b[j], b[j+1], b[j+2], b[j+3], x[j], x[j+1], x[j+2], x[j+3])
	}
	if j+2 <= len(x) {
		axpy2(y, b[j], b[j+1], x[j], x[j+1])
		j += 2
	}
	if j < len(x) {
		axpy(y, b[j], x[j])
	}
}

// axpy adds b x to y.
func axpy(y []float64, b float64, x []float64) {
	x = x[:len(y)]
	for i := range y {
		y[i] += b * x[i]
	}
}

// axpy2 adds b0 x0, then b1 x1, to y.
func axpy2(y []float64, b0, b1 float64, x0, x1 []float64) {
	x0, x1 = x0[:len(y)], x1[:len(y)]
	for i, v := range y {
		y[i] = v + b0*x0[i] + b1*x1[i]
	}
}

// axpy4 adds b0 x0, b1 x1, b2 x2, then b3 x3, to y.
func axpy4(y []float64, b0, b1, b2, b3 float64, x0, x1, x2, x3 []float64) {
	x0, x1, x2, x3 = x0[:len(y)], x1[:len(y)], x2[:len(y)], x3[:len(y)]
	for i, v := range y {
		y[i] = v + b0*x0[i] + b1*x1[i] + b2*x2[i] + b3*x3[i]
	}
}

// blockKernels evaluates the row kernel of every row: it adds the weighted
// log-probabilities to a.ll, and keeps in s.gs the weighted first
// derivatives in L (q x rows, order >= 1) and in s.hp the weighted second
// derivatives of the pairs of equations the comparison needs (pairs x
// rows, order >= 2; expected ones when asked). It reports false when a
// row's observed category has a non-positive probability.
func (p *problem) blockKernels(c *coefs, lo, rows, order int, expected bool, a *acc, s *scratch) bool {
	d, q := p.d, p.q
	if p.ker.cmp == Cumulative && !expected {
		if p.ker.link == Logit {
			if q == 1 {
				return p.binaryKernels(c, lo, rows, order, a, s)
			}
			return p.cumulativeLogitKernels(c, lo, rows, order, a, s)
		}
		return p.cumulativeKernels(c, lo, rows, order, a, s)
	}
	if !expected {
		if ok, done := p.logitKernels(c, lo, rows, order, a, s); done {
			return ok
		}
		if p.ker.cmp == Stage || p.ker.cmp == stackedBinary {
			return p.stageKernels(c, lo, rows, order, a, s)
		}
		if p.ker.cmp == Adjacent && p.q < 16 {
			return p.adjacentKernels(c, lo, rows, order, a, s)
		}
	}
	var g, h []float64
	if order >= 1 {
		g = s.g
	}
	if order >= 2 {
		h = s.h
	}
	gs, hp, es := s.gs, s.hp, s.etaStride
	for i := 0; i < rows; i++ {
		r := lo + i
		w := d.weight(r)
		for m := 0; m < q; m++ {
			s.L[m] = c.tau[m] - s.eta[m*es+i]
		}
		if w == 0 {
			for m := 0; m < q; m++ {
				gs[m*rows+i] = 0
			}
			if order >= 2 {
				for pi := range p.pairs {
					hp[pi*rows+i] = 0
				}
			}
			continue
		}
		var hk []float64
		if !expected {
			hk = h
		}
		lp, ok := p.ker.eval(s.L, d.y[r], g, hk)
		if !ok {
			return false
		}
		a.ll += w * lp
		a.minLP = min(a.minLP, lp)
		if order >= 1 {
			for m := 0; m < q; m++ {
				gs[m*rows+i] = w * g[m]
			}
		}
		if order >= 2 {
			ww := w
			if expected {
				p.ker.fisher(s.L, h, s.g, s.p)
				ww = -w
			}
			for pi, pr := range p.pairs {
				hp[pi*rows+i] = ww * h[pr[0]*q+pr[1]]
			}
		}
	}
	return true
}

// cumulativeKernels is blockKernels for a cumulative model with observed
// derivatives: the same values as the general kernel, written straight
// into the block's columns. A row touches one or two equations: the
// link's tail for the first and last categories (log F for the lowest,
// log(1 - F) for the highest), kernel.between for the others.
func (p *problem) cumulativeKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	d, k, q, es := p.d, &p.ker, p.q, s.etaStride
	y := d.y[lo : lo+rows]
	tau, eta := c.tau, s.eta
	gs, hp := s.gs[:q*rows], s.hp[:len(p.pairs)*rows]
	if order >= 1 {
		clear(gs)
	}
	if order >= 2 {
		clear(hp)
	}
	var w []float64
	if d.w != nil {
		w = d.w[lo : lo+rows]
	}
	// hcol is the column of the second derivatives in L_m, L_l (m <= l).
	hcol := func(m, l int) []float64 { pi := p.pairAt[m*q+l]; return hp[pi*rows : (pi+1)*rows] }
	// The columns of the end categories' equations.
	g0, gq := gs[:rows], gs[(q-1)*rows:q*rows]
	var h0, hq []float64
	if order >= 2 {
		h0, hq = hcol(0, 0), hcol(q-1, q-1)
	}
	eta0, etaq := eta[:rows], eta[(q-1)*es:(q-1)*es+rows]
	for i, yi := range y {
		wi := weightOf(w, i)
		if wi == 0 {
			continue
		}
		if yi == 0 || yi == q {
			var t tail
			g, h := g0, h0
			if yi == 0 {
				t = k.link.lower(tau[0] - eta0[i])
			} else {
				t = k.link.upper(tau[q-1] - etaq[i])
				g, h = gq, hq
			}
			if math.IsInf(t.v, -1) || math.IsNaN(t.v) {
				return false
			}
			a.ll += wi * t.v
			a.minLP = min(a.minLP, t.v)
			// As the general kernel forms them: 0 plus the tail's derivative.
			if order >= 1 {
				g[i] = wi * (0 + t.d1)
			}
			if order >= 2 {
				h[i] = wi * (0 + t.d2)
			}
			continue
		}
		md, ok := k.between(tau[yi-1]-eta[(yi-1)*es+i], tau[yi]-eta[yi*es+i], order >= 1)
		if !ok {
			return false
		}
		a.ll += wi * md.lp
		a.minLP = min(a.minLP, md.lp)
		if order >= 1 {
			gs[yi*rows+i] = wi * md.rb
			gs[(yi-1)*rows+i] = wi * -md.ra
		}
		if order >= 2 {
			hcol(yi, yi)[i] = wi * md.hbb
			hcol(yi-1, yi-1)[i] = wi * md.haa
			hcol(yi-1, yi)[i] = wi * (md.ra * md.rb)
		}
	}
	return true
}

// stageKernels is blockKernels for a stage or stacked model under a link
// other than the logit with observed derivatives: the same values as the
// general kernel (kernel.tails), written straight into the block's
// columns, without a dense gradient and Hessian per row. A row's log
// probability is the sum of the log-tails of the equations
// kernel.tailRange gives, log(1 - F) below the row's category, log F
// from it on; each tail's derivatives go to its equation's column and
// its diagonal second derivative.
func (p *problem) stageKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	k, es := &p.ker, s.etaStride
	y := p.d.y[lo : lo+rows]
	gs, hp, w := p.kernelColumns(lo, rows, order, s)
	tau, eta := c.tau, s.eta
	for i, yi := range y {
		wi := weightOf(w, i)
		if wi == 0 {
			continue
		}
		m0, m1 := k.tailRange(yi)
		lp := 0.0
		for m := m0; m < m1; m++ {
			L := tau[m] - eta[m*es+i]
			var t tail
			if m < yi {
				t = k.link.upper(L)
			} else {
				t = k.link.lower(L)
			}
			lp += t.v
			// As the general kernel forms them: 0 plus the tail's
			// derivatives.
			if order >= 1 {
				gs[m*rows+i] = wi * (0 + t.d1)
			}
			if order >= 2 {
				hp[p.pairAt[m*p.q+m]*rows+i] = wi * (0 + t.d2)
			}
		}
		if math.IsInf(lp, -1) || math.IsNaN(lp) {
			return false
		}
		a.ll += wi * lp
		a.minLP = min(a.minLP, lp)
	}
	return true
}

// blockScore adds the score pieces: V (q x Kf) += G' Uf and Vp += Xp' (G 1),
// G the weighted first derivatives of the rows.
func (p *problem) blockScore(lo, rows int, a *acc, s *scratch) {
	q := p.q
	kf, kp := len(p.freeCols), len(p.parCols)
	if kf == 1 {
		// The constant alone: V is the sum of each equation's column.
		sumColumns(a.V, s.gs, rows)
	} else {
		fullCross(a.V, kf, s.gs, q, s.uf, kf, rows, nil)
	}
	if kp == 0 {
		return
	}
	sg := p.equationSums(rows, s)
	kp0 := kp - p.parInd
	fullCrossAt(a.Vp, kp, sg, rows, 1, s.xpv, s.xpStride, kp0, rows, nil)
	if p.parInd > 0 {
		p.indicatorScore(lo, rows, kp0, sg, a)
	}
}

// equationSums is the sum over the equations of each row's weighted first
// derivatives (in s.wt).
func (p *problem) equationSums(rows int, s *scratch) []float64 {
	sg := s.wt[:rows]
	copy(sg, s.gs[:rows])
	for m := 1; m < p.q; m++ {
		addTo(sg, s.gs[m*rows:(m+1)*rows])
	}
	return sg
}

// indicatorScore adds the score pieces of the indicator columns: each
// row's sg to its group's.
func (p *problem) indicatorScore(lo, rows, kp0 int, sg []float64, a *acc) {
	for i, g := range p.d.group[lo : lo+rows] {
		if g > 0 {
			a.Vp[kp0+g-1] += sg[i]
		}
	}
}

// blockInformation adds the information pieces, lower triangles of the
// symmetric ones: per-equation x per-equation blocks for each pair of
// equations the comparison needs (weights H_ml), the parallel x
// per-equation blocks of every equation l (weights sum_m H_ml, all l in one
// product), and the parallel x parallel block (weights sum_ml H_ml): the
// parallel columns enter one weighted cross-product, whatever the number
// of equations.
func (p *problem) blockInformation(lo, rows int, a *acc, s *scratch) {
	q := p.q
	kf, kp := len(p.freeCols), len(p.parCols)
	if kf == 1 {
		p.pairSums(rows, a, s)
	} else {
		for pi := range p.pairs {
			symCross(a.S[pi], kf, s.uf, kf, rows, s.hp[pi*rows:(pi+1)*rows])
		}
	}
	if kp == 0 {
		return
	}
	wt, ru := p.rowWeights(rows, s)
	kp0 := kp - p.parInd
	fullCrossAt(a.R, q*kf, s.xpv, s.xpStride, kp0, ru, rows, q*kf, rows, nil)
	symCrossAt(a.T, kp, s.xpv, s.xpStride, kp0, rows, wt)
	if p.parInd > 0 {
		p.indicatorInformation(lo, rows, kp0, ru, a, s)
	}
}

// indicatorInformation adds the information pieces of the indicator
// columns, row by row into the rows of R and T of each row's group: the
// terms the cross-products of blockInformation would form with the
// indicators held as columns, in the same order (an indicator is 1 in its
// group, where its product is the other factor exactly, and 0 elsewhere,
// where it adds 0), so the sums are the same to the last bit. The other
// parallel columns (predictors of x: parFromRows holds with indicators
// summed by group) are read from the rows, whether copied or not.
func (p *problem) indicatorInformation(lo, rows, kp0 int, ru []float64, a *acc, s *scratch) {
	q, kf, kp := p.q, len(p.freeCols), len(p.parCols)
	wt := s.wt[:rows]
	w := p.d.width()
	x, cols := p.d.x[lo*w:(lo+rows)*w], p.parCols[:kp0]
	for i, g := range p.d.group[lo : lo+rows] {
		if g == 0 {
			continue
		}
		j := kp0 + g - 1
		r := a.R[j*q*kf : (j+1)*q*kf]
		for c := range r {
			r[c] += ru[c*rows+i]
		}
		t := a.T[j*kp : j*kp+j+1]
		xi := x[i*w : (i+1)*w]
		for b, k := range cols {
			t[b] += wt[i] * xi[k]
		}
		t[j] += wt[i]
	}
}
