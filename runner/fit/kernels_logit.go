package fit

import "math"

// The row kernels of stage, stacked and adjacent models under the logit
// link with observed derivatives, written straight into the block's
// columns (as cumulativeKernels for cumulative models), and of binary
// logit models in sweeps over the block: the values of the general kernel
// (kernel.eval through blockKernels), bit for bit, without its per-row
// clearing of a dense gradient and Hessian and their copy into the columns
// (TestBlockKernelsAsGeneral).

// logitKernels reports whether blockKernels takes tailKernels or
// adjacentKernels, and runs it.
func (p *problem) logitKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) (ok, done bool) {
	if p.ker.link != Logit {
		return false, false
	}
	switch {
	case p.ker.cmp == Stage || p.ker.cmp == stackedBinary:
		return p.tailKernels(c, lo, rows, order, a, s), true
	case p.ker.cmp == Adjacent && p.q < 16:
		return p.adjacentKernels(c, lo, rows, order, a, s), true
	}
	return false, false
}

// kernelColumns clears the block's columns of first (order >= 1) and
// second (order >= 2) derivatives and returns them with the block's
// weights (nil: all 1).
func (p *problem) kernelColumns(lo, rows, order int, s *scratch) (gs, hp, w []float64) {
	gs, hp = s.gs[:p.q*rows], s.hp[:len(p.pairs)*rows]
	if order >= 1 {
		clear(gs)
	}
	if order >= 2 {
		clear(hp)
	}
	if p.d.w != nil {
		w = p.d.w[lo : lo+rows]
	}
	return gs, hp, w
}

// weightOf is the weight of row i of a block whose weights are w (nil:
// all 1).
func weightOf(w []float64, i int) float64 {
	if w == nil {
		return 1
	}
	return w[i]
}

// tailKernels is blockKernels for a stage or stacked model under the logit
// link with observed derivatives: per row the log-tails of the equations
// kernel.tailRange gives (one exponential each, one log1p for all), the
// first derivatives -F or 1 - F and the diagonal second derivatives
// -F (1 - F).
func (p *problem) tailKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	k, q, es := &p.ker, p.q, s.etaStride
	y := p.d.y[lo : lo+rows]
	gs, hp, w := p.kernelColumns(lo, rows, order, s)
	for i, yi := range y {
		wi := weightOf(w, i)
		if wi == 0 {
			continue
		}
		mlo, mhi := k.tailRange(yi)
		var t logitTails
		for m := mlo; m < mhi; m++ {
			pt := newLogitPoint(c.tau[m] - s.eta[m*es+i])
			upper := m < yi
			t.add(pt, upper)
			// As the general kernel forms them: 0 plus the derivative.
			if order >= 1 {
				d1 := pt.Fc
				if upper {
					d1 = -pt.F
				}
				gs[m*rows+i] = wi * (0 + d1)
			}
			if order >= 2 {
				hp[p.pairAt[m*q+m]*rows+i] = wi * (0 + -pt.F*pt.Fc)
			}
		}
		lp := t.sum()
		if math.IsInf(lp, -1) || math.IsNaN(lp) {
			return false
		}
		a.ll += wi * lp
		a.minLP = min(a.minLP, lp)
	}
	return true
}

// adjacentKernels is blockKernels for an adjacent model under the logit
// link with observed derivatives and fewer than 16 equations: per row
// adjacentProbs, the first derivatives 1 - C_m (m at or above the
// category) or -C_m, and the second derivatives -C_m (1 - C_l) of every
// pair m <= l.
func (p *problem) adjacentKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	q, es := p.q, s.etaStride
	y := p.d.y[lo : lo+rows]
	gs, hp, w := p.kernelColumns(lo, rows, order, s)
	var lbuf, sbuf, pbuf [16]float64
	L, sv, P := lbuf[:q], sbuf[:q+1], pbuf[:q+1]
	for i, yi := range y {
		wi := weightOf(w, i)
		if wi == 0 {
			continue
		}
		for m := range L {
			L[m] = c.tau[m] - s.eta[m*es+i]
		}
		lp, ok, C, U := adjacentProbs(L, yi, sv, P, order >= 1)
		if !ok {
			return false
		}
		a.ll += wi * lp
		a.minLP = min(a.minLP, lp)
		if order >= 1 {
			for m := range L {
				g := -C[m]
				if m >= yi {
					g = U[m]
				}
				gs[m*rows+i] = wi * g
			}
		}
		if order >= 2 {
			for pi, pr := range p.pairs {
				hp[pi*rows+i] = wi * -(C[pr[0]] * U[pr[1]])
			}
		}
	}
	return true
}

// binaryKernels is cumulativeKernels for a binary logit model, in three
// sweeps over the block so that the rows' exponentials and logarithms,
// which do not depend on one another, overlap: e^-|z| of every row (into
// the column of first derivatives), log1p of those (into the column of
// second derivatives), then each row's log-probability and derivatives
// from them, the values of Link.lower and Link.upper bit for bit.
func (p *problem) binaryKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	y := p.d.y[lo : lo+rows]
	eta := s.eta[:rows]
	tau := c.tau[0]
	ex, lg := s.gs[:rows], s.hp[:rows]
	for i, v := range eta {
		ex[i] = fastExp(-math.Abs(tau - v))
	}
	for i, e := range ex {
		lg[i] = fastLog1p(e)
	}
	var w []float64
	if p.d.w != nil {
		w = p.d.w[lo : lo+rows]
		w = w[:len(eta)]
	}
	y = y[:len(eta)]
	for i, yi := range y {
		wi := weightOf(w, i)
		e, l := ex[i], lg[i]
		ex[i], lg[i] = 0, 0
		if wi == 0 {
			continue
		}
		pt := logitPointOf(tau-eta[i], e)
		var lp, d1 float64
		if yi == 0 {
			lp, d1 = -l-max(-pt.z, 0), pt.Fc
		} else {
			lp, d1 = -l-max(pt.z, 0), -pt.F
		}
		if math.IsInf(lp, -1) || math.IsNaN(lp) {
			return false
		}
		a.ll += wi * lp
		a.minLP = min(a.minLP, lp)
		if order >= 1 {
			ex[i] = wi * (0 + d1)
		}
		if order >= 2 {
			lg[i] = wi * (0 + -pt.F*pt.Fc)
		}
	}
	return true
}

// kernelTemp returns n columns of rows values of the scratch's temporary
// memory, one after the other, and room for two lists of rows (not
// cleared).
func (s *scratch) kernelTemp(n, rows int) ([]float64, []int) {
	if len(s.kt) < n*rows {
		s.kt = make([]float64, n*rows)
	}
	if len(s.ki) < 2*rows {
		s.ki = make([]int, 2*rows)
	}
	return s.kt[:n*rows], s.ki[:2*rows]
}

// b2i is 1 for true, 0 for false (a flag, not a branch).
func b2i(c bool) int {
	var v int
	if c {
		v = 1
	}
	return v
}

// cumulativeLogitKernels is cumulativeKernels for a cumulative logit model
// of three or more categories, in sweeps over the block so that rows, which
// do not depend on one another, overlap, and so that no branch depends on
// a row's category or the signs of its boundaries: each row's two
// boundaries (the category's lower and upper one; the end categories' one
// boundary and its neighbour) and the rows sorted into lists of the
// lowest category, the highest and the middle ones; then per list the
// exponentials e^-|z| (one per boundary, shared by the probability and its
// derivatives), the log-probabilities (Link.lower's and Link.upper's
// log-tails, logitMiddle) and the derivatives; then the log-likelihood in
// the order of the rows: the values of the general kernel (kernel.eval)
// bit for bit.
func (p *problem) cumulativeLogitKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	q, es := p.q, s.etaStride
	y := p.d.y[lo : lo+rows]
	gs, hp, w := p.kernelColumns(lo, rows, order, s)
	t, lists := s.kernelTemp(5, rows)
	n := len(y)
	za, zb, ea, eb, lp := t[:n], t[n:2*n], t[2*n:3*n], t[3*n:4*n], t[4*n:5*n]
	// lists[:nlo] the lowest category, lists[n-nhi:n] the highest,
	// lists[n:n+nmid] the middle ones.
	nlo, nhi, nmid := 0, 0, 0
	tau, eta := c.tau[:q], s.eta
	for i, yi := range y {
		// max(yi - 1, 0) and min(yi, q - 1) by their sign bits
		ma, mb := (yi-1)&^((yi-1)>>63), yi+(q-1-yi)>>63
		za[i], zb[i] = tau[ma]-eta[ma*es+i], tau[mb]-eta[mb*es+i]
		if w != nil && w[i] == 0 {
			continue
		}
		low, high := b2i(yi == 0), b2i(yi == q)
		lists[nlo] = i
		lists[n-1-nhi] = i
		lists[n+nmid] = i
		nlo += low
		nhi += high
		nmid += 1 - low - high
	}
	expNegAbsTo(ea, za)
	expNegAbsTo(eb, zb)
	// Where the second derivatives of equation m (diag) and of m, m + 1
	// (next) start in hp.
	var buf [64]int
	cols := buf[:0]
	if 2*q > len(buf) {
		cols = make([]int, 0, 2*q)
	}
	for m := range q {
		cols = append(cols, p.pairAt[m*q+m]*rows)
	}
	for m := range q - 1 {
		cols = append(cols, p.pairAt[m*q+m+1]*rows)
	}
	diag, next := cols[:q], cols[q:2*q-1]
	// The end categories: one boundary, the tail below it (log F, the
	// lowest category) or above it; the derivatives as the general kernel
	// forms them, 0 plus the tail's.
	g0, h0 := gs[:rows], hp[diag[0]:diag[0]+rows]
	for _, i := range lists[:nlo] {
		pt := logitPointOf(zb[i], eb[i])
		lp[i] = pt.logF()
		wi := weightOf(w, i)
		if order >= 1 {
			g0[i] = wi * (0 + pt.Fc)
		}
		if order >= 2 {
			h0[i] = wi * (0 + -pt.F*pt.Fc)
		}
	}
	gq, hq := gs[(q-1)*rows:q*rows], hp[diag[q-1]:diag[q-1]+rows]
	for _, i := range lists[n-nhi : n] {
		pt := logitPointOf(za[i], ea[i])
		lp[i] = pt.logFc()
		wi := weightOf(w, i)
		if order >= 1 {
			gq[i] = wi * (0 + -pt.F)
		}
		if order >= 2 {
			hq[i] = wi * (0 + -pt.F*pt.Fc)
		}
	}
	for _, i := range lists[n : n+nmid] {
		pa, pb := logitPointOf(za[i], ea[i]), logitPointOf(zb[i], eb[i])
		if !(pb.z > pa.z) {
			return false
		}
		md, ok := logitMiddle(pa, pb)
		if !ok {
			return false
		}
		lp[i] = md.lp
		yi, wi := y[i], weightOf(w, i)
		if order >= 1 {
			gs[yi*rows+i] = wi * md.rb
			gs[(yi-1)*rows+i] = wi * -md.ra
		}
		if order >= 2 {
			hp[diag[yi]+i] = wi * md.hbb
			hp[diag[yi-1]+i] = wi * md.haa
			hp[next[yi-1]+i] = wi * (md.ra * md.rb)
		}
	}
	for i, v := range lp {
		wi := weightOf(w, i)
		if wi == 0 {
			continue
		}
		if math.IsInf(v, -1) || math.IsNaN(v) {
			return false
		}
		a.ll += wi * v
		a.minLP = min(a.minLP, v)
	}
	return true
}
