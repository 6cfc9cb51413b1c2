package fit

import (
	"math"
	"runtime"
	"sync"
	"time"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// blockRows is the number of rows of one block of work. Blocks are summed in
// order, so results do not depend on the number of workers.
const blockRows = 4096

// design is the data of one fit, row-major, never expanded per equation.
type design struct {
	n, K int
	x    []float64 // n x K
	y    []int     // 0..J-1
	w    []float64 // nil: all 1
	off  []float64 // nil: all 0
	mult []int     // rows merged into each row (compressed designs; nil: 1)
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
	prof     *profile  // optional timing of the cross-products
	scratch  sync.Pool // *scratch, reused across evaluations
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
	bad   bool
	V     []float64   // q x Kf: sum w g_m u_a
	Vp    []float64   // Kp: sum w (sum_m g_m) x_a
	S     [][]float64 // per pair: Kf x Kf
	R     [][]float64 // per equation l: Kp x Kf, weight sum_m H_ml
	T     []float64   // Kp x Kp, weight sum_ml H_ml
	order int
}

func (p *problem) newAcc(order int) *acc {
	kf, kp := len(p.freeCols), len(p.parCols)
	a := &acc{order: order}
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
			a.R = make([][]float64, p.q)
			for i := range a.R {
				a.R[i] = make([]float64, kp*kf)
			}
			a.T = make([]float64, kp*kp)
		}
	}
	return a
}

func (a *acc) add(b *acc) {
	a.ll += b.ll
	a.bad = a.bad || b.bad
	addTo(a.V, b.V)
	addTo(a.Vp, b.Vp)
	for i := range a.S {
		addTo(a.S[i], b.S[i])
	}
	for i := range a.R {
		addTo(a.R[i], b.R[i])
	}
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
	c := p.coefs(theta)
	n := p.d.n
	nb := (n + blockRows - 1) / blockRows
	if nb == 0 {
		return p.newAcc(order)
	}
	parts := make([]*acc, nb)
	workers := p.workers
	if workers > nb {
		workers = nb
	}
	var wg sync.WaitGroup
	next := make(chan int, nb)
	for b := 0; b < nb; b++ {
		next <- b
	}
	close(next)
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s, _ := p.scratch.Get().(*scratch)
			if s == nil {
				s = p.newScratch()
			}
			defer p.scratch.Put(s)
			for b := range next {
				lo := b * blockRows
				hi := min(lo+blockRows, n)
				a := p.newAcc(order)
				p.block(c, lo, hi, order, expected, a, s)
				parts[b] = a
			}
		}()
	}
	wg.Wait()
	total := parts[0]
	for _, a := range parts[1:] {
		total.add(a)
	}
	return total
}

// scratch is per-worker memory for one block.
type scratch struct {
	uf, xp, tmp, tmp2 []float64
	L, g, h, hb, p    []float64
	eta               []float64
}

func (p *problem) newScratch() *scratch {
	kf, kp, q := len(p.freeCols), len(p.parCols), p.q
	rows := min(blockRows, max(p.d.n, 1))
	return &scratch{
		uf: make([]float64, rows*kf), xp: make([]float64, rows*kp),
		tmp: make([]float64, rows*max(kf, kp)), tmp2: make([]float64, rows*q),
		L: make([]float64, q), g: make([]float64, q), h: make([]float64, q*q),
		hb: make([]float64, rows*q*q), p: make([]float64, q+1),
		eta: make([]float64, rows*q),
	}
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
	if !p.blockKernels(c, lo, rows, order, expected, a, s) {
		a.bad = true
		a.ll = math.Inf(-1)
		return
	}
	if order < 1 {
		return
	}
	p.blockScore(rows, a, s)
	if order < 2 {
		return
	}
	if p.prof != nil {
		t0 := time.Now()
		defer func() { p.prof.add(time.Since(t0)) }()
	}
	p.blockInformation(rows, a, s)
}

// blockColumns fills s.uf with the per-equation columns (rows x Kf) and
// s.xp with the parallel columns (rows x Kp) of the block.
func (p *problem) blockColumns(c *coefs, lo, rows int, s *scratch) {
	d := p.d
	kf, kp := len(p.freeCols), len(p.parCols)
	for i := 0; i < rows; i++ {
		xi := d.x[(lo+i)*d.K : (lo+i+1)*d.K]
		u := s.uf[i*kf : (i+1)*kf]
		for j, col := range p.freeCols {
			u[j] = col.value(xi, p.ly.groups, c.gam)
		}
		xr := s.xp[i*kp : (i+1)*kp]
		for j, k := range p.parCols {
			xr[j] = xi[k]
		}
	}
}

// blockLinear fills s.eta (rows x q) with Uf Bf + (Xp bp + offset) 1'.
func (p *problem) blockLinear(c *coefs, lo, rows int, s *scratch) {
	q := p.q
	kf, kp := len(p.freeCols), len(p.parCols)
	uf := blas64.General{Rows: rows, Cols: kf, Stride: kf, Data: s.uf[:rows*kf]}
	eta := blas64.General{Rows: rows, Cols: q, Stride: q, Data: s.eta[:rows*q]}
	blas64.Gemm(blas.NoTrans, blas.NoTrans, 1, uf, blas64.General{Rows: kf, Cols: q, Stride: q, Data: c.bf}, 0, eta)
	for i := 0; i < rows; i++ {
		e := 0.0
		xr := s.xp[i*kp : (i+1)*kp]
		for j := range xr {
			e += xr[j] * c.bp[j]
		}
		if p.d.off != nil {
			e += p.d.off[lo+i]
		}
		for m := 0; m < q; m++ {
			s.eta[i*q+m] += e
		}
	}
}

// blockKernels evaluates the row kernel of every row: it adds the weighted
// log-probabilities to a.ll, and keeps in s.tmp2 the weighted first
// derivatives in L (rows x q, order >= 1) and in s.hb the weighted second
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
	gs := s.tmp2[:rows*q]
	for i := 0; i < rows; i++ {
		r := lo + i
		w := d.weight(r)
		for m := 0; m < q; m++ {
			s.L[m] = c.tau[m] - s.eta[i*q+m]
		}
		if w == 0 {
			for m := 0; m < q; m++ {
				gs[i*q+m] = 0
			}
			for t := range s.hb[i*q*q : (i+1)*q*q] {
				s.hb[i*q*q+t] = 0
			}
			continue
		}
		lp, ok := p.ker.eval(s.L, d.y[r], g, h)
		if !ok {
			return false
		}
		a.ll += w * lp
		if order >= 1 {
			for m := 0; m < q; m++ {
				gs[i*q+m] = w * g[m]
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

// blockScore adds the score pieces: V (q x Kf) += G' Uf and Vp += Xp' (G 1),
// G the weighted first derivatives of the rows.
func (p *problem) blockScore(rows int, a *acc, s *scratch) {
	q := p.q
	kf, kp := len(p.freeCols), len(p.parCols)
	uf := blas64.General{Rows: rows, Cols: kf, Stride: kf, Data: s.uf[:rows*kf]}
	gs := s.tmp2[:rows*q]
	G := blas64.General{Rows: rows, Cols: q, Stride: q, Data: gs}
	blas64.Gemm(blas.Trans, blas.NoTrans, 1, G, uf, 1, blas64.General{Rows: q, Cols: kf, Stride: kf, Data: a.V})
	for i := 0; i < rows; i++ {
		sg := 0.0
		for m := 0; m < q; m++ {
			sg += gs[i*q+m]
		}
		xr := s.xp[i*kp : (i+1)*kp]
		for j := range xr {
			a.Vp[j] += sg * xr[j]
		}
	}
}

// blockInformation adds the information pieces: per-equation x
// per-equation blocks for each pair of equations the comparison needs,
// parallel x per-equation blocks weighted by sum_m H_ml, and the parallel x
// parallel block weighted by sum_ml H_ml.
func (p *problem) blockInformation(rows int, a *acc, s *scratch) {
	q := p.q
	kf, kp := len(p.freeCols), len(p.parCols)
	uf := blas64.General{Rows: rows, Cols: kf, Stride: kf, Data: s.uf[:rows*kf]}
	xp := blas64.General{Rows: rows, Cols: kp, Stride: max(kp, 1), Data: s.xp[:rows*kp]}
	tmp := s.tmp
	for pi, pr := range p.pairs {
		m, l := pr[0], pr[1]
		for i := 0; i < rows; i++ {
			wt := s.hb[i*q*q+m*q+l]
			u := s.uf[i*kf : (i+1)*kf]
			t := tmp[i*kf : (i+1)*kf]
			for j := range u {
				t[j] = wt * u[j]
			}
		}
		weightedCross(a.S[pi], uf, blas64.General{Rows: rows, Cols: kf, Stride: kf, Data: tmp[:rows*kf]})
	}
	if kp == 0 {
		return
	}
	for l := 0; l < q; l++ {
		for i := 0; i < rows; i++ {
			hb := s.hb[i*q*q : (i+1)*q*q]
			wt := 0.0
			for m := 0; m < q; m++ {
				wt += hb[m*q+l]
			}
			u := s.uf[i*kf : (i+1)*kf]
			t := tmp[i*kf : (i+1)*kf]
			for j := range u {
				t[j] = wt * u[j]
			}
		}
		weightedCross(a.R[l], xp, blas64.General{Rows: rows, Cols: kf, Stride: kf, Data: tmp[:rows*kf]})
	}
	for i := 0; i < rows; i++ {
		hb := s.hb[i*q*q : (i+1)*q*q]
		wt := 0.0
		for _, v := range hb {
			wt += v
		}
		xr := s.xp[i*kp : (i+1)*kp]
		t := tmp[i*kp : (i+1)*kp]
		for j := range xr {
			t[j] = wt * xr[j]
		}
	}
	weightedCross(a.T, xp, blas64.General{Rows: rows, Cols: kp, Stride: kp, Data: tmp[:rows*kp]})
}

// weightedCross adds A' B to dst (A.Cols x B.Cols, row-major).
func weightedCross(dst []float64, A, B blas64.General) {
	if A.Rows == 0 || A.Cols == 0 || B.Cols == 0 {
		return
	}
	blas64.Gemm(blas.Trans, blas.NoTrans, 1, A, B, 1, blas64.General{Rows: A.Cols, Cols: B.Cols, Stride: B.Cols, Data: dst})
}
