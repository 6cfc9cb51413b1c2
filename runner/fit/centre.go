package fit

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// centreAbove: a predictor column whose weighted mean lies further from
// zero than this many of its standard deviations is fitted centred (its
// mean subtracted), and the result is given back in the units of the
// data. Without it the constant and such a column are nearly collinear:
// the information loses about (mean/sd)^2 of the machine's precision in
// the cutpoints' directions, its unit-diagonal condition passes the limit
// of a finite maximum near mean/sd = 1e5 (a predictor such as x + 1e6, or
// a time stamp in seconds within one day, read as a separation), and the
// errors lose digits well before that. Below the threshold the fit is
// made on the columns as they are, bit for bit as without centring.
const centreAbove = 1e3

// centring is the shift of each predictor (0 for a column left as it is)
// that the iterations of a fit ran on: the linear
// predictor L_m = tau_m - x'b_m is tau'_m - (x - c)'b_m, tau'_m = tau_m - c'b_m,
// the slopes unchanged. Only the cutpoints differ between the two
// coordinates.
type centring struct {
	shift []float64 // per predictor
}

// centringOf is the centring that the rows of d need, from the predictors'
// weighted means and standard deviations (nil: none).
func centringOf(d *Data, mean, sd []float64) *centring {
	return centringBy(shiftOf(mean[:min(d.width(), len(mean))], sd), len(d.Predictors))
}

// shiftOf is the shift of each predictor of the given weighted means and
// standard deviations: its mean when that lies beyond centreAbove
// standard deviations from zero, else 0 (nil: no predictor is shifted).
// It is the one rule of centring, for the rows in one place (the rank
// check's moments) and for fits summed over parts (the whole data's
// Spread).
func shiftOf(mean, sd []float64) []float64 {
	var shift []float64
	for k := range mean {
		if math.Abs(mean[k]) > centreAbove*sd[k] {
			if shift == nil {
				shift = make([]float64, len(mean))
			}
			shift[k] = mean[k]
		}
	}
	return shift
}

// centringBy is the centring of K predictors by shift (shorter: the
// predictors after it unshifted; nil when it shifts none).
func centringBy(shift []float64, K int) *centring {
	if !slices.ContainsFunc(shift, func(v float64) bool { return v != 0 }) {
		return nil
	}
	c := &centring{shift: make([]float64, K)}
	copy(c.shift, shift)
	return c
}

// Shift is the shift of each predictor that a fit of all the rows s
// summarizes runs centred by (nil: none): the rule a fit of the rows in
// one place applies to its own rank check's moments, here applied to the
// weighted means and standard deviations of s. Fits summed over parts
// take it as Whole.Shift.
func (s *Spread) Shift() []float64 {
	sd := make([]float64, len(s.SS))
	for k := range sd {
		sd[k] = math.Sqrt(s.SS[k] / s.Weight)
	}
	return shiftOf(s.Mean, sd)
}

// Centred is d with the predictors less shift (one value per predictor
// or fewer, the later ones unshifted; a copy of X, the other arrays
// shared): the rows a fit summed over parts evaluates when its
// Whole.Shift is set.
func (d *Data) Centred(shift []float64) (*Data, error) {
	if len(shift) > d.width() {
		return nil, fmt.Errorf("a shift of %d predictors for data with %d", len(shift), d.width())
	}
	if !finite(shift) {
		return nil, errors.New("a shift that is not a finite number")
	}
	c := centringBy(shift, len(d.Predictors))
	if c == nil {
		return d, nil
	}
	return c.data(d), nil
}

// data is d with the shifted columns of X centred (a copy of X; the other
// arrays shared).
func (c *centring) data(d *Data) *Data {
	cd := *d
	cd.uncentred = d
	if d.uncentred != nil {
		cd.uncentred = d.uncentred
	}
	w := d.width()
	cd.X = make([]float64, len(d.X))
	for i := 0; i < len(d.X); i += w {
		for k := 0; k < w; k++ {
			cd.X[i+k] = d.X[i+k] - c.shift[k]
		}
	}
	return &cd
}

// offsets are c'b_m for each equation m, from the slopes matrix B
// ((J-1) x K, row-major).
func (c *centring) offsets(B []float64, q, K int) []float64 {
	out := make([]float64, q)
	for j := 0; j < q; j++ {
		for k := 0; k < K; k++ {
			if c.shift[k] != 0 {
				out[j] += c.shift[k] * B[j*K+k]
			}
		}
	}
	return out
}

// start is a start in the data's units (theta, of model m) in centred
// coordinates.
func (c *centring) start(m Model, J int, predictors []string, theta []float64) []float64 {
	ly, err := newLayout(m, J, predictors)
	if err != nil || len(theta) != len(ly.params) {
		return theta // the fit refuses it with its own message
	}
	out := append([]float64(nil), theta...)
	for j, o := range c.offsets(ly.effects(theta, m.Effects), J-1, ly.K) {
		out[ly.cut[j]] -= o
	}
	return out
}

// restore gives the result r of a fit in centred coordinates in the units
// of the data: the cutpoints tau_m = tau'_m + c'b_m, the covariance
// G V G' with the Jacobian G of that map, and the score G^-T g' (the
// cutpoints' unchanged, a slope parameter's less sum_m g'_tau_m times the
// derivative of c'b_m by it) with its largest absolute value. The
// log-likelihood, the slopes, the common factors and their errors are the
// same in both coordinates. The condition number stays that of the
// centred coordinates, where the iterations ran (Result.Condition), and
// r.Centred names the predictors shifted. r's slices are replaced, never
// written, so that a copy kept for later fits keeps its values.
func (c *centring) restore(r *Result) {
	if r == nil {
		return
	}
	r.last = nil // sums of the centred rows
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil || len(r.Estimates) != len(ly.params) {
		return
	}
	q, K, P := r.J-1, ly.K, len(ly.params)
	B := ly.effects(r.Estimates, r.Model.Effects)
	off := c.offsets(B, q, K)
	est := append([]float64(nil), r.Estimates...)
	cut := make([]float64, q)
	for j := 0; j < q; j++ {
		est[ly.cut[j]] += off[j]
		cut[j] = est[ly.cut[j]]
	}
	r.Estimates, r.Cutpoints = est, cut
	r.Centred = nil
	for k, s := range c.shift {
		if s != 0 && k < len(r.Predictors) {
			r.Centred = append(r.Centred, r.Predictors[k])
		}
	}
	G := c.jacobian(ly, r.Estimates)
	if len(r.score) == P {
		g := append([]float64(nil), r.score...)
		for j := 0; j < q; j++ {
			gc, row := r.score[ly.cut[j]], G[ly.cut[j]*P:(ly.cut[j]+1)*P]
			for a, v := range row {
				if a != ly.cut[j] && v != 0 {
					g[a] -= v * gc
				}
			}
		}
		r.score, r.MaxAbsScore = g, 0
		for _, v := range g {
			r.MaxAbsScore = math.Max(r.MaxAbsScore, math.Abs(v))
		}
	}
	if len(r.Cov) != P*P {
		return
	}
	cov := make([]float64, P*P)
	// cov = G V G', skipping G's zeros so that the NaN rows of parameters
	// not identified reach only the cutpoints that depend on them.
	tmp := make([]float64, P*P)
	for i := 0; i < P; i++ {
		for a := 0; a < P; a++ {
			if g := G[i*P+a]; g != 0 {
				for j := 0; j < P; j++ {
					tmp[i*P+j] += g * r.Cov[a*P+j]
				}
			}
		}
	}
	for i := 0; i < P; i++ {
		for j := 0; j < P; j++ {
			s := 0.0
			for b := 0; b < P; b++ {
				if g := G[j*P+b]; g != 0 {
					s += tmp[i*P+b] * g
				}
			}
			cov[i*P+j] = s
		}
	}
	se := make([]float64, P)
	for i := range se {
		se[i] = math.Sqrt(cov[i*P+i])
	}
	r.Cov, r.StdErrors = cov, se
}

// jacobian is the derivative of the parameters in the data's units by
// those in centred coordinates (P x P, row-major) at theta: the identity,
// and for each cutpoint tau_m the derivatives of c'b_m by the slope
// parameters.
func (c *centring) jacobian(ly *layout, theta []float64) []float64 {
	P, q := len(ly.params), ly.J-1
	G := make([]float64, P*P)
	for i := 0; i < P; i++ {
		G[i*P+i] = 1
	}
	phis := make([][]float64, len(ly.groups))
	for d := range ly.groups {
		phis[d] = ly.phi(theta, d)
	}
	for p, pa := range ly.params {
		for j := 0; j < q; j++ {
			v := 0.0
			switch pa.kind {
			case pParallel:
				v = c.shift[pa.k]
			case pFree:
				if pa.m == j {
					v = c.shift[pa.k]
				}
			case pGamma:
				v = c.shift[pa.k] * phis[pa.group][j]
			case pPhi:
				if pa.m == j {
					for _, k := range ly.groups[pa.group] {
						v += c.shift[k] * theta[ly.slope[k]]
					}
				}
			}
			if v != 0 {
				G[ly.cut[j]*P+p] = v
			}
		}
	}
	return G
}
