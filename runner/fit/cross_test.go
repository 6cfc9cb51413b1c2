package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// TestCrossProducts checks that the tiled cross-products equal, to the
// last bit, plain sums over rows in order, for odd and even numbers of columns, blocks shorter and longer
// than a panel, and with and without weights.
func TestCrossProducts(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{1, 3, 7, crossPanel, crossPanel + 5, 3*crossPanel + 1} {
		for _, ka := range []int{1, 2, 3, 4, 5, 6, 7, 9, 11} {
			for _, kb := range []int{1, 3, 4, 5, 8} {
				A := randCols(rng, ka, n)
				B := randCols(rng, kb, n)
				w := randCols(rng, 1, n)
				for _, wv := range [][]float64{nil, w} {
					weight := func(i int) float64 {
						if wv == nil {
							return 1
						}
						return wv[i]
					}
					sym := make([]float64, ka*ka)
					symCross(sym, ka, A, ka, n, wv)
					full := make([]float64, ka*kb)
					fullCross(full, kb, A, ka, B, kb, n, wv)
					for a := 0; a < ka; a++ {
						for b := 0; b < ka; b++ {
							want, abs := 0.0, 0.0
							for i := 0; i < n; i++ {
								want += A[a*n+i] * (weight(i) * A[b*n+i])
								abs += math.Abs(A[a*n+i] * (weight(i) * A[b*n+i]))
							}
							got := sym[a*ka+b]
							if b > a {
								want, abs = 0, 0 // the upper triangle is left alone
							}
							if !sameSum(got, want, abs, n) {
								t.Fatalf("symCross n=%d k=%d (%d,%d): %g, want %g", n, ka, a, b, got, want)
							}
						}
						for b := 0; b < kb; b++ {
							want, abs := 0.0, 0.0
							for i := 0; i < n; i++ {
								want += A[a*n+i] * (weight(i) * B[b*n+i])
								abs += math.Abs(A[a*n+i] * (weight(i) * B[b*n+i]))
							}
							if got := full[a*kb+b]; !sameSum(got, want, abs, n) {
								t.Fatalf("fullCross n=%d %dx%d (%d,%d): %g, want %g", n, ka, kb, a, b, got, want)
							}
						}
					}
					mirrorLower(sym, ka)
					for a := 0; a < ka; a++ {
						for b := 0; b < a; b++ {
							if sym[b*ka+a] != sym[a*ka+b] {
								t.Fatalf("mirrorLower: (%d,%d)", b, a)
							}
						}
					}
				}
			}
		}
	}
}

// fusedMultiplyAdd reports whether this build computes x*y + z with one
// rounding (a fused multiply-add, which the Go compiler may use on arm64,
// ppc64, s390x, riscv64 and amd64 v3): with x = 1 + 2^-30, y = 1 - 2^-30,
// z = -1 the product rounds to 1 (the sum is 0) unless fused (-2^-60).
func fusedMultiplyAdd() bool {
	x, y, z := fmaOperands()
	return x*y+z != 0
}

//go:noinline
func fmaOperands() (float64, float64, float64) {
	return 1 + 0x1p-30, 1 - 0x1p-30, -1
}

// sameSum compares a cross-product entry with the plain sum over the rows
// in order. Without fused multiply-adds both round each product and each
// addition the same way, so they are equal to the last bit. Where the
// compiler may fuse a product into the following addition, it may do so
// in one loop and not in the other; each of the n steps then differs by at
// most one rounding of a product and one of the running sum, so the two
// sums differ by at most 2 n eps times the sum of the absolute products
// (the usual bound for recursive summation, doubled).
func sameSum(got, want, abs float64, n int) bool {
	if !fusedMultiplyAdd() {
		return got == want
	}
	return math.Abs(got-want) <= 2*float64(n)*0x1p-52*abs
}

func randCols(rng *rand.Rand, k, n int) []float64 {
	u := make([]float64, k*n)
	for i := range u {
		u[i] = rng.NormFloat64()
	}
	return u
}

// crossBenchBlock is the block of the cross-product benchmarks: K
// columns of blockRows rows and positive weights, seeded by K.
func crossBenchBlock(K int) (cols, w []float64) {
	rng := rand.New(rand.NewPCG(5, uint64(K)))
	cols = randCols(rng, K, blockRows)
	w = randCols(rng, 1, blockRows)
	for i := range w {
		w[i] = math.Abs(w[i])
	}
	return cols, w
}

// BenchmarkCross compares the weighted cross-product of n = 4096 rows
// (one block) of K columns with gonum's pure-Go BLAS on the same sums:
// Dsyrk on the rows scaled by sqrt(w) (row-major, as a GLM would hold
// them) and Dgemm of X' and WX (what the engine used before).
func BenchmarkCross(b *testing.B) {
	const n = blockRows
	for _, K := range []int{11, 45, 101} {
		cols, w := crossBenchBlock(K)
		rowsX := make([]float64, n*K)  // sqrt(w) x, row-major
		rowsWX := make([]float64, n*K) // w x, row-major
		plain := make([]float64, n*K)  // x, row-major
		for i := 0; i < n; i++ {
			for j := 0; j < K; j++ {
				plain[i*K+j] = cols[j*n+i]
				rowsX[i*K+j] = math.Sqrt(w[i]) * cols[j*n+i]
				rowsWX[i*K+j] = w[i] * cols[j*n+i]
			}
		}
		dst := make([]float64, K*K)
		b.Run("symCross/K="+itoa(K), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				symCross(dst, K, cols, K, n, w)
			}
		})
		b.Run("gonum-Dsyrk/K="+itoa(K), func(b *testing.B) {
			C := blas64.Symmetric{N: K, Stride: K, Data: dst, Uplo: blas.Lower}
			A := blas64.General{Rows: n, Cols: K, Stride: K, Data: rowsX}
			for i := 0; i < b.N; i++ {
				blas64.Syrk(blas.Trans, 1, A, 1, C)
			}
		})
		b.Run("gonum-Dgemm/K="+itoa(K), func(b *testing.B) {
			C := blas64.General{Rows: K, Cols: K, Stride: K, Data: dst}
			X := blas64.General{Rows: n, Cols: K, Stride: K, Data: plain}
			WX := blas64.General{Rows: n, Cols: K, Stride: K, Data: rowsWX}
			for i := 0; i < b.N; i++ {
				blas64.Gemm(blas.Trans, blas.NoTrans, 1, X, WX, 1, C)
			}
		})
	}
}

func itoa(k int) string {
	s := ""
	for ; k > 0; k /= 10 {
		s = string(rune('0'+k%10)) + s
	}
	return s
}

// BenchmarkCrossShapes times symCross (weighted) and fullCross (K x K,
// unweighted, as the score and the cross terms call it) on n = 1e5 rows of
// K columns, for K of the example models (10, 11) and a wide one (44),
// by the default path (on amd64 with AVX2 the assembly kernel;
// BenchmarkCrossShapesGo times the Go tiles on the same blocks).
func BenchmarkCrossShapes(b *testing.B) { benchCrossShapes(b) }

func benchCrossShapes(b *testing.B) {
	const n = 100000
	for _, K := range []int{10, 11, 44} {
		rng := rand.New(rand.NewPCG(9, uint64(K)))
		u := randCols(rng, K, n)
		w := randCols(rng, 1, n)
		dst := make([]float64, K*K)
		b.Run("symCross/K="+itoa(K), func(b *testing.B) {
			cpu0 := processCPU()
			for i := 0; i < b.N; i++ {
				symCross(dst, K, u, K, n, w)
			}
			b.ReportMetric(float64(processCPU()-cpu0)/float64(b.N), "cpu-ns/op")
		})
		b.Run("fullCross/K="+itoa(K), func(b *testing.B) {
			cpu0 := processCPU()
			for i := 0; i < b.N; i++ {
				fullCross(dst, K, u, K, u, K, n, nil)
			}
			b.ReportMetric(float64(processCPU()-cpu0)/float64(b.N), "cpu-ns/op")
		})
	}
}
