package fit

// Weighted cross-products of the columns of a block of rows: the inner loop
// of every evaluation with derivatives. A block's columns are stored
// column-major (column j of a block of n rows is u[j*n:(j+1)*n]), so every
// sum runs over contiguous memory. Sums are formed in tiles of 2x4 entries
// (2x2 along the diagonal of a symmetric product) whose accumulators stay
// in registers, and rows are taken in panels of crossPanel, so that the
// columns of one panel stay in the first-level cache while its tiles are
// formed. Every entry is summed in the same order whatever the number of
// workers.

// crossPanel is the number of rows of one panel.
const crossPanel = 512

// symCross adds to the lower triangle (diagonal included) of dst (k x k,
// row stride ldd) the sums over the n rows of w_i u_i u_i', where u_i is
// row i of the k columns u[j*n:(j+1)*n]. A nil w weighs every row 1. The
// upper triangle is left alone (mirrorLower fills it once all blocks are
// summed).
func symCross(dst []float64, ldd int, u []float64, k, n int, w []float64) {
	col := func(j, lo, hi int) []float64 { return u[j*n+lo : j*n+hi] }
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
				s := tile24(wp, a0, a1, col(b, lo, hi), col(b+1, lo, hi), col(b+2, lo, hi), col(b+3, lo, hi))
				addRow(r0[b:b+4], s[:4])
				addRow(r1[b:b+4], s[4:])
			}
			for ; b <= a; b += 2 {
				s := tile22(wp, a0, a1, col(b, lo, hi), col(b+1, lo, hi))
				r0[b] += s[0]
				if b+1 <= a {
					r0[b+1] += s[1]
				}
				r1[b] += s[2]
				r1[b+1] += s[3]
			}
		}
		if a < k { // the last row of an odd k
			a0 := col(a, lo, hi)
			r0 := dst[a*ldd:]
			b := 0
			for ; b+3 <= a; b += 4 {
				s := tile14(wp, a0, col(b, lo, hi), col(b+1, lo, hi), col(b+2, lo, hi), col(b+3, lo, hi))
				addRow(r0[b:b+4], s[:])
			}
			for ; b <= a; b++ {
				r0[b] += wdot(wp, a0, col(b, lo, hi))
			}
		}
	}
}

// fullCross adds to dst (ka x kb, row stride ldd) the sums over the n rows
// of w_i a_i b_i', where a_i is row i of the ka columns of A and b_i of the
// kb columns of B (both column-major with n rows). A nil w weighs every row
// 1.
func fullCross(dst []float64, ldd int, A []float64, ka int, B []float64, kb, n int, w []float64) {
	colA := func(j, lo, hi int) []float64 { return A[j*n+lo : j*n+hi] }
	colB := func(j, lo, hi int) []float64 { return B[j*n+lo : j*n+hi] }
	for lo := 0; lo < n; lo += crossPanel {
		hi := min(lo+crossPanel, n)
		var wp []float64
		if w != nil {
			wp = w[lo:hi]
		}
		for a := 0; a < ka; a += 2 {
			two := a+1 < ka
			a0 := colA(a, lo, hi)
			a1 := a0
			if two {
				a1 = colA(a+1, lo, hi)
			}
			r0 := dst[a*ldd:]
			b := 0
			for ; b+4 <= kb; b += 4 {
				b0, b1, b2, b3 := colB(b, lo, hi), colB(b+1, lo, hi), colB(b+2, lo, hi), colB(b+3, lo, hi)
				if two {
					s := tile24(wp, a0, a1, b0, b1, b2, b3)
					addRow(r0[b:b+4], s[:4])
					addRow(dst[(a+1)*ldd+b:(a+1)*ldd+b+4], s[4:])
				} else {
					s := tile14(wp, a0, b0, b1, b2, b3)
					addRow(r0[b:b+4], s[:])
				}
			}
			for ; b < kb; b++ {
				bb := colB(b, lo, hi)
				r0[b] += wdot(wp, a0, bb)
				if two {
					dst[(a+1)*ldd+b] += wdot(wp, a1, bb)
				}
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

func addRow(dst, s []float64) {
	for i := range dst {
		dst[i] += s[i]
	}
}

// tile24 returns the sums over rows i of w_i a_i b_i' for two columns a and
// four columns b, row a0 first (w nil: 1).
func tile24(w, a0, a1, b0, b1, b2, b3 []float64) [8]float64 {
	n := len(a0)
	a1, b0, b1, b2, b3 = a1[:n], b0[:n], b1[:n], b2[:n], b3[:n]
	var s00, s01, s02, s03, s10, s11, s12, s13 float64
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
			x0, x1 := wi*a0[i], wi*a1[i]
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
	}
	return [8]float64{s00, s01, s02, s03, s10, s11, s12, s13}
}

// tile22 returns the sums over rows i of w_i a_i b_i' for two columns a and
// two columns b: s00, s01, s10, s11 (w nil: 1).
func tile22(w, a0, a1, b0, b1 []float64) [4]float64 {
	n := len(a0)
	a1, b0, b1 = a1[:n], b0[:n], b1[:n]
	var s00, s01, s10, s11 float64
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
			x0, x1 := wi*a0[i], wi*a1[i]
			y0, y1 := b0[i], b1[i]
			s00 += x0 * y0
			s01 += x0 * y1
			s10 += x1 * y0
			s11 += x1 * y1
		}
	}
	return [4]float64{s00, s01, s10, s11}
}

// tile14 returns the sums over rows i of w_i a_i b_i' for one column a and
// four columns b (w nil: 1).
func tile14(w, a0, b0, b1, b2, b3 []float64) [4]float64 {
	n := len(a0)
	b0, b1, b2, b3 = b0[:n], b1[:n], b2[:n], b3[:n]
	var s0, s1, s2, s3 float64
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
			x := wi * a0[i]
			s0 += x * b0[i]
			s1 += x * b1[i]
			s2 += x * b2[i]
			s3 += x * b3[i]
		}
	}
	return [4]float64{s0, s1, s2, s3}
}

// wdot returns the sum over rows i of w_i a_i b_i (w nil: 1), in four
// interleaved partial sums.
func wdot(w, a, b []float64) float64 {
	n := len(a)
	b = b[:n]
	var s0, s1, s2, s3 float64
	i := 0
	if w == nil {
		for ; i+4 <= n; i += 4 {
			s0 += a[i] * b[i]
			s1 += a[i+1] * b[i+1]
			s2 += a[i+2] * b[i+2]
			s3 += a[i+3] * b[i+3]
		}
		for ; i < n; i++ {
			s0 += a[i] * b[i]
		}
	} else {
		w = w[:n]
		for ; i+4 <= n; i += 4 {
			s0 += w[i] * a[i] * b[i]
			s1 += w[i+1] * a[i+1] * b[i+1]
			s2 += w[i+2] * a[i+2] * b[i+2]
			s3 += w[i+3] * a[i+3] * b[i+3]
		}
		for ; i < n; i++ {
			s0 += w[i] * a[i] * b[i]
		}
	}
	return (s0 + s1) + (s2 + s3)
}
