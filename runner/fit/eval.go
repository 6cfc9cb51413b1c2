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
	// parInd is the number of indicator columns (design.group) that end
	// the parallel columns and are summed by group rather than held in the
	// block's columns (0: none, or they are held like any column).
	parInd  int
	prof    *profile  // optional timing of the cross-products
	scratch sync.Pool // *scratch, reused across evaluations
}

func newProblem(d *design, m Model, ly *layout, workers int) *problem {
	q := ly.J - 1
	p := &problem{d: d, model: m, ly: ly, q: q, workers: workers,
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
	for a := 0; a < q; a++ {
		for b := a; b < q; b++ {
			if p.ker.pairNeeded(a, b) {
				p.pairs = append(p.pairs, [2]int{a, b})
			}
		}
	}
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

func (a *acc) add(b *acc) {
	a.ll += b.ll
	a.minLP = math.Min(a.minLP, b.minLP)
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
	c := p.coefs(theta)
	nb := (p.d.n + blockRows - 1) / blockRows
	if nb == 0 {
		return p.newAcc(order)
	}
	parts := make([]*acc, nb)
	p.eachBlock(func(b, lo, hi int) {
		s, _ := p.scratch.Get().(*scratch)
		if s == nil {
			s = p.newScratch()
		}
		a := p.newAcc(order)
		p.block(c, lo, hi, order, expected, a, s)
		parts[b] = a
		p.scratch.Put(s)
	})
	total := parts[0]
	for _, a := range parts[1:] {
		total.add(a)
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
// predictors, first derivatives and weight vectors are column-major (one
// contiguous run of rows per column); hb holds each row's (J-1)x(J-1)
// second derivatives.
type scratch struct {
	uf, xp  []float64 // Kf x rows, Kp x rows
	eta, gs []float64 // q x rows: x'b + offset per equation; weighted dlogP/dL
	hb      []float64 // rows x q x q
	wt      []float64 // rows: the weights of one cross-product
	rl, ru  []float64 // q x rows: sum_m H_ml per equation l; Kf q x rows: those times the per-equation columns
	L, g, h []float64
	p       []float64
}

func (p *problem) newScratch() *scratch {
	kf, kp, q := len(p.freeCols), len(p.parCols), p.q
	rows := min(blockRows, max(p.d.n, 1))
	s := &scratch{
		uf: make([]float64, rows*kf), xp: make([]float64, rows*kp),
		eta: make([]float64, rows*q), gs: make([]float64, rows*q),
		hb: make([]float64, rows*q*q), wt: make([]float64, rows),
		L: make([]float64, q), g: make([]float64, q), h: make([]float64, q*q),
		p: make([]float64, q+1),
	}
	if kp > 0 {
		s.rl = make([]float64, rows*q)
		s.ru = make([]float64, rows*q*kf)
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
	p.blockLinear(c, lo, rows, s)
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

// blockColumns fills s.uf with the per-equation columns (Kf x rows) and
// s.xp with the parallel columns (Kp x rows) of the block, column by column.
func (p *problem) blockColumns(c *coefs, lo, rows int, s *scratch) {
	d := p.d
	w := d.width()
	x := d.x[lo*w : (lo+rows)*w]
	column := func(dst []float64, k int) {
		if k >= w {
			for i, g := range d.group[lo : lo+rows] {
				dst[i] = 0
				if g == k-w+1 {
					dst[i] = 1
				}
			}
			return
		}
		for i := range dst {
			dst[i] = x[i*w+k]
		}
	}
	for j, col := range p.freeCols {
		dst := s.uf[j*rows : (j+1)*rows]
		switch col.kind {
		case constantColumn:
			for i := range dst {
				dst[i] = 1
			}
		case predictorColumn:
			column(dst, col.index)
		default:
			buf := make([]float64, d.K)
			for i := range dst {
				dst[i] = col.value(d.row(lo+i, buf), p.ly.groups, c.gam)
			}
		}
	}
	for j, k := range p.parCols[:len(p.parCols)-p.parInd] {
		column(s.xp[j*rows:(j+1)*rows], k)
	}
}

// blockLinear fills s.eta (q x rows) with Uf Bf + (Xp bp + offset) 1', each
// sum in the order of its terms.
func (p *problem) blockLinear(c *coefs, lo, rows int, s *scratch) {
	q := p.q
	e := s.wt[:rows]
	clear(e)
	kp0 := len(c.bp) - p.parInd
	for j, b := range c.bp[:kp0] {
		axpy(e, b, s.xp[j*rows:(j+1)*rows])
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
	for m := 0; m < q; m++ {
		em := s.eta[m*rows : (m+1)*rows]
		clear(em)
		for a := range p.freeCols {
			if b := c.bf[a*q+m]; b != 0 {
				axpy(em, b, s.uf[a*rows:(a+1)*rows])
			}
		}
		addTo(em, e)
	}
}

// axpy adds b x to y.
func axpy(y []float64, b float64, x []float64) {
	x = x[:len(y)]
	for i := range y {
		y[i] += b * x[i]
	}
}

// blockKernels evaluates the row kernel of every row: it adds the weighted
// log-probabilities to a.ll, and keeps in s.gs the weighted first
// derivatives in L (q x rows, order >= 1) and in s.hb the weighted second
// derivatives (rows x q x q, order >= 2; expected ones when asked). It
// reports false when a row's observed category has a non-positive
// probability.
func (p *problem) blockKernels(c *coefs, lo, rows, order int, expected bool, a *acc, s *scratch) bool {
	d, q := p.d, p.q
	var g, h []float64
	if order >= 1 {
		g = s.g
	}
	if order >= 2 && !expected {
		h = s.h
	}
	gs := s.gs
	if p.ker.cmp == Cumulative && q == 1 && !expected {
		return p.binaryKernels(c, lo, rows, order, a, s)
	}
	for i := 0; i < rows; i++ {
		r := lo + i
		w := d.weight(r)
		for m := 0; m < q; m++ {
			s.L[m] = c.tau[m] - s.eta[m*rows+i]
		}
		if w == 0 {
			for m := 0; m < q; m++ {
				gs[m*rows+i] = 0
			}
			clear(s.hb[i*q*q : (i+1)*q*q])
			continue
		}
		lp, ok := p.ker.eval(s.L, d.y[r], g, h)
		if !ok {
			return false
		}
		a.ll += w * lp
		a.minLP = math.Min(a.minLP, lp)
		if order >= 1 {
			for m := 0; m < q; m++ {
				gs[m*rows+i] = w * g[m]
			}
		}
		if order >= 2 {
			hb := s.hb[i*q*q : (i+1)*q*q]
			if expected {
				p.ker.fisher(s.L, hb, s.g, s.p)
				for t := range hb {
					hb[t] = -w * hb[t]
				}
			} else {
				for t := range hb {
					hb[t] = w * h[t]
				}
			}
		}
	}
	return true
}

// binaryKernels is blockKernels for a cumulative model of two categories
// (one equation) with observed derivatives: the same values, computed
// straight from the link's tails (log F for the lower category,
// log(1 - F) for the upper) without the general kernel's dispatch.
func (p *problem) binaryKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	d, link, tau := p.d, p.ker.link, c.tau[0]
	y := d.y[lo : lo+rows]
	eta, gs, hb := s.eta[:rows], s.gs[:rows], s.hb[:rows]
	var w []float64
	if d.w != nil {
		w = d.w[lo : lo+rows]
	}
	for i, yi := range y {
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		if wi == 0 {
			gs[i], hb[i] = 0, 0
			continue
		}
		L := tau - eta[i]
		var t tail
		if yi == 0 {
			t = link.lower(L)
		} else {
			t = link.upper(L)
		}
		if math.IsInf(t.v, -1) || math.IsNaN(t.v) {
			return false
		}
		a.ll += wi * t.v
		a.minLP = math.Min(a.minLP, t.v)
		// As the general kernel forms them: 0 plus the tail's derivative.
		if order >= 1 {
			gs[i] = wi * (0 + t.d1)
		}
		if order >= 2 {
			hb[i] = wi * (0 + t.d2)
		}
	}
	return true
}

// blockScore adds the score pieces: V (q x Kf) += G' Uf and Vp += Xp' (G 1),
// G the weighted first derivatives of the rows.
func (p *problem) blockScore(lo, rows int, a *acc, s *scratch) {
	q := p.q
	kf, kp := len(p.freeCols), len(p.parCols)
	fullCross(a.V, kf, s.gs, q, s.uf, kf, rows, nil)
	if kp == 0 {
		return
	}
	sg := s.wt[:rows]
	copy(sg, s.gs[:rows])
	for m := 1; m < q; m++ {
		addTo(sg, s.gs[m*rows:(m+1)*rows])
	}
	kp0 := kp - p.parInd
	fullCross(a.Vp, kp, sg, 1, s.xp, kp0, rows, nil)
	if p.parInd > 0 {
		for i, g := range p.d.group[lo : lo+rows] {
			if g > 0 {
				a.Vp[kp0+g-1] += sg[i]
			}
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
	q, qq := p.q, p.q*p.q
	kf, kp := len(p.freeCols), len(p.parCols)
	wt := s.wt[:rows]
	for pi, pr := range p.pairs {
		ml := pr[0]*q + pr[1]
		for i := range wt {
			wt[i] = s.hb[i*qq+ml]
		}
		symCross(a.S[pi], kf, s.uf, kf, rows, wt)
	}
	if kp == 0 {
		return
	}
	for i := range wt {
		hb := s.hb[i*qq : (i+1)*qq]
		for l := 0; l < q; l++ {
			r := 0.0
			for m := 0; m < q; m++ {
				r += hb[m*q+l]
			}
			s.rl[l*rows+i] = r
		}
		t := 0.0
		for _, v := range hb {
			t += v
		}
		wt[i] = t
	}
	for l := 0; l < q; l++ {
		rl := s.rl[l*rows : (l+1)*rows]
		for j := 0; j < kf; j++ {
			ru := s.ru[(l*kf+j)*rows : (l*kf+j+1)*rows]
			u := s.uf[j*rows : (j+1)*rows]
			for i := range ru {
				ru[i] = rl[i] * u[i]
			}
		}
	}
	kp0 := kp - p.parInd
	fullCross(a.R, q*kf, s.xp, kp0, s.ru, q*kf, rows, nil)
	symCross(a.T, kp, s.xp, kp0, rows, wt)
	if p.parInd > 0 {
		p.indicatorInformation(lo, rows, kp0, a, s)
	}
}

// indicatorInformation adds the information pieces of the indicator
// columns, row by row into the rows of R and T of each row's group: the
// terms the cross-products of blockInformation would form with the
// indicators held as columns, in the same order (an indicator is 1 in its
// group, where its product is the other factor exactly, and 0 elsewhere,
// where it adds 0), so the sums are the same to the last bit.
func (p *problem) indicatorInformation(lo, rows, kp0 int, a *acc, s *scratch) {
	q, kf, kp := p.q, len(p.freeCols), len(p.parCols)
	wt := s.wt[:rows]
	for i, g := range p.d.group[lo : lo+rows] {
		if g == 0 {
			continue
		}
		j := kp0 + g - 1
		r := a.R[j*q*kf : (j+1)*q*kf]
		for c := range r {
			r[c] += s.ru[c*rows+i]
		}
		t := a.T[j*kp : j*kp+j+1]
		for b := 0; b < kp0; b++ {
			t[b] += wt[i] * s.xp[b*rows+i]
		}
		t[j] += wt[i]
	}
}
