package fit

import (
	"fmt"
	"math"
	"strings"
	"sync"
	"weak"

	"gonum.org/v1/gonum/mat"
)

// CheckDesign checks fit input before any model is fitted: categories,
// weights, finite values, and predictors that are constant, collinear or
// too large. Its errors are *InputError with a message for the user.
func CheckDesign(d *Data) error {
	if err := d.validateRows(true); err != nil {
		return err
	}
	_, err := d.checkRank(0)
	return err
}

// checkRank refuses constant predictors and predictors that are exact linear
// combinations of others (with the cutpoints playing the intercept), naming
// them. It returns each predictor's weighted standard deviation (divisor
// the sum of weights). The sums over the rows take two passes on workers
// goroutines (columnSums).
func (d *Data) checkRank(workers int) ([]float64, error) {
	sd, _, err := d.checkRankWith(workers, nil)
	return sd, err
}

// checkRankWith is checkRank. base, when it holds the sums of a check of
// data with the same rows (X and weights) and no indicator columns, saves
// summing X's columns again: only d's indicator columns are summed (the
// refit of LipsitzTest), which gives the same sums, bit for bit. It also
// returns the sums of this check for later ones (nil when d has indicator
// columns).
func (d *Data) checkRankWith(workers int, base *rankSums) ([]float64, *rankSums, error) {
	sd, _, sums, err := d.checkRankMean(workers, base)
	return sd, sums, err
}

// checkRankMean is checkRankWith, which also gives the predictors'
// weighted means.
func (d *Data) checkRankMean(workers int, base *rankSums) (sd, mean []float64, sums *rankSums, err error) {
	K := len(d.Predictors)
	if K == 0 {
		return nil, nil, nil, nil
	}
	var base1, base2 *colSums
	if base.of(d) {
		base1, base2 = base.first, base.second
	}
	// Units: squares and cross-products of a predictor must be ordinary
	// floating-point numbers for the information to be exact. Within
	// [minScale, maxScale] the unit-diagonal scaling of the engine gives
	// the same fit in any units (tested at 1e-100 and 1e100); outside, the
	// predictor is refused with the factor that brings it back.
	cs := d.columnSums(workers, nil, 0, base1)
	if base1 == nil && cs.nonFinite() {
		if err := d.nonFiniteX(); err != nil {
			return nil, nil, nil, err
		}
	}
	for k := 0; k < K; k++ {
		switch maxAbs := cs.maxAbs[k]; {
		case maxAbs > maxScale:
			return nil, nil, nil, inputErr("predictor %q has the value %g in row %d: too large to fit (values up to %g can be fitted exactly); rescale the predictor (for example divide it by 1e%d)",
				d.Predictors[k], d.at(cs.at[k], k), cs.at[k]+1, maxScale, int(math.Floor(math.Log10(maxAbs))))
		case maxAbs > 0 && maxAbs < minScale:
			return nil, nil, nil, inputErr("predictor %q has values no larger than %g in absolute value: too small to fit exactly (the largest value must be at least %g); rescale the predictor (for example multiply it by 1e%d)",
				d.Predictors[k], maxAbs, minScale, -int(math.Floor(math.Log10(maxAbs))))
		}
	}
	mean = make([]float64, K)
	for k := range mean {
		mean[k] = cs.sum[k] / cs.tot
	}
	second := d.columnSums(workers, mean, cs.tot, base2)
	sd, err = rankVerdict(d.Predictors, mean, cs.tot, second.cross)
	if err != nil {
		return nil, nil, nil, err
	}
	return sd, mean, d.keepSums(cs, second), nil
}

// rankVerdict refuses a predictor that is constant or collinear with the
// ones before it, from the weighted means, the total weight and the
// centred cross-products (K x K) of the columns names; otherwise it gives
// their standard deviations (1 for none).
func rankVerdict(names []string, mean []float64, tot float64, C []float64) ([]float64, error) {
	K := len(names)
	sd := make([]float64, K)
	for k := 0; k < K; k++ {
		sd[k] = math.Sqrt(C[k*K+k] / tot)
		scale := math.Max(math.Abs(mean[k]), sd[k])
		if sd[k] == 0 || sd[k] <= 1e-12*scale {
			return nil, &InputError{Msg: fmt.Sprintf("predictor %q is constant (every row has %g): it cannot be estimated alongside the cutpoints; remove it", names[k], mean[k]),
				Collinear: &Collinearity{Predictor: k, Constant: true, Value: mean[k]}}
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
						c := &Collinearity{Predictor: k, Unexplained: math.Max(resid, 0)}
						var with []string
						for i, a := range kept {
							if math.Abs(beta.AtVec(i)) > 1e-6 {
								with = append(with, names[a])
								c.With = append(c.With, a)
							}
						}
						return nil, &InputError{Msg: fmt.Sprintf("predictor %q is perfectly collinear with %s (and the constant): remove one of them", names[k], strings.Join(quoteAll(with), ", ")), Collinear: c}
					}
				}
			}
		}
		kept = append(kept, k)
	}
	for k := range sd {
		if sd[k] == 0 {
			sd[k] = 1
		}
	}
	return sd, nil
}

// rankSums are the two passes' sums of a rank check of data without
// indicator columns, with what identifies the rows they were formed on (the
// arrays X and Weights, held weakly so that a fit keeping them does not
// keep its data alive).
type rankSums struct {
	x, w          weak.Pointer[float64]
	n, width      int
	first, second *colSums
}

// keepSums is the sums of d's rank check for later checks of the same rows
// (nil when d has indicator columns, whose sums those checks form again).
func (d *Data) keepSums(first, second *colSums) *rankSums {
	if d.ind != nil {
		return nil
	}
	return &rankSums{x: weak.Make(firstOf(d.X)), w: weak.Make(firstOf(d.Weights)), n: d.N(), width: d.width(), first: first, second: second}
}

// of reports whether s were formed on the rows of d (the same X and
// weights arrays, of the same shape).
func (s *rankSums) of(d *Data) bool {
	return s != nil && s.n == d.N() && s.width == d.width() &&
		s.x == weak.Make(firstOf(d.X)) && s.w == weak.Make(firstOf(d.Weights))
}

// firstOf is a pointer to the first element of v (nil when v is empty).
func firstOf[T any](v []T) *T {
	if len(v) == 0 {
		return nil
	}
	return &v[0]
}

// sumStripes is the number of runs of rows whose sums columnSums forms
// separately (in parallel) and adds in order: fixed, so that the sums do
// not depend on the workers.
const sumStripes = 16

// colSums are sums over the rows of the predictors.
type colSums struct {
	tot    float64   // sum of the weights
	sum    []float64 // K: weighted sums
	maxAbs []float64 // K: largest absolute value (every row)
	at     []int     // K: the first row with it
	cross  []float64 // K x K: weighted cross-products of the centred columns
	// With indicator columns (Data.ind): per group, the weighted sums of
	// X's centred columns over the group's rows (groups x width), and over
	// every row (width).
	grp, all []float64
}

// columnSums forms, without mean, the weights' total, the weighted sums
// and the largest absolute values of the predictors; with the means (and
// tot, the weights' total), the weighted cross-products of the predictors
// less their means. The rows
// are taken a block at a time, column-major, in sumStripes runs summed in
// order. Indicator columns (Data.ind) are not written out: their sums are
// the weights of their groups, and their centred cross-products follow
// from each group's sums of the other columns (indicatorCross). base, when
// not nil, holds the same pass's sums of X's columns (from data with the
// same rows and no indicators): they are taken from there, and only the
// indicators' sums are formed.
func (d *Data) columnSums(workers int, mean []float64, tot float64, base *colSums) *colSums {
	n, K, w0 := d.N(), len(d.Predictors), d.width()
	G := K - w0
	nb := (n + blockRows - 1) / blockRows
	per := (nb + sumStripes - 1) / sumStripes
	stripes := (nb + per - 1) / per
	parts := make([]*colSums, stripes)
	var bufs sync.Pool // one block's columns, reused across stripes
	all := upTo(w0)
	forEach(stripes, workers, func(st int) {
		c := &colSums{}
		if mean == nil {
			c.sum, c.maxAbs, c.at = make([]float64, K), make([]float64, K), make([]int, K)
		} else {
			c.cross = make([]float64, K*K)
			c.grp, c.all = make([]float64, G*w0), make([]float64, w0)
		}
		var u []float64
		if base == nil {
			u, _ = bufs.Get().([]float64)
			if u == nil {
				u = make([]float64, blockRows*w0)
			}
			defer bufs.Put(u)
		}
		for b := st * per; b < min(nb, (st+1)*per); b++ {
			lo := b * blockRows
			rows := min(lo+blockRows, n) - lo
			var w []float64
			if d.Weights != nil {
				w = d.Weights[lo : lo+rows]
			}
			if mean == nil {
				if base == nil {
					c.addSums(d.X[lo*w0:(lo+rows)*w0], rows, lo, w)
				}
				if G > 0 {
					c.addGroups(d.ind.group[lo:lo+rows], lo, w, w0)
				}
				continue
			}
			if base == nil {
				cols := u[:rows*w0]
				d.columns(lo, rows, cols, all)
				for k := 0; k < w0; k++ {
					v := cols[k*rows : (k+1)*rows]
					for i := range v {
						v[i] -= mean[k]
					}
				}
				symCross(c.cross, K, cols, w0, rows, w)
			}
			if G > 0 {
				c.addGroupCross(d.ind.group[lo:lo+rows], d.X[lo*w0:(lo+rows)*w0], mean, w, w0)
			}
		}
		parts[st] = c
	})
	total := parts[0]
	for _, c := range parts[1:] {
		total.tot += c.tot
		addTo(total.sum, c.sum)
		addTo(total.cross, c.cross)
		addTo(total.grp, c.grp)
		addTo(total.all, c.all)
		for k := range total.maxAbs {
			if c.maxAbs[k] > total.maxAbs[k] {
				total.maxAbs[k], total.at[k] = c.maxAbs[k], c.at[k]
			}
		}
	}
	if base != nil {
		total.fromBase(base, w0, K)
	}
	if mean != nil {
		if G > 0 {
			total.indicatorCross(mean, tot, w0, G)
		}
		mirrorLower(total.cross, K)
	}
	return total
}

// fromBase takes the sums of X's w0 columns (of K) from base, the same
// pass over data with the same rows and no indicator columns.
func (c *colSums) fromBase(base *colSums, w0, K int) {
	if c.cross == nil {
		c.tot = base.tot
		copy(c.sum, base.sum[:w0])
		copy(c.maxAbs, base.maxAbs[:w0])
		copy(c.at, base.at[:w0])
		return
	}
	for a := 0; a < w0; a++ {
		copy(c.cross[a*K:a*K+w0], base.cross[a*w0:(a+1)*w0])
	}
}

// nonFinite reports whether the sums of the first pass (columnSums
// without means) met a non-finite value of X: an infinite one is the
// largest value of its column, and a NaN makes its column's sum NaN (a
// zero weight times it too). An overflowing sum alone (infinite, not NaN)
// does not count, but the sums of two stripes overflowing both ways can
// give NaN: the caller looks for the value itself.
func (c *colSums) nonFinite() bool {
	for k := range c.sum {
		if math.IsNaN(c.sum[k]) || math.IsInf(c.maxAbs[k], 0) {
			return true
		}
	}
	return false
}

// addGroups adds a block's indicator columns (each row's group; first row
// lo) to the weighted sums and the largest values: 1 in the rows of the
// group.
func (c *colSums) addGroups(group []int, lo int, w []float64, w0 int) {
	for i, g := range group {
		if g == 0 {
			continue
		}
		k := w0 + g - 1
		if c.maxAbs[k] < 1 {
			c.maxAbs[k], c.at[k] = 1, lo+i
		}
		if w == nil {
			c.sum[k]++
		} else {
			c.sum[k] += w[i]
		}
	}
}

// addGroupCross adds a block's weighted columns of X less their means
// (x: the block's rows, row-major) to the sums of each row's group and of
// every row. Each sum takes the rows in order, as a column-major loop would.
func (c *colSums) addGroupCross(group []int, x, mean, w []float64, w0 int) {
	s := make([]float64, w0)
	mean = mean[:w0]
	v := make([]float64, w0) // a row's weighted values less the means
	for i, g := range group {
		row := x[i*w0 : (i+1)*w0]
		if w == nil {
			for b, xb := range row {
				v[b] = xb - mean[b]
			}
		} else {
			wi := w[i]
			for b, xb := range row {
				v[b] = (xb - mean[b]) * wi
			}
		}
		addTo(s, v)
		if g > 0 {
			addTo(c.grp[(g-1)*w0:g*w0], v)
		}
	}
	addTo(c.all, s)
}

// indicatorCross fills the lower-triangle rows of the indicator columns in
// cross: with I_g the indicator of group g, its mean m_g = W_g / W (W_g the
// group's weight, W every row's), sum w (I_g - m_g)(x - m) is the group's
// sum of w (x - m) less m_g times every row's, and
// sum w (I_g - m_g)(I_h - m_h) = W (m_g [g = h] - m_g m_h).
func (c *colSums) indicatorCross(mean []float64, W float64, w0, G int) {
	K := w0 + G
	for g := 0; g < G; g++ {
		r := c.cross[(w0+g)*K:]
		mg := mean[w0+g]
		for b := 0; b < w0; b++ {
			r[b] = c.grp[g*w0+b] - mg*c.all[b]
		}
		for h := 0; h <= g; h++ {
			r[w0+h] = -W * mg * mean[w0+h]
			if h == g {
				r[w0+h] += W * mg
			}
		}
	}
}

// addSums adds a block's rows (first row lo; x: its rows of X, row-major)
// to the weights' total, the weighted sums and the largest values. Each
// column's sum takes the rows in order, as a loop down the column does.
func (c *colSums) addSums(x []float64, rows, lo int, w []float64) {
	for i := 0; i < rows; i++ {
		if w == nil {
			c.tot++
		} else {
			c.tot += w[i]
		}
	}
	w0 := len(x) / max(rows, 1)
	s := make([]float64, w0)
	mx, at := c.maxAbs[:w0], c.at[:w0]
	for i := 0; i < rows; i++ {
		row := x[i*w0 : (i+1)*w0]
		if w == nil {
			addTo(s, row)
		} else {
			wi := w[i]
			for k, v := range row {
				s[k] += wi * v
			}
		}
		for k, v := range row {
			if a := math.Abs(v); a > mx[k] {
				mx[k], at[k] = a, lo+i
			}
		}
	}
	addTo(c.sum[:w0], s)
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
