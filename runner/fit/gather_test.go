package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestGatherRows checks gatherRows against a plain loop over the rows: the
// columns copied to their places, and x'b formed as axpy over the columns
// forms it (to the last bit without fused multiply-adds), for blocks that
// are and are not a multiple of its eight rows.
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
