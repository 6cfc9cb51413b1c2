//go:build !amd64 || purego

package fit

// Without the assembly kernel (other architectures, or the build tag
// purego) the cross-products are the Go tiles of cross.go.

// symCross adds to the lower triangle of dst the weighted cross-products
// of the k columns of u: symCrossGo.
func symCross(dst []float64, ldd int, u []float64, k, n int, w []float64) {
	symCrossGo(dst, ldd, u, k, n, w)
}

// fullCross adds to dst the weighted cross-products of the ka columns of A
// with the kb columns of B: fullCrossGo.
func fullCross(dst []float64, ldd int, A []float64, ka int, B []float64, kb, n int, w []float64) {
	fullCrossGo(dst, ldd, A, ka, B, kb, n, w)
}

// symCrossAt is symCross of columns ldu apart: symCrossGoAt.
func symCrossAt(dst []float64, ldd int, u []float64, ldu, k, n int, w []float64) {
	symCrossGoAt(dst, ldd, u, ldu, k, n, w)
}

// fullCrossAt is fullCross of columns lda apart in A and ldb apart in B:
// fullCrossGoAt.
func fullCrossAt(dst []float64, ldd int, A []float64, lda, ka int, B []float64, ldb, kb, n int, w []float64) {
	fullCrossGoAt(dst, ldd, A, lda, ka, B, ldb, kb, n, w)
}
