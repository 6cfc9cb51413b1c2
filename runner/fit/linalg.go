package fit

import "gonum.org/v1/gonum/mat"

// aMAt returns A M A' for A (n x p) and a symmetric M (p x p), row-major,
// symmetrized exactly: the covariance of A theta when M is that of theta.
func aMAt(A []float64, n, p int, M []float64) []float64 {
	a := mat.NewDense(n, p, A)
	var out mat.Dense
	out.Product(a, mat.NewDense(p, p, M), a.T())
	return symmetric(&out, n)
}

// atMA returns A' M A for A (p x n) and a symmetric M (p x p): the
// chain rule for a Hessian when A is the Jacobian.
func atMA(A []float64, p, n int, M []float64) []float64 {
	a := mat.NewDense(p, n, A)
	var out mat.Dense
	out.Product(a.T(), mat.NewDense(p, p, M), a)
	return symmetric(&out, n)
}

func symmetric(m *mat.Dense, n int) []float64 {
	out := make([]float64, n*n)
	for i := 0; i < n; i++ {
		out[i*n+i] = m.At(i, i)
		for j := i + 1; j < n; j++ {
			v := 0.5 * (m.At(i, j) + m.At(j, i))
			out[i*n+j], out[j*n+i] = v, v
		}
	}
	return out
}
