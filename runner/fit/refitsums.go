package fit

import (
	"math"
	"weak"
)

// The first evaluation of the Lipsitz refit from the fit it extends. The
// refit starts at the fit's estimates with zero slopes for its group
// indicators; there every row's linear predictors, and so its kernel
// (log-probability and derivatives), are those of the fit's last
// evaluation to second order, and so are the sums over the rows that do not
// involve an indicator. Only the indicator parts are new: sums of the
// kernels' derivatives by group, and their cross-products with X. Phases:
// (1) the fit keeps its last evaluation's sums (lastSums); (2) the refit's
// first evaluation copies them into its own places and (3) adds the
// indicator parts from one pass of kernels over the rows, summed block by
// block in the order of the full evaluation, so every sum is the same to
// the last bit.

// lastSums is an evaluation to second order: the point, whether the
// information was expected, the sums, and what identifies the rows they
// were formed on (rowsOf).
type lastSums struct {
	theta    []float64
	expected bool
	a        *acc
	rows     rowsID
}

// rowsID identifies the rows of a design without keeping them alive: its
// arrays of predictors, categories, weights and offsets, held weakly (a
// fit keeping this must not keep its data), and its shape. A design whose
// rows were merged (compressed) has arrays of its own, so it is never
// taken for the rows it merged.
type rowsID struct {
	x, w, off weak.Pointer[float64]
	y         weak.Pointer[int]
	n, width  int
}

// rowsOf identifies the rows of d.
func rowsOf(d *design) rowsID {
	return rowsID{x: weak.Make(firstOf(d.x)), w: weak.Make(firstOf(d.w)), off: weak.Make(firstOf(d.off)),
		y: weak.Make(firstOf(d.y)), n: d.n, width: d.width()}
}

// firstSums gives the sums of a refit's first evaluation at theta from
// the last evaluation of the fit it extends (base).
type firstSums struct {
	theta []float64
	base  *lastSums
}

// evaluateKept is evaluate, taking the sums at p.first's point from there
// (once, when they apply), and keeping the last evaluation to second
// order in p.last.
func (p *problem) evaluateKept(theta []float64, order int, expected bool) *acc {
	var a *acc
	if f := p.takeFirst(theta, order, expected); f != nil {
		a = p.extendSums(theta, expected, f.base.a)
	} else {
		a = p.evaluate(theta, order, expected)
	}
	if order >= 2 && !a.bad {
		p.lastMu.Lock()
		d := p.d
		p.last = &lastSums{theta: append([]float64(nil), theta...), expected: expected, a: a, rows: rowsOf(d)}
		p.lastMu.Unlock()
	}
	return a
}

// takeFirst returns p.first, and forgets it, when it gives the sums of an
// evaluation of p at theta to this order: second order with the same kind
// of information, formed on the rows of p's design (the same arrays, none
// merged: rowsOf), the indicators held by group and parallel, no
// constrained predictors.
func (p *problem) takeFirst(theta []float64, order int, expected bool) *firstSums {
	p.lastMu.Lock()
	defer p.lastMu.Unlock()
	f := p.first
	if f == nil || order != 2 || !bitsEqual(theta, f.theta) {
		return nil
	}
	p.first = nil
	b, d := f.base, p.d
	if b.expected != expected || b.a.order != 2 || d.groups == 0 || p.parInd != d.groups || len(p.ly.groups) > 0 ||
		d.mult != nil || b.rows != rowsOf(d) {
		return nil
	}
	kf, kp0 := len(p.freeCols), len(p.parCols)-p.parInd
	if len(b.a.V) != p.q*kf || len(b.a.Vp) != kp0 || len(b.a.S) != len(p.pairs) {
		return nil
	}
	return f
}

// extendSums is the evaluation of p at its first point from the base
// fit's sums b: b's sums in their places, the indicator parts added.
func (p *problem) extendSums(theta []float64, expected bool, b *acc) *acc {
	rowsEvaluated.Add(int64(p.d.n))
	q, kf, kp := p.q, len(p.freeCols), len(p.parCols)
	kp0 := kp - p.parInd
	a := p.newAcc(2)
	a.ll, a.minLP, a.bad = b.ll, b.minLP, b.bad
	copy(a.V, b.V)
	copy(a.Vp, b.Vp)
	for i := range a.S {
		copy(a.S[i], b.S[i])
	}
	if kp0 > 0 {
		copy(a.R, b.R)
		for r := 0; r < kp0; r++ {
			copy(a.T[r*kp:r*kp+kp0], b.T[r*kp0:(r+1)*kp0])
		}
	}
	// The indicator parts, block by block as evaluate sums them.
	c := p.coefs(theta)
	nb := (p.d.n + blockRows - 1) / blockRows
	parts := make([]*acc, nb)
	p.eachBlock(func(bi, lo, hi int) {
		s := p.getScratch()
		pa := p.blockAcc(2)
		p.indicatorBlock(c, lo, hi, expected, pa, s)
		parts[bi] = pa
		p.putScratch(s)
	})
	// The first block's sums, then each later block's added (as acc.add).
	for g := kp0; g < kp; g++ {
		r, t := a.R[g*q*kf:(g+1)*q*kf], a.T[g*kp:g*kp+g+1]
		for bi, pa := range parts {
			pr, pt := pa.R[g*q*kf:(g+1)*q*kf], pa.T[g*kp:g*kp+g+1]
			if bi == 0 {
				a.Vp[g] = pa.Vp[g]
				copy(r, pr)
				copy(t, pt)
				continue
			}
			a.Vp[g] += pa.Vp[g]
			addTo(r, pr)
			addTo(t, pt)
		}
	}
	for _, pa := range parts {
		p.pools.parts[2].Put(pa)
	}
	mirrorLower(a.T, kp)
	return a
}

// indicatorBlock adds to a the indicator parts of the sums of rows
// lo..hi-1, as block forms them: the rows' kernels, then their weights by
// group (the other sums of a are left as they were).
func (p *problem) indicatorBlock(c *coefs, lo, hi int, expected bool, a *acc, s *scratch) {
	rows := hi - lo
	p.blockColumns(c, lo, rows, s)
	p.blockLinear(c, lo, rows, false, s)
	if !p.blockKernels(c, lo, rows, 2, expected, a, s) {
		a.bad = true
		return
	}
	kp0 := len(p.parCols) - p.parInd
	p.indicatorScore(lo, rows, kp0, p.equationSums(rows, s), a)
	_, ru := p.rowWeights(rows, s)
	p.indicatorInformation(lo, rows, kp0, ru, a, s)
}

// bitsEqual reports whether a and b hold the same float64 values, bit for
// bit.
func bitsEqual(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}
