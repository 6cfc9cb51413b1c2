package fit

import (
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// CheckDesign checks fit input before any model is fitted: categories,
// weights, finite values, and predictors that are constant, collinear or
// too large. Its errors are *InputError with a message for the user.
func CheckDesign(d *Data) error {
	if err := d.validate(); err != nil {
		return err
	}
	return d.checkRank(Model{})
}

// checkRank refuses constant predictors and predictors that are exact linear
// combinations of others (with the cutpoints playing the intercept), naming
// them.
func (d *Data) checkRank(m Model) error {
	n, K := len(d.Y), len(d.Predictors)
	if K == 0 {
		return nil
	}
	w := func(i int) float64 {
		if d.Weights == nil {
			return 1
		}
		return d.Weights[i]
	}
	// Units: squares and cross-products of a predictor must be ordinary
	// floating-point numbers for the information to be exact. Within
	// [minScale, maxScale] the unit-diagonal scaling of the engine gives
	// the same fit in any units (tested at 1e-100 and 1e100); outside, the
	// predictor is refused with the factor that brings it back.
	for k := 0; k < K; k++ {
		maxAbs, at := 0.0, 0
		for i := 0; i < n; i++ {
			if v := math.Abs(d.X[i*K+k]); v > maxAbs {
				maxAbs, at = v, i
			}
		}
		switch {
		case maxAbs > maxScale:
			return inputErr("predictor %q has the value %g in row %d: too large to fit (values up to %g can be fitted exactly); rescale the predictor (for example divide it by 1e%d)",
				d.Predictors[k], d.X[at*K+k], at+1, maxScale, int(math.Floor(math.Log10(maxAbs))))
		case maxAbs > 0 && maxAbs < minScale:
			return inputErr("predictor %q has values no larger than %g in absolute value: too small to fit exactly (the largest value must be at least %g); rescale the predictor (for example multiply it by 1e%d)",
				d.Predictors[k], maxAbs, minScale, -int(math.Floor(math.Log10(maxAbs))))
		}
	}
	mean := make([]float64, K)
	tot := 0.0
	for i := 0; i < n; i++ {
		wi := w(i)
		tot += wi
		for k := 0; k < K; k++ {
			mean[k] += wi * d.X[i*K+k]
		}
	}
	for k := range mean {
		mean[k] /= tot
	}
	C := make([]float64, K*K)
	for i := 0; i < n; i++ {
		wi := w(i)
		row := d.X[i*K : (i+1)*K]
		for a := 0; a < K; a++ {
			va := wi * (row[a] - mean[a])
			for b := a; b < K; b++ {
				C[a*K+b] += va * (row[b] - mean[b])
			}
		}
	}
	sd := make([]float64, K)
	for k := 0; k < K; k++ {
		sd[k] = math.Sqrt(C[k*K+k] / tot)
		scale := math.Max(math.Abs(mean[k]), sd[k])
		if sd[k] == 0 || sd[k] <= 1e-12*scale {
			return inputErr("predictor %q is constant (every row has %g): it cannot be estimated alongside the cutpoints; remove it", d.Predictors[k], mean[k])
		}
	}
	corr := mat.NewSymDense(K, nil)
	for a := 0; a < K; a++ {
		for b := a; b < K; b++ {
			corr.SetSym(a, b, C[a*K+b]/(tot*sd[a]*sd[b]))
		}
	}
	// Add predictors one at a time; a new one whose residual variance given
	// the earlier ones vanishes is collinear with them.
	var kept []int
	for k := 0; k < K; k++ {
		if len(kept) > 0 {
			sub := mat.NewSymDense(len(kept), nil)
			rhs := mat.NewVecDense(len(kept), nil)
			for i, a := range kept {
				for j, b := range kept {
					if j >= i {
						sub.SetSym(i, j, corr.At(a, b))
					}
				}
				rhs.SetVec(i, corr.At(a, k))
			}
			var ch mat.Cholesky
			if ch.Factorize(sub) {
				var beta mat.VecDense
				if err := ch.SolveVecTo(&beta, rhs); err == nil {
					resid := 1 - mat.Dot(&beta, rhs)
					if resid < 1e-10 {
						var with []string
						for i, a := range kept {
							if math.Abs(beta.AtVec(i)) > 1e-6 {
								with = append(with, d.Predictors[a])
							}
						}
						return inputErr("predictor %q is perfectly collinear with %s (and the constant): remove one of them", d.Predictors[k], strings.Join(quoteAll(with), ", "))
					}
				}
			}
		}
		kept = append(kept, k)
	}
	return nil
}

// The range of predictor magnitudes (largest absolute value) a fit takes.
const (
	minScale = 1e-100
	maxScale = 1e100
)

func quoteAll(xs []string) []string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = `"` + x + `"`
	}
	return out
}
