package chained

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// gammaDraw draws from the gamma distribution with the given shape and
// scale 1 (Marsaglia and Tsang's squeeze method; shapes below 1 through
// the boost u^(1/shape)).
func gammaDraw(rng *rand.Rand, shape float64) float64 {
	if shape < 1 {
		u := rng.Float64()
		for u == 0 {
			u = rng.Float64()
		}
		return gammaDraw(rng, shape+1) * math.Pow(u, 1/shape)
	}
	d := shape - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		x := rng.NormFloat64()
		v := 1 + c*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := rng.Float64()
		if u < 1-0.0331*x*x*x*x {
			return d * v
		}
		if u > 0 && math.Log(u) < 0.5*x*x+d*(1-v+math.Log(v)) {
			return d * v
		}
	}
}

// chiSquareDraw draws from the chi-square distribution on df degrees of
// freedom.
func chiSquareDraw(rng *rand.Rand, df float64) float64 { return 2 * gammaDraw(rng, df/2) }

// dirichletDraw draws shares from the Dirichlet distribution with the
// given parameters (all positive).
func dirichletDraw(rng *rand.Rand, alpha []float64) []float64 {
	out := make([]float64, len(alpha))
	s := 0.0
	for j, a := range alpha {
		out[j] = gammaDraw(rng, a)
		s += out[j]
	}
	for j := range out {
		out[j] /= s
	}
	return out
}

// normalDraw draws from the normal distribution with mean mu and
// covariance V (row-major): mu + L z with L L' = V, L the Cholesky factor,
// or, when V is not numerically positive definite, V's eigenvectors scaled
// by the square roots of its eigenvalues (negative ones set to 0).
func normalDraw(rng *rand.Rand, mu, V []float64) []float64 {
	P := len(mu)
	z := make([]float64, P)
	for i := range z {
		z[i] = rng.NormFloat64()
	}
	out := make([]float64, P)
	copy(out, mu)
	sym := mat.NewSymDense(P, append([]float64(nil), V...))
	var ch mat.Cholesky
	if ch.Factorize(sym) {
		var L mat.TriDense
		ch.LTo(&L)
		for i := 0; i < P; i++ {
			for j := 0; j <= i; j++ {
				out[i] += L.At(i, j) * z[j]
			}
		}
		return out
	}
	var eig mat.EigenSym
	if !eig.Factorize(sym, true) {
		return out
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	for k, lam := range vals {
		if lam <= 0 {
			continue
		}
		s := math.Sqrt(lam) * z[k]
		for i := 0; i < P; i++ {
			out[i] += vecs.At(i, k) * s
		}
	}
	return out
}

// categoryDraw draws an index from probabilities that sum to 1 (up to
// rounding; the last index takes what rounding leaves).
func categoryDraw(rng *rand.Rand, p []float64) int {
	u := rng.Float64()
	acc := 0.0
	for j, v := range p {
		acc += max(v, 0)
		if u < acc {
			return j
		}
	}
	return len(p) - 1
}
