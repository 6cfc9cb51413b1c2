package fit

// The sums of an evaluation that are not cross-products of two sets of
// columns: each row's weights of the parallel columns (sums of its second
// derivatives in L over equations), and the sums over rows of single
// columns (the score and information pieces of the constant, when it is the
// only per-equation column). Each sum runs over the rows in order and adds
// its terms in the order the general form adds them, so the results are
// the same to the last bit (up to the sign of a zero weight, whose products
// add nothing to any sum).

// pairShape is how the pairs of equations a comparison needs lie in the
// q x q matrix of a row's second derivatives in L.
type pairShape int

const (
	densePairs       pairShape = iota // any other set, such as every pair m <= l
	diagonalPairs                     // (0,0), (1,1), ..., (q-1,q-1)
	tridiagonalPairs                  // (0,0), (0,1), (1,1), (1,2), ..., (q-1,q-1)
)

// shapeOf is the shape of pairs, the pairs of q equations in order.
func shapeOf(pairs [][2]int, q int) pairShape {
	diagonal, tridiagonal := len(pairs) == q, len(pairs) == 2*q-1
	for i, pr := range pairs {
		diagonal = diagonal && pr == [2]int{i, i}
		tridiagonal = tridiagonal && pr == [2]int{i / 2, (i + 1) / 2}
	}
	switch {
	case diagonal:
		return diagonalPairs
	case tridiagonal:
		return tridiagonalPairs
	}
	return densePairs
}

// rowWeights forms the weights of the parallel columns' information
// pieces: wt (in s.wt), each row's sum_ml H_ml, and ru, each row's sum_m
// H_ml for every equation l times the per-equation columns (those sums
// themselves when the constant is the only column).
func (p *problem) rowWeights(rows int, s *scratch) (wt, ru []float64) {
	q, kf := p.q, len(p.freeCols)
	rl := p.equationWeights(rows, s)
	wt = s.wt[:rows]
	// The per-equation columns times sum_m H_ml; the constant column alone
	// (parallel effects) is rl itself.
	if kf == 1 {
		return wt, rl
	}
	ru = s.ru
	for l := 0; l < q; l++ {
		rll := rl[l*rows : (l+1)*rows]
		for j := 0; j < kf; j++ {
			dst := ru[(l*kf+j)*rows : (l*kf+j+1)*rows]
			u := s.uf[j*rows : (j+1)*rows]
			for i := range dst {
				dst[i] = rll[i] * u[i]
			}
		}
	}
	return wt, ru
}

// equationWeights returns rl (q x rows): each row's sum_m H_ml for every
// equation l, from the pairs (H is symmetric) in the order of the pairs;
// and puts their sum over l, in the order of l, in s.wt. A diagonal H is
// its own rl (the pairs' columns); a tridiagonal one is summed row by row
// (tridiagonalWeights).
func (p *problem) equationWeights(rows int, s *scratch) []float64 {
	q := p.q
	hp := s.hp[:len(p.pairs)*rows]
	h := func(pi int) []float64 { return hp[pi*rows : (pi+1)*rows] }
	wt := s.wt[:rows]
	switch p.shape {
	case diagonalPairs:
		copy(wt, h(0))
		for l := 1; l < q; l++ {
			addTo(wt, h(l))
		}
		return hp[:q*rows]
	case tridiagonalPairs:
		rl := s.rl[:q*rows]
		tridiagonalWeights(rl, wt, hp, q, rows)
		return rl
	}
	rl := s.rl[:q*rows]
	clear(rl)
	for pi, pr := range p.pairs {
		addTo(rl[pr[0]*rows:(pr[0]+1)*rows], h(pi))
		if pr[1] != pr[0] {
			addTo(rl[pr[1]*rows:(pr[1]+1)*rows], h(pi))
		}
	}
	copy(wt, rl[:rows])
	for l := 1; l < q; l++ {
		addTo(wt, rl[l*rows:(l+1)*rows])
	}
	return rl
}

// pairSums adds to each pair's information piece of the constant (S, 1 x 1
// when the constant is the only per-equation column) the sum of the pair's
// weights over the rows: the cross-product of the constant with itself.
func (p *problem) pairSums(rows int, a *acc, s *scratch) {
	sums := s.sums[:len(p.pairs)]
	for pi := range sums {
		sums[pi] = a.S[pi][0]
	}
	sumColumns(sums, s.hp, rows)
	for pi, v := range sums {
		a.S[pi][0] = v
	}
}

// sumColumns adds to dst[j] the sum over the n rows of column j of u
// (column-major, len(dst) columns of n rows), each one running sum over
// the rows in order, as a cross-product with a column of ones forms it
// (x 1 = x exactly): four columns in one sweep over the rows, so that four
// sums' additions overlap, the last sweep filled up with the last column
// again (its extra sums dropped).
func sumColumns(dst, u []float64, n int) {
	k := len(dst)
	at := func(c int) int { return min(c, k-1) }
	col := func(c int) []float64 { c = at(c); return u[c*n : (c+1)*n] }
	for j := 0; j < k; j += 4 {
		s := [4]float64{dst[j], dst[at(j+1)], dst[at(j+2)], dst[at(j+3)]}
		sum4(&s, col(j), col(j+1), col(j+2), col(j+3))
		copy(dst[j:], s[:min(4, k-j)])
	}
}

// sum4 adds to s the sums over rows of four columns, row after row.
func sum4(s *[4]float64, a0, a1, a2, a3 []float64) {
	n := len(a0)
	a1, a2, a3 = a1[:n], a2[:n], a3[:n]
	s0, s1, s2, s3 := s[0], s[1], s[2], s[3]
	for i, v := range a0 {
		s0 += v
		s1 += a1[i]
		s2 += a2[i]
		s3 += a3[i]
	}
	*s = [4]float64{s0, s1, s2, s3}
}

// tridiagonalWeights puts in rl (q x rows) each row's sum_m H_ml for every
// equation l when the pairs are tridiagonal (hp: the columns of (0,0),
// (0,1), (1,1), ..., (q-1,q-1), q >= 2), H_(l-1)l + H_ll + H_l(l+1) added in
// the order of the pairs as the general form does (the zero it starts from
// changes no sum), and in wt their sum over l in the order of l. Row by
// row, each H_l(l+1) read once for both its equations: fewer loads and
// stores than a sweep over the columns for each l.
func tridiagonalWeights(rl, wt, hp []float64, q, rows int) {
	for i := range wt[:rows] {
		up := hp[rows+i]
		v := hp[i] + up
		rl[i] = v
		w := v
		for l := 1; l < q-1; l++ {
			lo := up
			up = hp[(2*l+1)*rows+i]
			v = lo + hp[2*l*rows+i] + up
			rl[l*rows+i] = v
			w += v
		}
		v = up + hp[(2*q-2)*rows+i]
		rl[(q-1)*rows+i] = v
		wt[i] = w + v
	}
}
