package fit

// Weighted cross-products of the columns of a block of rows: the inner loop
// of every evaluation with derivatives. A block's columns are stored
// column-major (column j of a block of n rows is u[j*n:(j+1)*n]), so every
// sum runs over contiguous memory. Entries are formed in tiles of 2x4 (2x2
// along the diagonal of a symmetric product) whose accumulators stay in
// registers, and rows are taken in panels of crossPanel, so that the
// columns of one panel stay in the first-level cache while its tiles are
// formed. Each entry is still one running sum over the rows in order (a
// tile's accumulators start from the entry and go back to it after each
// panel), the products are a_i (w_i b_i): the sums round exactly as a
// plain row-by-row loop, so results do not depend on the tiling, the
// panel size or the number of workers. On amd64 with AVX2 an assembly
// kernel forms the same sums (cross_amd64.go); these Go tiles are the path
// everywhere else (cross_other.go) and its reference.

// crossPanel is the number of rows of one panel.
const crossPanel = 512

// symCrossGo adds to the lower triangle (diagonal included) of dst (k x k,
// row stride ldd) the sums over the n rows of u_i (w_i u_i)', where u_i is
// row i of the k columns u[j*n:(j+1)*n]. A nil w weighs every row 1. The
// upper triangle is left alone (mirrorLower fills it once all blocks are
// summed). symCross (cross_amd64.go, cross_other.go) runs it, or the
// assembly kernel where the build and the processor have one.
func symCrossGo(dst []float64, ldd int, u []float64, k, n int, w []float64) {
	symCrossGoAt(dst, ldd, u, n, k, n, w)
}

// symCrossGoAt is symCrossGo of columns ldu apart: column j is
// u[j*ldu:j*ldu+n].
func symCrossGoAt(dst []float64, ldd int, u []float64, ldu, k, n int, w []float64) {
	col := func(j, lo, hi int) []float64 { return u[j*ldu+lo : j*ldu+hi] }
	for lo := 0; lo < n; lo += crossPanel {
		hi := min(lo+crossPanel, n)
		var wp []float64
		if w != nil {
			wp = w[lo:hi]
		}
		a := 0
		for ; a+1 < k; a += 2 {
			a0, a1 := col(a, lo, hi), col(a+1, lo, hi)
			r0, r1 := dst[a*ldd:], dst[(a+1)*ldd:]
			b := 0
			for ; b+3 <= a; b += 4 {
				var s [8]float64
				copy(s[:4], r0[b:b+4])
				copy(s[4:], r1[b:b+4])
				tile24(&s, wp, a0, a1, col(b, lo, hi), col(b+1, lo, hi), col(b+2, lo, hi), col(b+3, lo, hi))
				copy(r0[b:b+4], s[:4])
				copy(r1[b:b+4], s[4:])
			}
			for ; b <= a; b += 2 {
				s := [4]float64{r0[b], r0[b+1], r1[b], r1[b+1]}
				tile22(&s, wp, a0, a1, col(b, lo, hi), col(b+1, lo, hi))
				r0[b], r1[b], r1[b+1] = s[0], s[2], s[3]
				if b+1 <= a {
					r0[b+1] = s[1]
				}
			}
		}
		if a < k { // the last row of an odd k
			a0 := col(a, lo, hi)
			r0 := dst[a*ldd:]
			b := 0
			for ; b+3 <= a; b += 4 {
				s := [4]float64(r0[b : b+4])
				tile14(&s, wp, a0, col(b, lo, hi), col(b+1, lo, hi), col(b+2, lo, hi), col(b+3, lo, hi))
				copy(r0[b:b+4], s[:])
			}
			for ; b <= a; b++ {
				r0[b] = wdot(r0[b], wp, a0, col(b, lo, hi))
			}
		}
	}
}

// fullCrossGo adds to dst (ka x kb, row stride ldd) the sums over the n
// rows of a_i (w_i b_i)', where a_i is row i of the ka columns of A and b_i
// of the kb columns of B (both column-major with n rows). A nil w weighs
// every row 1. fullCross runs it, or the assembly kernel.
func fullCrossGo(dst []float64, ldd int, A []float64, ka int, B []float64, kb, n int, w []float64) {
	fullCrossGoAt(dst, ldd, A, n, ka, B, n, kb, n, w)
}

// fullCrossGoAt is fullCrossGo of columns lda apart in A and ldb apart in
// B: column j of A is A[j*lda:j*lda+n].
func fullCrossGoAt(dst []float64, ldd int, A []float64, lda, ka int, B []float64, ldb, kb, n int, w []float64) {
	colA := func(j, lo, hi int) []float64 { return A[j*lda+lo : j*lda+hi] }
	colB := func(j, lo, hi int) []float64 { return B[j*ldb+lo : j*ldb+hi] }
	for lo := 0; lo < n; lo += crossPanel {
		hi := min(lo+crossPanel, n)
		var wp []float64
		if w != nil {
			wp = w[lo:hi]
		}
		for a := 0; a < ka; a += 2 {
			two := a+1 < ka
			a0 := colA(a, lo, hi)
			r0 := dst[a*ldd:]
			var a1, r1 []float64
			if two {
				a1, r1 = colA(a+1, lo, hi), dst[(a+1)*ldd:]
			}
			for b := 0; b+4 <= kb; b += 4 {
				b0, b1, b2, b3 := colB(b, lo, hi), colB(b+1, lo, hi), colB(b+2, lo, hi), colB(b+3, lo, hi)
				if two {
					var s [8]float64
					copy(s[:4], r0[b:b+4])
					copy(s[4:], r1[b:b+4])
					tile24(&s, wp, a0, a1, b0, b1, b2, b3)
					copy(r0[b:b+4], s[:4])
					copy(r1[b:b+4], s[4:])
				} else {
					s := [4]float64(r0[b : b+4])
					tile14(&s, wp, a0, b0, b1, b2, b3)
					copy(r0[b:b+4], s[:])
				}
			}
		}
		// The last kb mod 4 columns of B: four entries of A at a time.
		for b := kb - kb%4; b < kb; b++ {
			bb := colB(b, lo, hi)
			a := 0
			for ; a+4 <= ka; a += 4 {
				s := [4]float64{dst[a*ldd+b], dst[(a+1)*ldd+b], dst[(a+2)*ldd+b], dst[(a+3)*ldd+b]}
				tile41(&s, wp, colA(a, lo, hi), colA(a+1, lo, hi), colA(a+2, lo, hi), colA(a+3, lo, hi), bb)
				dst[a*ldd+b], dst[(a+1)*ldd+b], dst[(a+2)*ldd+b], dst[(a+3)*ldd+b] = s[0], s[1], s[2], s[3]
			}
			for ; a < ka; a++ {
				dst[a*ldd+b] = wdot(dst[a*ldd+b], wp, colA(a, lo, hi), bb)
			}
		}
	}
}

// mirrorLower copies the lower triangle of the k x k matrix m to its upper
// triangle.
func mirrorLower(m []float64, k int) {
	for a := 0; a < k; a++ {
		for b := a + 1; b < k; b++ {
			m[a*k+b] = m[b*k+a]
		}
	}
}

// tile24 adds to s, row a0 first, the sums over rows i of a_i (w_i b_i)'
// for two columns a and four columns b (w nil: 1), row after row.
func tile24(s *[8]float64, w, a0, a1, b0, b1, b2, b3 []float64) {
	n := len(a0)
	a1, b0, b1, b2, b3 = a1[:n], b0[:n], b1[:n], b2[:n], b3[:n]
	s00, s01, s02, s03, s10, s11, s12, s13 := s[0], s[1], s[2], s[3], s[4], s[5], s[6], s[7]
	if w == nil {
		for i, x0 := range a0 {
			x1 := a1[i]
			y0, y1, y2, y3 := b0[i], b1[i], b2[i], b3[i]
			s00 += x0 * y0
			s01 += x0 * y1
			s02 += x0 * y2
			s03 += x0 * y3
			s10 += x1 * y0
			s11 += x1 * y1
			s12 += x1 * y2
			s13 += x1 * y3
		}
	} else {
		w = w[:n]
		for i, wi := range w {
			x0, x1 := a0[i], a1[i]
			y0, y1, y2, y3 := wi*b0[i], wi*b1[i], wi*b2[i], wi*b3[i]
			s00 += x0 * y0
			s01 += x0 * y1
			s02 += x0 * y2
			s03 += x0 * y3
			s10 += x1 * y0
			s11 += x1 * y1
			s12 += x1 * y2
			s13 += x1 * y3
		}
	}
	*s = [8]float64{s00, s01, s02, s03, s10, s11, s12, s13}
}

// tile22 adds to s (s00, s01, s10, s11) the sums over rows i of
// a_i (w_i b_i)' for two columns a and two columns b (w nil: 1), row after
// row.
func tile22(s *[4]float64, w, a0, a1, b0, b1 []float64) {
	n := len(a0)
	a1, b0, b1 = a1[:n], b0[:n], b1[:n]
	s00, s01, s10, s11 := s[0], s[1], s[2], s[3]
	if w == nil {
		for i, x0 := range a0 {
			x1, y0, y1 := a1[i], b0[i], b1[i]
			s00 += x0 * y0
			s01 += x0 * y1
			s10 += x1 * y0
			s11 += x1 * y1
		}
	} else {
		w = w[:n]
		for i, wi := range w {
			x0, x1 := a0[i], a1[i]
			y0, y1 := wi*b0[i], wi*b1[i]
			s00 += x0 * y0
			s01 += x0 * y1
			s10 += x1 * y0
			s11 += x1 * y1
		}
	}
	*s = [4]float64{s00, s01, s10, s11}
}

// tile14 adds to s the sums over rows i of a_i (w_i b_i)' for one column a
// and four columns b (w nil: 1), row after row.
func tile14(s *[4]float64, w, a0, b0, b1, b2, b3 []float64) {
	n := len(a0)
	b0, b1, b2, b3 = b0[:n], b1[:n], b2[:n], b3[:n]
	s0, s1, s2, s3 := s[0], s[1], s[2], s[3]
	if w == nil {
		for i, x := range a0 {
			s0 += x * b0[i]
			s1 += x * b1[i]
			s2 += x * b2[i]
			s3 += x * b3[i]
		}
	} else {
		w = w[:n]
		for i, wi := range w {
			x := a0[i]
			s0 += x * (wi * b0[i])
			s1 += x * (wi * b1[i])
			s2 += x * (wi * b2[i])
			s3 += x * (wi * b3[i])
		}
	}
	*s = [4]float64{s0, s1, s2, s3}
}

// tile41 adds to s the sums over rows i of a_i (w_i b_i) for four columns
// a and one column b (w nil: 1), row after row.
func tile41(s *[4]float64, w, a0, a1, a2, a3, b []float64) {
	n := len(b)
	a0, a1, a2, a3 = a0[:n], a1[:n], a2[:n], a3[:n]
	s0, s1, s2, s3 := s[0], s[1], s[2], s[3]
	if w == nil {
		for i, y := range b {
			s0 += a0[i] * y
			s1 += a1[i] * y
			s2 += a2[i] * y
			s3 += a3[i] * y
		}
	} else {
		w = w[:n]
		for i, y := range b {
			y *= w[i]
			s0 += a0[i] * y
			s1 += a1[i] * y
			s2 += a2[i] * y
			s3 += a3[i] * y
		}
	}
	*s = [4]float64{s0, s1, s2, s3}
}

// wdot returns s plus the sum over rows i of a_i (w_i b_i) (w nil: 1), row
// after row.
func wdot(s float64, w, a, b []float64) float64 {
	b = b[:len(a)]
	if w == nil {
		for i, x := range a {
			s += x * b[i]
		}
		return s
	}
	w = w[:len(a)]
	for i, x := range a {
		s += x * (w[i] * b[i])
	}
	return s
}
