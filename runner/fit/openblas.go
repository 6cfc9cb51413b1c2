//go:build openblas && cgo

package fit

// The machine's optimized BLAS (OpenBLAS, Debian's libopenblas-dev), for
// the benchmark that times the engine's cross-products against it
// (BenchmarkCrossOpenBLAS: `go test -tags openblas`). The engine never
// calls it: the default build needs Go alone.

// #cgo LDFLAGS: -lopenblas
// #include <cblas.h>
import "C"

import "unsafe"

// openblasSyrk adds to the lower triangle of dst (k x k, row stride k)
// the sums over the n rows of u_i u_i', where u_i is row i of the k columns
// u[j*n:(j+1)*n] (the layout of symCross): cblas_dsyrk on the columns as a
// column-major n x k matrix (its upper triangle in column-major order is
// dst's lower triangle).
func openblasSyrk(dst, u []float64, k, n int) {
	if n == 0 || k == 0 {
		return
	}
	_, _ = dst[k*k-1], u[k*n-1]
	C.cblas_dsyrk(C.CblasColMajor, C.CblasUpper, C.CblasTrans, C.blasint(k), C.blasint(n),
		1, (*C.double)(unsafe.Pointer(&u[0])), C.blasint(n),
		1, (*C.double)(unsafe.Pointer(&dst[0])), C.blasint(k))
}

// openblasGemm adds to dst (k x k, row stride k) the sums over the n rows
// of u_i v_i' (both k columns of n rows, as openblasSyrk): cblas_dgemm,
// every entry (dst is symmetric when v = W u).
func openblasGemm(dst, u, v []float64, k, n int) {
	if n == 0 || k == 0 {
		return
	}
	_, _, _ = dst[k*k-1], u[k*n-1], v[k*n-1]
	C.cblas_dgemm(C.CblasColMajor, C.CblasTrans, C.CblasNoTrans, C.blasint(k), C.blasint(k), C.blasint(n),
		1, (*C.double)(unsafe.Pointer(&v[0])), C.blasint(n),
		(*C.double)(unsafe.Pointer(&u[0])), C.blasint(n),
		1, (*C.double)(unsafe.Pointer(&dst[0])), C.blasint(k))
}

// openblasThreads sets the number of threads OpenBLAS uses.
func openblasThreads(n int) { C.openblas_set_num_threads(C.int(n)) }
