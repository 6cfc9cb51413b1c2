package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestGatherRows checks gatherRows against a plain loop over the rows: the
// columns copied to their places, and x'b formed as axpy over the columns
// forms it (to the last bit without fused multiply-adds), the same bits
// when only x'b is formed (no destination), for blocks that are and are
// not a multiple of its eight rows.
func TestGatherRows(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	const w = 5
	from, at := []int{3, 0, 4}, []int{2, 0, 1}
	b := []float64{0.5, -1.25, 3}
	for _, rows := range []int{1, 7, 8, 9, 17, blockRows, blockRows - 3} {
		x := randCols(rng, w, rows)
		dst := make([]float64, 3*rows)
		e := make([]float64, rows)
		gatherRows(dst, at, x, w, rows, from, b, e)
		plain := make([]float64, 3*rows)
		gatherRows(plain, at, x, w, rows, from, nil, nil)
		alone := make([]float64, rows) // x'b without copying
		gatherRows(nil, nil, x, w, rows, from, b, alone)
		for i := range alone {
			if math.Float64bits(alone[i]) != math.Float64bits(e[i]) {
				t.Fatalf("rows=%d: row %d x'b without the copy %g, with it %g", rows, i, alone[i], e[i])
			}
		}
		for i := 0; i < rows; i++ {
			want, abs := 0.0, 0.0
			for j, k := range from {
				v := x[i*w+k]
				if dst[at[j]*rows+i] != v || plain[at[j]*rows+i] != v {
					t.Fatalf("rows=%d: row %d column %d not copied", rows, i, k)
				}
				want += b[j] * v
				abs += math.Abs(b[j] * v)
			}
			if !sameSum(e[i], want, abs, len(from)) {
				t.Fatalf("rows=%d: row %d x'b %g, want %g", rows, i, e[i], want)
			}
		}
	}
}

// BenchmarkGatherRows copies the ten columns of blocks of 4096 rows of a
// 1e6 x 10 row-major design and forms x'b, one full pass a run:
// gatherRows ("rows") against eight rows of one column at a time, each
// followed by its axpy into x'b ("columns", the same values and sums; the
// engine's copy before gatherRows).
func BenchmarkGatherRows(b *testing.B) {
	const n, K = 1000000, 10
	rng := rand.New(rand.NewPCG(1, 2))
	x := randCols(rng, K, n)
	cols := upTo(K)
	bp := randCols(rng, K, 1)
	u := make([]float64, blockRows*K)
	e := make([]float64, blockRows)
	pass := func(block func(xb []float64, rows int)) {
		for lo := 0; lo < n; lo += blockRows {
			rows := min(blockRows, n-lo)
			block(x[lo*K:(lo+rows)*K], rows)
		}
	}
	b.Run("rows", func(b *testing.B) {
		for b.Loop() {
			pass(func(xb []float64, rows int) { gatherRows(u, cols, xb, K, rows, cols, bp, e) })
		}
	})
	b.Run("columns", func(b *testing.B) {
		for b.Loop() {
			pass(func(xb []float64, rows int) {
				for i0 := 0; i0 < rows; i0 += 8 {
					i1 := min(i0+8, rows)
					ei := e[i0:i1]
					clear(ei)
					for j, k := range cols {
						dst := u[j*rows+i0 : j*rows+i1]
						for i := range dst {
							dst[i] = xb[(i0+i)*K+k]
						}
						axpy(ei, bp[j], dst)
					}
				}
			})
		}
	})
}
