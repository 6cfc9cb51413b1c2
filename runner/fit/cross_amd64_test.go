//go:build amd64 && !purego

package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// crossAsmOnly skips a test on a processor without AVX2, where symCross
// and fullCross are the Go tiles already.
func crossAsmOnly(t testing.TB) {
	if !crossAsm {
		t.Skip("no AVX2: the cross-products are the Go tiles")
	}
}

// crossValues draws k columns of n rows (column-major), mixing the kinds
// of values of mode: 0 normal; 1 also zeros, negatives, huge and tiny
// magnitudes and subnormals; 2 also NaN and infinities.
func crossValues(rng *rand.Rand, k, n, mode int) []float64 {
	u := make([]float64, k*n)
	for i := range u {
		x := rng.NormFloat64()
		if mode >= 1 {
			switch rng.IntN(8) {
			case 0:
				x = 0
			case 1:
				x *= 0x1p300
			case 2:
				x *= 0x1p-300
			case 3:
				x = math.Copysign(0x1p-1070, x)
			}
		}
		if mode >= 2 && rng.IntN(50) == 0 {
			x = [3]float64{math.NaN(), math.Inf(1), math.Inf(-1)}[rng.IntN(3)]
		}
		u[i] = x
	}
	return u
}

// sameBits reports whether x and y are the same float64 to the last bit,
// any NaN counting as any other (which NaN payload a sum keeps depends on
// the order of an instruction's operands, which Go does not specify).
func sameBits(x, y float64) bool {
	if math.IsNaN(x) || math.IsNaN(y) {
		return math.IsNaN(x) && math.IsNaN(y)
	}
	return math.Float64bits(x) == math.Float64bits(y)
}

// checkCrossAsm runs symCross and fullCross with the assembly kernel and
// with the Go tiles on the same blocks (dst with row stride ldd >= the
// number of columns and nonzero starting values, nil or given weights)
// and reports the first entry that differs in any bit, the entries
// outside the product included (they must be left alone).
func checkCrossAsm(t testing.TB, A []float64, ka int, B []float64, kb, n int, w []float64, ldd int, start float64) {
	t.Helper()
	run := func(asm bool) (sym, full []float64) {
		defer func(v bool) { crossAsm = v }(crossAsm)
		crossAsm = asm
		sym = make([]float64, ka*ldd)
		full = make([]float64, max(ka, 1)*max(ldd, kb+1))
		for i := range sym {
			sym[i] = start * float64(i%7-3)
		}
		for i := range full {
			full[i] = start * float64(i%5-2)
		}
		symCross(sym, ldd, A, ka, n, w)
		fullCross(full, max(ldd, kb+1), A, ka, B, kb, n, w)
		return sym, full
	}
	sa, fa := run(true)
	sg, fg := run(false)
	for i := range sa {
		if !sameBits(sa[i], sg[i]) {
			t.Fatalf("symCross k=%d n=%d ldd=%d weighted=%v: entry (%d,%d) %v (asm) != %v (Go)", ka, n, ldd, w != nil, i/ldd, i%ldd, sa[i], sg[i])
		}
	}
	l := max(ldd, kb+1)
	for i := range fa {
		if !sameBits(fa[i], fg[i]) {
			t.Fatalf("fullCross %dx%d n=%d weighted=%v: entry (%d,%d) %v (asm) != %v (Go)", ka, kb, n, w != nil, i/l, i%l, fa[i], fg[i])
		}
	}
}

// TestCrossAsmSameAsGo checks the assembly kernel against the Go tiles to
// the last bit on blocks of many shapes: 1 to 50 columns, 0 to a few
// thousand rows (not multiples of 4 or of a panel), with and without
// weights, and values normal, extreme and not finite. (Without fused
// multiply-adds the Go tiles equal plain sums over rows in order, which
// TestCrossProducts checks.)
func TestCrossAsmSameAsGo(t *testing.T) {
	crossAsmOnly(t)
	if fusedMultiplyAdd() {
		t.Skip("this build fuses multiply-adds in Go: the Go tiles round otherwise than the kernel")
	}
	rng := rand.New(rand.NewPCG(19, 7))
	ns := []int{0, 1, 2, 3, 4, 5, 7, 8, 13, 511, 512, 513, 515, 1023, 1030, 2049, 3001}
	ks := []int{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 15, 16, 17, 23, 33, 44, 50}
	for _, n := range ns {
		for _, ka := range ks {
			if n > 600 && ka%3 != 0 && ka != 44 {
				continue // fewer shapes on long blocks, to keep the test short
			}
			kb := ks[rng.IntN(len(ks))]
			mode := rng.IntN(3)
			A := crossValues(rng, ka, n, mode)
			B := crossValues(rng, kb, n, mode)
			w := crossValues(rng, 1, n, mode)
			for _, wv := range [][]float64{nil, w} {
				checkCrossAsm(t, A, ka, B, kb, n, wv, ka+rng.IntN(3), 0.25)
			}
		}
	}
}

// FuzzCrossAsm checks the assembly kernel against the Go tiles on shapes
// and values drawn from the fuzzer's seed.
func FuzzCrossAsm(f *testing.F) {
	crossAsmOnly(f)
	if fusedMultiplyAdd() {
		f.Skip("this build fuses multiply-adds in Go")
	}
	f.Add(uint64(1), uint8(11), uint8(10), uint16(517), uint8(0), uint8(1), true)
	f.Add(uint64(2), uint8(44), uint8(3), uint16(4096), uint8(2), uint8(2), false)
	f.Add(uint64(3), uint8(1), uint8(1), uint16(3), uint8(1), uint8(0), true)
	f.Fuzz(func(t *testing.T, seed uint64, ka, kb uint8, n uint16, extra, mode uint8, weighted bool) {
		k1, k2, rows := int(ka%60)+1, int(kb%60)+1, int(n%5000)
		rng := rand.New(rand.NewPCG(seed, 1))
		A := crossValues(rng, k1, rows, int(mode%3))
		B := crossValues(rng, k2, rows, int(mode%3))
		var w []float64
		if weighted {
			w = crossValues(rng, 1, rows, int(mode%3))
		}
		checkCrossAsm(t, A, k1, B, k2, rows, w, k1+int(extra%4), 1.5)
	})
}

// BenchmarkCrossShapesGo is BenchmarkCrossShapes by the Go tiles.
func BenchmarkCrossShapesGo(b *testing.B) {
	defer func(v bool) { crossAsm = v }(crossAsm)
	crossAsm = false
	benchCrossShapes(b)
}

// TestCrossAtStride checks the cross-products of columns read in place
// (symCrossAt, fullCrossAt: columns further apart than the rows, as in a
// design's column-major copy) against the same columns copied side by
// side, with the assembly kernel and with the Go tiles, to the last bit.
func TestCrossAtStride(t *testing.T) {
	crossAsmOnly(t)
	if fusedMultiplyAdd() {
		t.Skip("this build fuses multiply-adds in Go: the Go tiles round otherwise than the kernel")
	}
	rng := rand.New(rand.NewPCG(23, 5))
	// spread puts the k columns of u (n rows) ld apart, NaN between them.
	spread := func(u []float64, k, n, ld int) []float64 {
		out := make([]float64, (k-1)*ld+n)
		for i := range out {
			out[i] = math.NaN()
		}
		for j := 0; j < k; j++ {
			copy(out[j*ld:j*ld+n], u[j*n:(j+1)*n])
		}
		return out
	}
	for _, n := range []int{1, 5, 512, 1030, 4096} {
		for _, ka := range []int{1, 3, 8, 10, 13} {
			kb := []int{1, 4, 9, 33}[rng.IntN(4)]
			A, B := crossValues(rng, ka, n, 1), crossValues(rng, kb, n, 1)
			w := crossValues(rng, 1, n, 0)
			lda, ldb := n+1+rng.IntN(9000), n+rng.IntN(300)
			As, Bs := spread(A, ka, n, lda), spread(B, kb, n, ldb)
			for _, wv := range [][]float64{nil, w} {
				wantS, wantF := make([]float64, ka*ka), make([]float64, ka*kb)
				symCross(wantS, ka, A, ka, n, wv)
				fullCross(wantF, kb, A, ka, B, kb, n, wv)
				for _, asm := range []bool{true, false} {
					crossAsm = asm
					gotS, gotF := make([]float64, ka*ka), make([]float64, ka*kb)
					symCrossAt(gotS, ka, As, lda, ka, n, wv)
					fullCrossAt(gotF, kb, As, lda, ka, Bs, ldb, kb, n, wv)
					crossAsm = true
					for i := range wantS {
						if !sameBits(wantS[i], gotS[i]) {
							t.Fatalf("symCrossAt n=%d k=%d asm=%v: entry %d %v, side by side %v", n, ka, asm, i, gotS[i], wantS[i])
						}
					}
					for i := range wantF {
						if !sameBits(wantF[i], gotF[i]) {
							t.Fatalf("fullCrossAt n=%d %dx%d asm=%v: entry %d %v, side by side %v", n, ka, kb, asm, i, gotF[i], wantF[i])
						}
					}
				}
			}
		}
	}
}
