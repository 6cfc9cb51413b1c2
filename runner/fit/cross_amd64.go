//go:build amd64 && !purego

package fit

import "golang.org/x/sys/cpu"

// The cross-products on amd64 processors with AVX2: the sums of cross.go,
// to the last bit, formed by an assembly kernel (cross_amd64.s, written by
// cross_asm_gen.go) in register tiles of 4 columns of A by 8 columns of B.
// The kernel takes four rows at a time: it loads four rows of four columns
// of B (weighted), turns them in registers so that one register holds one
// row of the four columns, and adds a_ri (w_i b_i) to the sums of each
// column of A, row after row. Entries are vectorized across columns, never
// across rows, and each product is rounded before it is added (no fused
// multiply-add, as in the Go tiles): every entry is still one running sum
// over the rows in order, so the assembly and the Go tiles give the same
// bits where the Go compiler does not fuse multiply-adds either (amd64 at
// its default GOAMD64 level; it fuses at GOAMD64=v3 and on arm64, where
// the bit-for-bit tests skip).

//go:generate go run cross_asm_gen.go

// crossAsm reports whether symCross and fullCross use the assembly kernel:
// the processor and the operating system support AVX2 (tests set it false
// to run the Go tiles).
var crossAsm = cpu.X86.HasAVX2

// crossAsmPanel is the number of rows of one panel of the assembly path.
const crossAsmPanel = 512

// crossKernelAVX2 adds to s[8r+c] (r < na, c < 4 or 8) the sums over
// 4*quads rows i of a[r*lda+i] (w[i] b[oc+i]), where oc is 0, o1, o2, o3
// for c = 0 to 3 and o4, o4+o1, o4+o2, o4+o3 for c = 4 to 7 (nb = 8); a
// nil w weighs every row 1. na is 1 to 4, nb 4 or 8, quads at least 1.
//
//go:noescape
func crossKernelAVX2(s *[32]float64, w, a *float64, lda, na int, b *float64, o1, o2, o3, o4, nb, quads int)

// symCross adds to the lower triangle (diagonal included) of dst (k x k,
// row stride ldd) the sums over the n rows of u_i (w_i u_i)', where u_i is
// row i of the k columns u[j*n:(j+1)*n]. A nil w weighs every row 1. The
// upper triangle is left alone (mirrorLower fills it once all blocks are
// summed). The assembly kernel where the processor has AVX2, else
// symCrossGo: the same bits.
func symCross(dst []float64, ldd int, u []float64, k, n int, w []float64) {
	symCrossAt(dst, ldd, u, n, k, n, w)
}

// symCrossAt is symCross of columns ldu apart: column j of the n rows is
// u[j*ldu:j*ldu+n] (the columns of a design read in place).
func symCrossAt(dst []float64, ldd int, u []float64, ldu, k, n int, w []float64) {
	if !crossAsm {
		symCrossGoAt(dst, ldd, u, ldu, k, n, w)
		return
	}
	crossAsmTiles(dst, ldd, u, ldu, k, u, ldu, k, n, w, true)
}

// fullCross adds to dst (ka x kb, row stride ldd) the sums over the n rows
// of a_i (w_i b_i)', where a_i is row i of the ka columns of A and b_i of
// the kb columns of B (both column-major with n rows). A nil w weighs every
// row 1. The assembly kernel where the processor has AVX2, else
// fullCrossGo: the same bits.
func fullCross(dst []float64, ldd int, A []float64, ka int, B []float64, kb, n int, w []float64) {
	fullCrossAt(dst, ldd, A, n, ka, B, n, kb, n, w)
}

// fullCrossAt is fullCross of columns lda apart in A and ldb apart in B:
// column j of A is A[j*lda:j*lda+n].
func fullCrossAt(dst []float64, ldd int, A []float64, lda, ka int, B []float64, ldb, kb, n int, w []float64) {
	if !crossAsm {
		fullCrossGoAt(dst, ldd, A, lda, ka, B, ldb, kb, n, w)
		return
	}
	crossAsmTiles(dst, ldd, A, lda, ka, B, ldb, kb, n, w, false)
}

// crossAsmTiles adds to dst the sums of fullCross (lower: only those on or
// below the diagonal, B being A, as symCross) by the assembly kernel, panel
// after panel of rows, in tiles of 4 columns of A by 8 of B (fewer at the
// ends).
func crossAsmTiles(dst []float64, ldd int, A []float64, lda, ka int, B []float64, ldb, kb, n int, w []float64, lower bool) {
	var s [32]float64
	for lo := 0; lo < n; lo += crossAsmPanel {
		hi := min(lo+crossAsmPanel, n)
		for a := 0; a < ka; a += 4 {
			na := min(4, ka-a)
			end := kb
			if lower {
				end = a + na
			}
			for b := 0; b < end; {
				nb := crossTileWidth(end - b)
				t := crossTile{a: a, na: na, b: b, nb: nb, lower: lower}
				t.load(&s, dst, ldd)
				crossTileRows(&s, w, A, lda, a, na, B, ldb, b, nb, lo, hi)
				t.store(&s, dst, ldd)
				b += nb
			}
		}
	}
}

// crossTileWidth is the number of columns of B of the next tile when left
// remain: 8, else at most 4.
func crossTileWidth(left int) int {
	if left >= 8 {
		return 8
	}
	return min(4, left)
}

// crossTile is where a tile's sums stand in dst: entries (a+r, b+c) for
// r < na, c < nb; lower: only those on or below the diagonal (b+c <= a+r).
type crossTile struct {
	a, na, b, nb int
	lower        bool
}

// load copies the tile's entries from dst to s (s[8r+c]).
func (t crossTile) load(s *[32]float64, dst []float64, ldd int) {
	for r := 0; r < t.na; r++ {
		row := dst[(t.a+r)*ldd:]
		for c := 0; c < t.nb && (!t.lower || t.b+c <= t.a+r); c++ {
			s[8*r+c] = row[t.b+c]
		}
	}
}

// store copies the tile's entries from s back to dst.
func (t crossTile) store(s *[32]float64, dst []float64, ldd int) {
	for r := 0; r < t.na; r++ {
		row := dst[(t.a+r)*ldd:]
		for c := 0; c < t.nb && (!t.lower || t.b+c <= t.a+r); c++ {
			row[t.b+c] = s[8*r+c]
		}
	}
}

// crossTileRows adds to s[8r+c] (r < na, c < nb) the sums over rows lo to
// hi of A[(a+r)*lda+i] (w_i B[(b+c)*ldb+i]) (w nil: 1): the rows in groups
// of four by the kernel, the last hi-lo mod 4 rows here, in order. nb is 1
// to 4, or 8; with fewer than 4 the kernel reads column b in place of the
// missing ones, and their sums are not used.
func crossTileRows(s *[32]float64, w, A []float64, lda, a, na int, B []float64, ldb, b, nb, lo, hi int) {
	quads := (hi - lo) / 4
	if quads > 0 {
		// The kernel reads within A's columns a to a+na-1 and B's
		// columns b to b+nb-1, rows lo to hi: check their ends here.
		_ = A[(a+na-1)*lda+hi-1]
		_ = B[(b+nb-1)*ldb+hi-1]
		var wp *float64
		if w != nil {
			_ = w[hi-1]
			wp = &w[lo]
		}
		var o [4]int
		for c := 1; c < min(nb, 4); c++ {
			o[c] = c * ldb
		}
		crossKernelAVX2(s, wp, &A[a*lda+lo], lda, na, &B[b*ldb+lo], o[1], o[2], o[3], 4*ldb, max(nb, 4), quads)
	}
	for i := lo + 4*quads; i < hi; i++ {
		for r := 0; r < na; r++ {
			x := A[(a+r)*lda+i]
			for c := 0; c < nb; c++ {
				y := B[(b+c)*ldb+i]
				if w != nil {
					y = w[i] * y
				}
				s[8*r+c] += x * y
			}
		}
	}
}
