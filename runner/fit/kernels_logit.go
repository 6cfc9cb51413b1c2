package fit

import "math"

// The row kernels of stage, stacked and adjacent models under the logit
// link (adjacent ones under every link) with observed derivatives, written
// straight into the block's columns (as cumulativeKernels for cumulative
// models), and of binary logit models in sweeps over the block: the
// values of the general kernel (kernel.eval through blockKernels), bit for
// bit, without its per-row clearing of a dense gradient and Hessian and
// their copy into the columns (TestBlockKernelsAsGeneral).

// logitKernels reports whether blockKernels takes tailKernels, and runs
// it.
func (p *problem) logitKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) (ok, done bool) {
	if p.ker.link == Logit && (p.ker.cmp == Stage || p.ker.cmp == stackedBinary) {
		return p.tailKernels(c, lo, rows, order, a, s), true
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
// -F (1 - F). In sweeps over chunks of adjacentChunk rows (tailRows).
func (p *problem) tailKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	y := p.d.y[lo : lo+rows]
	gs, hp, w := p.kernelColumns(lo, rows, order, s)
	for off := 0; off < rows; off += adjacentChunk {
		n := min(adjacentChunk, rows-off)
		wn := ones[:n]
		if w != nil {
			wn = w[off : off+n]
		}
		if !p.tailRows(c, off, n, rows, order, y[off:off+n], wn, gs, hp, a, s) {
			return false
		}
	}
	return true
}

// tailRows is tailKernels for the n rows of the block (of rows rows) from
// off on, whose categories are y and weights w, so that only the
// equations a row enters take an exponential and no branch depends on a
// row's category: equation by equation, the list of the rows it enters
// (of weight other than 0; by index arithmetic) and their z = tau - eta,
// one after the other; e^-|z| of all of them in one loop (expTo); then
// equation by equation over its list, each row's share of its sums
// (logitTails.add, selected by pick) and derivatives; then each row's
// log1p and the log-likelihood in the order of the rows. Each row's sums
// take its equations in their order: the general kernel's values bit for
// bit.
func (p *problem) tailRows(c *coefs, off, n, rows, order int, y []int, w, gs, hp []float64, a *acc, s *scratch) bool {
	k, q, es := &p.ker, p.q, s.etaStride
	t, ix := s.kernelTemp(2*q+3, q+2, n)
	z, e := t[:q*n], t[q*n:2*q*n]
	sh, tt, lp := t[2*q*n:][:n], t[(2*q+1)*n:][:n], t[(2*q+2)*n:][:n]
	// Each row's equations: mlo[i] and the next neq[i] (none for a row of
	// weight 0).
	mlo, neq, list := ix[:n], ix[n:2*n], ix[2*n:]
	for i, yi := range y {
		lo, hi := k.tailRange(yi)
		mlo[i], neq[i] = lo, (hi-lo)&^-b2i(w[i] == 0)
	}
	// The lists: equation m's rows at list[start[m]:start[m+1]], their z
	// at the same places.
	var buf [17]int
	start := buf[:]
	if q >= len(buf) {
		start = make([]int, q+1)
	}
	cnt := 0
	for m := range q {
		start[m] = cnt
		eta, tau := s.eta[m*es+off:][:n], c.tau[m]
		cnt = tailList(list, z, cnt, mlo, neq, eta, tau, m)
	}
	start[q] = cnt
	expTo(e[:cnt], z[:cnt], true)
	clear(sh)
	clear(tt)
	for m := range q {
		b, f := start[m], start[m+1]
		var gm, hm []float64
		if order >= 1 {
			gm = gs[m*rows+off:][:n]
		}
		if order >= 2 {
			hm = hp[p.pairAt[m*q+m]*rows+off:][:n]
		}
		tailAdd(sh, tt, gm, hm, w, y, list[b:f], z[b:f], e[b:f], m)
	}
	for i, v := range tt {
		lp[i] = -sh[i] - fastLog1p(v)
	}
	for i, v := range lp {
		wi := w[i]
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

// tailList appends to list (from cnt on) the rows that enter equation m
// (mlo <= m < mlo + neq), and their z = tau - eta to z, without a branch;
// it returns the new count.
func tailList(list []int, z []float64, cnt int, mlo, neq []int, eta []float64, tau float64, m int) int {
	mlo, neq = mlo[:len(eta)], neq[:len(eta)]
	for i, v := range eta {
		list[cnt] = i
		z[cnt] = tau - v
		cnt += b2i(uint(m-mlo[i]) < uint(neq[i]))
	}
	return cnt
}

// tailAdd adds equation m's log-tail (logitTails.add) to the sums sh and
// tt of the rows of its list (with their z and e^-|z|), and sets their
// first derivatives (g: -F above the row's category, else 1 - F) and
// second derivatives (h: -F (1 - F)), each weighted by the row's weight,
// as the general kernel forms them (0 plus the derivative); nil g or h:
// not asked for.
func tailAdd(sh, tt, g, h, w []float64, y, list []int, z, e []float64, m int) {
	z, e = z[:len(list)], e[:len(list)]
	for j, i := range list {
		// logitPointOf, written out so that the loop makes no call.
		zj, ej := z[j], e[j]
		fa := 1 / (1 + ej)
		fb := ej * fa
		neg := zj < 0
		F, Fc := pick(neg, fb, fa), pick(neg, fa, fb)
		upper := m < y[i]
		// max(x, 0) of x = z or -z, as a selection: x itself above 0 and
		// for NaN, else +0.
		x := pick(upper, zj, -zj)
		sh[i] += pick(!(x <= 0), x, 0)
		tt[i] += ej + tt[i]*ej
		if g != nil {
			g[i] = w[i] * (0 + pick(upper, -F, Fc))
		}
		if h != nil {
			h[i] = w[i] * (0 + -F*Fc)
		}
	}
}

// adjacentKernels is blockKernels for an adjacent model with observed
// derivatives and fewer than 16 equations: adjacentProbs of every row, the
// first derivatives 1 - C_m (m at or above the category) or -C_m, and the
// second derivatives -C_m (1 - C_l) of every pair m <= l, under the logit
// link (psi_m = L_m); under the others those of psi_m (Link.psi) times
// psi's derivatives, as kernel.adjacent forms them. In sweeps over chunks
// of adjacentChunk rows (adjacentRows), so that the rows, which do not
// depend on one another, overlap and no branch depends on a row's values;
// the same sums in the same order as adjacentProbs: its values bit for
// bit.
func (p *problem) adjacentKernels(c *coefs, lo, rows, order int, a *acc, s *scratch) bool {
	var w []float64
	if p.d.w != nil {
		w = p.d.w[lo : lo+rows]
	}
	y := p.d.y[lo : lo+rows]
	for off := 0; off < rows; off += adjacentChunk {
		n := min(adjacentChunk, rows-off)
		wn := ones[:n]
		if w != nil {
			wn = w[off : off+n]
		}
		if !p.adjacentRows(c, off, n, rows, order, y[off:off+n], wn, a, s) {
			return false
		}
	}
	if order < 1 || w == nil {
		return true
	}
	// Rows of weight 0 contribute nothing (their columns were written).
	gs, hp := s.gs[:p.q*rows], s.hp[:len(p.pairs)*rows]
	if order < 2 {
		hp = nil
	}
	for i, wi := range w {
		if wi != 0 {
			continue
		}
		for m := range p.q {
			gs[m*rows+i] = 0
		}
		for pi := range len(hp) / rows {
			hp[pi*rows+i] = 0
		}
	}
	return true
}

// adjacentChunk is the number of rows adjacentKernels takes through its
// sweeps at once: its columns (2q + 4 of them) stay in the first-level
// cache.
const adjacentChunk = 256

// ones are the weights of adjacentChunk rows of weight 1: x times 1 is x,
// as the general kernel's weight of 1 times its value.
var ones = func() (o [adjacentChunk]float64) {
	for i := range o {
		o[i] = 1
	}
	return o
}()

// adjacentRows is adjacentKernels for the n rows of the block (of rows
// rows) from off on, whose categories are y and weights w, in phases over
// the rows, each one sweep per category or equation (small loops of their
// own, so that the compiler keeps each one's values in registers):
//   - the category scores s_j = s_(j+1) + L_j summed from the top and
//     top, the highest category whose score is larger than every score
//     above it (adjacentProbs' search, a selection instead of a branch);
//   - the scores relative to top, t_j, summed again from top downward and
//     upward (adjacentProbs' sums, each row's own selected);
//   - e^(t_j) of every row and category in one loop (expTo), their sums
//     in the order of the categories, the logarithms, log P = t_c - log sum;
//   - the log-likelihood in the order of the rows;
//   - the probabilities P_j/sum, C_m and U_m = 1 - C_m summed from the side
//     of each, the first and second derivatives.
func (p *problem) adjacentRows(c *coefs, off, n, rows, order int, y []int, w []float64, a *acc, s *scratch) bool {
	q, es := p.q, s.etaStride
	logit := p.ker.link == Logit
	nt := 2*q + 4
	if !logit {
		nt += 3 * q
	}
	t, top := s.kernelTemp(nt, 1, n)
	top = top[:n]
	T, P := t[:(q+1)*n], t[(q+1)*n:2*(q+1)*n]
	S, lg := t[2*(q+1)*n:][:n], t[(2*q+3)*n:][:n]
	tau := c.tau[:q]
	col := func(v []float64, j int) []float64 { return v[j*n : (j+1)*n] }
	eta := func(m int) []float64 { return s.eta[m*es+off:][:n] }
	var D1, D2 []float64
	if !logit {
		// Under the other links the sweeps below take psi_m in place of
		// L_m = tau_m - eta_m: its negative as eta and 0 as tau, 0 - (-psi)
		// being psi (+0 for -0, which the sums, never -0 themselves, add
		// and subtract as +0), and psi's derivatives.
		ng := t[(2*q+4)*n:][:q*n]
		D1, D2 = t[(3*q+4)*n:][:q*n], t[(4*q+4)*n:][:q*n]
		for m := range q {
			psiTo(col(ng, m), col(D1, m), col(D2, m), eta(m), tau[m], p.ker.link)
		}
		tau = zeroTau[:q]
		eta = func(m int) []float64 { return col(ng, m) }
	}
	// The scores from the top (s_q = 0) and the first largest (in lg).
	clear(S)
	clear(lg)
	for i := range top {
		top[i] = q
	}
	for j := q - 1; j >= 0; j-- {
		adjacentTop(S, lg, top, eta(j), tau[j], j)
	}
	// t_j: 0 at top, t_(j+1) + L_j below it, t_(j-1) - L_(j-1) above it.
	clear(col(T, q))
	for j := q - 1; j >= 0; j-- {
		adjacentBelow(col(T, j), col(T, j+1), eta(j), top, tau[j], j)
	}
	for j := 1; j <= q; j++ {
		adjacentAbove(col(T, j), col(T, j-1), eta(j-1), top, tau[j-1], j)
	}
	// e^(t_j), their sums (0 + P_0 is P_0: P_0 >= +0) and logarithms.
	expTo(P, T, false)
	copy(S, col(P, 0))
	for j := 1; j <= q; j++ {
		sumTo(S, S, col(P, j))
	}
	for i, v := range S {
		lg[i] = T[y[i]*n+i] - fastLog(v)
	}
	if !addLogLik(a, lg, w) {
		return false
	}
	if order < 1 {
		return true
	}
	// P_j/sum; C_m = P_0 + ... + P_m (into T, m < q) and U_m = P_q + ...
	// + P_(m+1) (into P at m + 1), each 0 plus its first term exactly.
	for j := 0; j <= q; j++ {
		divTo(col(P, j), S)
	}
	copy(col(T, 0), col(P, 0))
	for m := 1; m < q; m++ {
		sumTo(col(T, m), col(T, m-1), col(P, m))
	}
	for m := q - 2; m >= 0; m-- {
		sumTo(col(P, m+1), col(P, m+2), col(P, m+1))
	}
	C, U := T[:q*n], P[n:(q+1)*n]
	if !logit {
		for m := range q {
			psiFirst(s.gs[m*rows+off:][:n], w, col(C, m), col(U, m), col(D1, m), y, m)
		}
		if order >= 2 {
			for pi, pr := range p.pairs {
				m, l := pr[0], pr[1]
				psiSecond(s.hp[pi*rows+off:][:n], w, col(C, m), col(U, l), col(D1, m), col(D1, l), col(D2, m), col(U, m), y, m, l)
			}
		}
		return true
	}
	for m := range q {
		adjacentFirst(s.gs[m*rows+off:][:n], w, col(C, m), col(U, m), y, m)
	}
	if order >= 2 {
		for pi, pr := range p.pairs {
			adjacentSecond(s.hp[pi*rows+off:][:n], w, col(C, pr[0]), col(U, pr[1]))
		}
	}
	return true
}

// zeroTau are the 0 cutpoints adjacentRows takes with -psi as eta.
var zeroTau [16]float64

// psiTo sets ng to -psi (Link.psi) of L = tau - eta and d1, d2 to psi's
// derivatives.
func psiTo(ng, d1, d2, eta []float64, tau float64, l Link) {
	ng, d1, d2 = ng[:len(eta)], d1[:len(eta)], d2[:len(eta)]
	for i, v := range eta {
		ps, a, b := l.psi(tau - v)
		ng[i], d1[i], d2[i] = -ps, a, b
	}
}

// psiFirst sets the first derivatives of equation m under a link other
// than the logit, w times psi' U_m (m at or above the row's category y) or
// psi' (-C_m), as kernel.adjacent forms them. Plain products where
// kernel.adjacent takes mulZero: psi's derivatives are finite here
// (Link.psi clamps them; a NaN z fails the row's log-likelihood first, in
// addLogLik) and C and U lie in [0, 1], so 0 times anything is 0 already,
// its sign made +0 as mulZero gives it by adding it to 0 (0 + x is x for
// any other x); without the branches the sweeps take about a tenth less
// CPU.
func psiFirst(g, w, cm, um, d1 []float64, y []int, m int) {
	g, w, cm, um, d1 = g[:len(y)], w[:len(y)], cm[:len(y)], um[:len(y)], d1[:len(y)]
	for i, yi := range y {
		g[i] = w[i] * (0 + float64(d1[i]*pick(m >= yi, um[i], -cm[i])))
	}
}

// psiSecond sets the second derivatives of a pair m <= l under a link
// other than the logit, as kernel.adjacent forms them: w times -(C_m U_l)
// psi_m' psi_l', plus on the diagonal psi_m” times the first derivative's
// factor (U_m, m at or above the row's category y, or -C_m); plain
// products, as in psiFirst.
func psiSecond(h, w, cm, ul, d1m, d1l, d2m, um []float64, y []int, m, l int) {
	h, w, cm, ul, d1m, d1l = h[:len(y)], w[:len(y)], cm[:len(y)], ul[:len(y)], d1m[:len(y)], d1l[:len(y)]
	d2m, um = d2m[:len(y)], um[:len(y)]
	for i, yi := range y {
		// float64(): each product rounded before it is added, as the
		// general kernel's are (no fused multiply-add).
		v := -float64((cm[i] * ul[i]) * d1m[i] * d1l[i])
		if m == l {
			h[i] = w[i] * ((0 + float64(d2m[i]*pick(m >= yi, um[i], -cm[i]))) + v)
		} else {
			h[i] = w[i] * (0 + v)
		}
	}
}

// adjacentTop adds L_j = tau - eta to the rows' scores S (summed from the
// top) and makes j the rows' top where the score is larger than mx, the
// largest above it (then the score).
func adjacentTop(S, mx []float64, top []int, eta []float64, tau float64, j int) {
	S, mx, top = S[:len(eta)], mx[:len(eta)], top[:len(eta)]
	for i, v := range eta {
		sj := S[i] + (tau - v)
		S[i] = sj
		up := sj > mx[i]
		mx[i] = pick(up, sj, mx[i])
		if up {
			top[i] = j
		}
	}
}

// adjacentBelow sets t_j = t_(j+1) + L_j (next: t_(j+1)) for rows whose
// top is above j, else 0.
func adjacentBelow(cur, next, eta []float64, top []int, tau float64, j int) {
	cur, next, top = cur[:len(eta)], next[:len(eta)], top[:len(eta)]
	for i, v := range eta {
		cur[i] = pick(j < top[i], next[i]+(tau-v), 0)
	}
}

// adjacentAbove sets t_j = t_(j-1) - L_(j-1) (prev: t_(j-1); tau and eta:
// equation j - 1's) for rows whose top is below j, and leaves it else.
func adjacentAbove(cur, prev, eta []float64, top []int, tau float64, j int) {
	cur, prev, top = cur[:len(eta)], prev[:len(eta)], top[:len(eta)]
	for i, v := range eta {
		cur[i] = pick(j > top[i], prev[i]-(tau-v), cur[i])
	}
}

// adjacentFirst sets the first derivatives of equation m, w times U_m
// (m at or above the row's category y) or -C_m.
func adjacentFirst(g, w, cm, um []float64, y []int, m int) {
	g, w, cm, um = g[:len(y)], w[:len(y)], cm[:len(y)], um[:len(y)]
	for i, yi := range y {
		g[i] = w[i] * pick(m >= yi, um[i], -cm[i])
	}
}

// adjacentSecond sets the second derivatives of a pair m <= l, w times
// -(C_m U_l).
func adjacentSecond(h, w, cm, ul []float64) {
	h, w, ul = h[:len(cm)], w[:len(cm)], ul[:len(cm)]
	for i, v := range cm {
		h[i] = w[i] * -(v * ul[i])
	}
}

// sumTo sets dst[i] = a[i] + b[i].
func sumTo(dst, a, b []float64) {
	a, b = a[:len(dst)], b[:len(dst)]
	for i := range dst {
		dst[i] = a[i] + b[i]
	}
}

// divTo divides dst[i] by d[i].
func divTo(dst, d []float64) {
	d = d[:len(dst)]
	for i := range dst {
		dst[i] /= d[i]
	}
}

// addLogLik adds the rows' log-probabilities lp, weighted by w, to the
// log-likelihood and its smallest term, in the order of the rows (rows of
// weight 0 left out); false if one is not finite.
func addLogLik(a *acc, lp, w []float64) bool {
	w = w[:len(lp)]
	for i, v := range lp {
		wi := w[i]
		if wi == 0 {
			continue
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
		a.ll += wi * v
		a.minLP = min(a.minLP, v)
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
// memory, one after the other, and ni columns of rows whole numbers (not
// cleared).
func (s *scratch) kernelTemp(n, ni, rows int) ([]float64, []int) {
	if len(s.kt) < n*rows {
		s.kt = make([]float64, n*rows)
	}
	if len(s.ki) < ni*rows {
		s.ki = make([]int, ni*rows)
	}
	return s.kt[:n*rows], s.ki[:ni*rows]
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
	t, lists := s.kernelTemp(5, 2, rows)
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
