//go:build openblas && cgo

package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"ordplan/runner/fit/internal/openblas"
)

// TestOpenBLASSameSums checks the calls of the OpenBLAS benchmark: the
// weighted cross-product of one block by cblas_dsyrk (rows scaled by
// sqrt(w)) and by cblas_dgemm (U' times WU) equals symCross's to rounding.
func TestOpenBLASSameSums(t *testing.T) {
	openblas.Threads(1)
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
		openblas.Syrk(syrk, su, K, n)
		openblas.Gemm(gemm, u, wu, K, n)
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
	scaleCols(su, wu, make([]float64, n), u, w, k, n)
	return su, wu
}

// scaleCols fills su (when not nil) with the columns of u times sqrt(w)
// (sw: scratch of n) and wu (when not nil) with them times w.
func scaleCols(su, wu, sw, u, w []float64, k, n int) {
	if su != nil {
		for i, wi := range w[:n] {
			sw[i] = math.Sqrt(wi)
		}
	}
	for j := 0; j < k; j++ {
		uj := u[j*n : (j+1)*n]
		if su != nil {
			dst := su[j*n : (j+1)*n]
			for i, x := range uj {
				dst[i] = sw[i] * x
			}
		}
		if wu != nil {
			dst := wu[j*n : (j+1)*n]
			for i, x := range uj {
				dst[i] = w[i] * x
			}
		}
	}
}

// BenchmarkCrossOpenBLAS times the weighted cross-product of one block of
// 4096 rows and K columns (column-major, the engine's layout) by symCross
// (the assembly kernel where there is one) and by the Go tiles against
// OpenBLAS on one thread: cblas_dsyrk on the columns scaled by
// sqrt(w) (possible only for weights of one sign; the scaling included, and
// dsyrk also timed alone) and cblas_dgemm of U' and WU (any weights;
// forming WU included); CPU ns per block (cpu-ns/op). `go test -tags openblas -run '^$' -bench
// CrossOpenBLAS ./runner/fit/` with libopenblas-dev installed.
func BenchmarkCrossOpenBLAS(b *testing.B) {
	openblas.Threads(1)
	const n = blockRows
	for _, K := range []int{11, 45, 101} {
		u, w := crossBenchBlock(K)
		su, wu := scaledCols(u, w, K, n)
		sw := make([]float64, n)
		dst := make([]float64, K*K)
		run := func(name string, f func()) {
			b.Run(name+"/K="+itoa(K), func(b *testing.B) {
				cpu0 := processCPU()
				for i := 0; i < b.N; i++ {
					f()
				}
				b.ReportMetric(float64(processCPU()-cpu0)/float64(b.N), "cpu-ns/op")
			})
		}
		run("symCross", func() { symCross(dst, K, u, K, n, w) })
		run("symCrossGo", func() { symCrossGo(dst, K, u, K, n, w) })
		run("openblas-dsyrk+scaling", func() {
			scaleCols(su, nil, sw, u, w, K, n)
			openblas.Syrk(dst, su, K, n)
		})
		run("openblas-dsyrk", func() { openblas.Syrk(dst, su, K, n) })
		run("openblas-dgemm+scaling", func() {
			scaleCols(nil, wu, sw, u, w, K, n)
			openblas.Gemm(dst, u, wu, K, n)
		})
	}
}
