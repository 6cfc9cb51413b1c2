package chained

import (
	"math"
	"math/rand/v2"
	"slices"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// linearDraw is the normal linear model of a numeric column fitted by
// least squares on the observed rows, and one draw of its parameters from
// their posterior under the usual noninformative prior: sigma*^2 =
// RSS / g with g ~ chi-square(n - q), beta* = beta^ + sigma* U^-1 z with
// U'U = X'X.
type linearDraw struct {
	fitObs  []float64 // predicted means of the observed rows at beta^
	drawMis []float64 // predicted means of the missing rows at beta*
	sigma   float64   // sigma*
}

// linearModel fits and draws; ok is false when the observed rows are too
// few for the model (n - q < 1) or X'X is singular.
func linearModel(p *predictors, y []float64, rng *rand.Rand) (linearDraw, bool) {
	K := len(p.names)
	q := K + 1
	n := len(p.obs)
	if n-q < 1 {
		return linearDraw{}, false
	}
	row := func(x []float64, r int) []float64 { return x[r*K : (r+1)*K] }
	A := mat.NewSymDense(q, nil)
	b := make([]float64, q)
	xr := make([]float64, q)
	for r, i := range p.obs {
		xr[0] = 1
		copy(xr[1:], row(p.xObs, r))
		for a := 0; a < q; a++ {
			b[a] += xr[a] * y[i]
			for c := a; c < q; c++ {
				A.SetSym(a, c, A.At(a, c)+xr[a]*xr[c])
			}
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(A) {
		return linearDraw{}, false
	}
	beta := mat.NewVecDense(q, nil)
	if err := ch.SolveVecTo(beta, mat.NewVecDense(q, b)); err != nil {
		return linearDraw{}, false
	}
	pred := func(x []float64, coef []float64) float64 {
		s := coef[0]
		for k, v := range x {
			s += coef[k+1] * v
		}
		return s
	}
	bh := beta.RawVector().Data
	out := linearDraw{fitObs: make([]float64, n), drawMis: make([]float64, len(p.mis))}
	rss := 0.0
	for r, i := range p.obs {
		out.fitObs[r] = pred(row(p.xObs, r), bh)
		e := y[i] - out.fitObs[r]
		rss += e * e
	}
	out.sigma = math.Sqrt(rss / chiSquareDraw(rng, float64(n-q)))
	// beta* = beta^ + sigma* U^-1 z, U upper triangular with U'U = X'X.
	var U mat.TriDense
	ch.UTo(&U)
	z := make([]float64, q)
	for a := range z {
		z[a] = rng.NormFloat64()
	}
	for a := q - 1; a >= 0; a-- {
		s := z[a]
		for c := a + 1; c < q; c++ {
			s -= U.At(a, c) * z[c]
		}
		z[a] = s / U.At(a, a)
	}
	bs := make([]float64, q)
	for a := range bs {
		bs[a] = bh[a] + out.sigma*z[a]
	}
	for r := range p.mis {
		out.drawMis[r] = pred(row(p.xMis, r), bs)
	}
	return out, true
}

// meanMatching imputes each missing row with the observed value of a
// donor drawn with equal chances among the k observed rows whose predicted
// means (at beta^) are closest to the row's predicted mean (at beta*).
func meanMatching(p *predictors, y []float64, ld linearDraw, k int, rng *rand.Rand) []float64 {
	order := make([]int, len(p.obs))
	for r := range order {
		order[r] = r
	}
	slices.SortStableFunc(order, func(a, b int) int {
		switch {
		case ld.fitObs[a] < ld.fitObs[b]:
			return -1
		case ld.fitObs[a] > ld.fitObs[b]:
			return 1
		}
		return 0
	})
	sorted := make([]float64, len(order))
	for r, o := range order {
		sorted[r] = ld.fitObs[o]
	}
	k = min(k, len(order))
	out := make([]float64, len(p.mis))
	for r, t := range ld.drawMis {
		// The k nearest: grow a window [lo, hi) around t's place.
		hi, _ := slices.BinarySearch(sorted, t)
		lo := hi
		for hi-lo < k {
			switch {
			case lo == 0:
				hi++
			case hi == len(sorted):
				lo--
			case t-sorted[lo-1] <= sorted[hi]-t:
				lo--
			default:
				hi++
			}
		}
		out[r] = y[p.obs[order[donorAmongTies(sorted, t, lo, hi, rng)]]]
	}
	return out
}

// donorAmongTies draws the donor's place in sorted (the observed rows'
// predicted means, ascending) for a missing row of predicted mean t whose
// k = hi-lo nearest observed rows are the window [lo, hi). The k nearest
// are not unique when rows outside the window lie exactly as far from t
// as the window's farthest, which is the rule when the imputation model's
// predictors are all discrete (every row of a covariate pattern has the
// same predicted mean): taking the window as found would give every
// missing row of a pattern the same few donors, the first rows of the
// tie in the data's order, and bias the imputed values towards them. So
// the donor is drawn as from a k-set chosen at random among the ties:
// each of the s rows nearer than the farthest distance d with chance 1/k,
// otherwise one of all the rows at distance d with equal chances. When no
// row outside the window ties, this is the window's place lo+u as drawn.
func donorAmongTies(sorted []float64, t float64, lo, hi int, rng *rand.Rand) int {
	k := hi - lo
	u := lo + rng.IntN(k)
	d := max(t-sorted[lo], sorted[hi-1]-t)
	// The rows nearer than d are one run [a, b) of sorted, inside the
	// window; the rows at d are the runs [a1, a) and [b, b1).
	mid, _ := slices.BinarySearch(sorted, t) // sorted[:mid] < t <= sorted[mid:]
	a := lo + sort.Search(mid-lo, func(i int) bool { return t-sorted[lo+i] < d })
	a1 := sort.Search(mid, func(i int) bool { return t-sorted[i] <= d })
	b := mid + sort.Search(hi-mid, func(i int) bool { return sorted[mid+i]-t >= d })
	b1 := b + sort.Search(len(sorted)-b, func(i int) bool { return sorted[b+i]-t > d })
	if u >= a && u < b {
		return u
	}
	ties := (a - a1) + (b1 - b)
	if ties == k-(b-a) {
		return u // no tie outside the window
	}
	v := rng.IntN(ties)
	if v < a-a1 {
		return a1 + v
	}
	return b + v - (a - a1)
}

// normalImpute imputes each missing row by its predicted mean at beta*
// plus a normal error with SD sigma*.
func normalImpute(ld linearDraw, rng *rand.Rand) []float64 {
	out := make([]float64, len(ld.drawMis))
	for r, m := range ld.drawMis {
		out[r] = m + ld.sigma*rng.NormFloat64()
	}
	return out
}

// observedDraw imputes each missing row with an observed value drawn with
// equal chances (the fallback when the linear model cannot be fitted).
func observedDraw(p *predictors, y []float64, rng *rand.Rand) []float64 {
	out := make([]float64, len(p.mis))
	for r := range out {
		out[r] = y[p.obs[rng.IntN(len(p.obs))]]
	}
	return out
}
