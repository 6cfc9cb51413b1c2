//go:build openblas && cgo

package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestOpenBLASSameSums checks the calls of the OpenBLAS benchmark: the
// weighted cross-product of one block by cblas_dsyrk (rows scaled by
// sqrt(w)) and by cblas_dgemm (U' times WU) equals symCross's to rounding.
func TestOpenBLASSameSums(t *testing.T) {
	openblasThreads(1)
	for _, K := range []int{1, 3, 11, 45} {
		const n = 777
		rng := rand.New(rand.NewPCG(3, uint64(K)))
		u := randCols(rng, K, n)
		w := randCols(rng, 1, n)
		for i := range w {
			w[i] = math.Abs(w[i])
		}
		want := make([]float64, K*K)
		symCross(want, K, u, K, n, w)
		su, wu := scaledCols(u, w, K, n)
		syrk, gemm := make([]float64, K*K), make([]float64, K*K)
		openblasSyrk(syrk, su, K, n)
		openblasGemm(gemm, u, wu, K, n)
		for a := 0; a < K; a++ {
			for b := 0; b <= a; b++ {
				x := want[a*K+b]
				tol := 1e-12 * math.Max(1, math.Abs(x))
				if math.Abs(syrk[a*K+b]-x) > tol || math.Abs(gemm[a*K+b]-x) > tol || math.Abs(gemm[b*K+a]-x) > tol {
					t.Fatalf("K = %d, (%d, %d): symCross %v, dsyrk %v, dgemm %v, %v", K, a, b, x, syrk[a*K+b], gemm[a*K+b], gemm[b*K+a])
				}
			}
		}
	}
}

// scaledCols returns the k columns of n rows of u scaled row by row by
// sqrt(w) and by w.
func scaledCols(u, w []float64, k, n int) (su, wu []float64) {
	su, wu = make([]float64, k*n), make([]float64, k*n)
	scaleCols(su, wu, u, w, k, n)
	return su, wu
}

func scaleCols(su, wu, u, w []float64, k, n int) {
	for j := 0; j < k; j++ {
		for i := 0; i < n; i++ {
			if su != nil {
				su[j*n+i] = math.Sqrt(w[i]) * u[j*n+i]
			}
			if wu != nil {
				wu[j*n+i] = w[i] * u[j*n+i]
			}
		}
	}
}

// BenchmarkCrossOpenBLAS times the weighted cross-product of one block of
// 4096 rows and K columns (column-major, the engine's layout) by symCross
// against OpenBLAS on one thread: cblas_dsyrk on the columns scaled by
// sqrt(w) (possible only for weights of one sign; the scaling included and
// also timed alone) and cblas_dgemm of U' and WU (any weights; forming WU
// included). `go test -tags openblas -run '^$' -bench CrossOpenBLAS ./runner/fit/`
// with libopenblas-dev installed.
func BenchmarkCrossOpenBLAS(b *testing.B) {
	openblasThreads(1)
	const n = blockRows
	for _, K := range []int{11, 45, 101} {
		rng := rand.New(rand.NewPCG(5, uint64(K)))
		u := randCols(rng, K, n)
		w := randCols(rng, 1, n)
		for i := range w {
			w[i] = math.Abs(w[i])
		}
		su, wu := scaledCols(u, w, K, n)
		dst := make([]float64, K*K)
		b.Run("symCross/K="+itoa(K), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				symCross(dst, K, u, K, n, w)
			}
		})
		b.Run("openblas-dsyrk+scaling/K="+itoa(K), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				scaleCols(su, nil, u, w, K, n)
				openblasSyrk(dst, su, K, n)
			}
		})
		b.Run("openblas-dsyrk/K="+itoa(K), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				openblasSyrk(dst, su, K, n)
			}
		})
		b.Run("openblas-dgemm+scaling/K="+itoa(K), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				scaleCols(nil, wu, u, w, K, n)
				openblasGemm(dst, u, wu, K, n)
			}
		})
	}
}
