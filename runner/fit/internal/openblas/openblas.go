//go:build openblas && cgo

package openblas

// The machine's optimized BLAS (OpenBLAS, Debian's libopenblas-dev), for
// the benchmark that times the engine's cross-products against it
// (BenchmarkCrossOpenBLAS in runner/fit: `go test -tags openblas`). The
// engine never calls it: the default build needs Go alone. A package of
// its own, since a package using cgo may not hold Go assembly (runner/fit
// has cross_amd64.s).

// #cgo LDFLAGS: -lopenblas
// #include <cblas.h>
import "C"

import "unsafe"

// Syrk adds to the lower triangle of dst (k x k, row stride k)
// the sums over the n rows of u_i u_i', where u_i is row i of the k columns
// u[j*n:(j+1)*n] (the layout of symCross): cblas_dsyrk on the columns as a
// column-major n x k matrix (its upper triangle in column-major order is
// dst's lower triangle).
func Syrk(dst, u []float64, k, n int) {
	if n == 0 || k == 0 {
		return
	}
	_, _ = dst[k*k-1], u[k*n-1]
	C.cblas_dsyrk(C.CblasColMajor, C.CblasUpper, C.CblasTrans, C.blasint(k), C.blasint(n),
		1, (*C.double)(unsafe.Pointer(&u[0])), C.blasint(n),
		1, (*C.double)(unsafe.Pointer(&dst[0])), C.blasint(k))
}

// Gemm adds to dst (k x k, row stride k) the sums over the n rows
// of u_i v_i' (both k columns of n rows, as Syrk): cblas_dgemm,
// every entry (dst is symmetric when v = W u).
func Gemm(dst, u, v []float64, k, n int) {
	if n == 0 || k == 0 {
		return
	}
	_, _, _ = dst[k*k-1], u[k*n-1], v[k*n-1]
	C.cblas_dgemm(C.CblasColMajor, C.CblasTrans, C.CblasNoTrans, C.blasint(k), C.blasint(k), C.blasint(n),
		1, (*C.double)(unsafe.Pointer(&v[0])), C.blasint(n),
		(*C.double)(unsafe.Pointer(&u[0])), C.blasint(n),
		1, (*C.double)(unsafe.Pointer(&dst[0])), C.blasint(k))
}

// Threads sets the number of threads OpenBLAS uses.
func Threads(n int) { C.openblas_set_num_threads(C.int(n)) }
