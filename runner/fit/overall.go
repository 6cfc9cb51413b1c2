package fit

import (
	"fmt"
	"math"
)

// This file holds what summarizes a fit as a whole: exponentiated effects
// (odds ratios of logit models), the thresholds-only (null) model, the
// likelihood-ratio test against it and pseudo-R2 measures. The formulas and
// their published sources are listed in docs/models.md ("Overall fit").

// OddsRatioKind names the odds ratio exp(b) of a logit model in each
// comparison: what odds a unit increase of the predictor multiplies.
func OddsRatioKind(m Model) string {
	switch {
	case m.Comparison == Cumulative:
		return "cumulative odds ratio"
	case m.Comparison == Stage && m.Backward:
		return "backward continuation odds ratio"
	case m.Comparison == Stage:
		return "continuation odds ratio"
	}
	return "adjacent-category odds ratio"
}

// OddsRatioMeaning says in words which odds exp(b_m) multiplies at
// boundary m (categories lo and hi on either side of it).
func OddsRatioMeaning(m Model, lo, hi string) string {
	switch {
	case m.Comparison == Cumulative:
		return fmt.Sprintf("odds of a category above %s against %s or below", lo, lo)
	case m.Comparison == Stage && m.Backward:
		return fmt.Sprintf("odds of %s against a category below it, among categories up to %s", hi, hi)
	case m.Comparison == Stage:
		return fmt.Sprintf("odds of a category above %s against %s, among categories from %s up", lo, lo, lo)
	}
	return fmt.Sprintf("odds of %s against %s", hi, lo)
}

// OddsRatio is exp(b_mk) of one predictor at one boundary (or at every
// boundary, Boundary = 0, for a parallel predictor), with its interval
// exp(b -/+ z se) (z the normal quantile, or t's on a pooled fit: see
// Inference).
type OddsRatio struct {
	Predictor string  `json:"predictor"`
	Boundary  int     `json:"boundary"` // 1..J-1, or 0 when one value holds at every boundary
	Kind      string  `json:"kind"`
	Log       float64 `json:"log_estimate"` // b_mk
	LogSE     float64 `json:"log_se"`
	Ratio     float64 `json:"ratio"`
	Low       float64 `json:"low"`
	High      float64 `json:"high"`
	// DF is the degrees of freedom of the t its interval (and a p-value)
	// refers to (referenceDF of the log's gradient: the smallest among
	// the parameters it moves; +Inf: the normal), for the tables' column df.
	DF float64 `json:"-"`
}

// OddsRatios returns exp(b_mk) with intervals at the given level for every
// predictor of a logit fit: one value for a parallel predictor, one per
// boundary for a nonparallel one, and exp(phi_m g_k) per boundary for a
// constrained one, whose standard error on the log scale comes from the
// delta method (b_mk = phi_m g_k is bilinear: db/dg = phi_m, db/dphi_m =
// g_k).
func (r *Result) OddsRatios(level float64) ([]OddsRatio, error) {
	ly, err := r.oddsRatioLayout(level)
	if err != nil {
		return nil, err
	}
	kind := OddsRatioKind(r.Model)
	var out []OddsRatio
	add := func(k, m int, g []float64) {
		b := r.Effects[max(m-1, 0)][k]
		se := math.Sqrt(r.variance(g))
		df := r.referenceDF(g)
		z := TQuantile(0.5+level/2, df)
		out = append(out, OddsRatio{Predictor: r.Predictors[k], Boundary: m, Kind: kind, Log: b, LogSE: se,
			Ratio: math.Exp(b), Low: math.Exp(b - z*se), High: math.Exp(b + z*se), DF: df})
	}
	for k := range r.Model.Effects {
		gs := r.slopeGradients(ly, k)
		if len(gs) == 1 {
			add(k, 0, gs[0])
			continue
		}
		for m, g := range gs {
			add(k, m+1, g)
		}
	}
	return out, nil
}

// oddsRatioLayout checks that fit r has odds ratios at the level (a usable
// logit fit) and gives its parameters' layout.
func (r *Result) oddsRatioLayout(level float64) (*layout, error) {
	if r.Model.Link != Logit {
		return nil, fmt.Errorf("odds ratios exist for logit links only, not %s", r.Model.Link)
	}
	if !r.OK() || r.Cov == nil {
		return nil, fmt.Errorf("%s has no usable estimates (%s)", r.Name, r.Status)
	}
	if !(level > 0 && level < 1) {
		return nil, fmt.Errorf("confidence level %g outside (0, 1)", level)
	}
	return newLayout(r.Model, r.J, r.Predictors)
}

// slopeGradients gives the gradient in the parameters of column k's slope
// b_mk: one (the same at every boundary) for a parallel column, one per
// boundary for a nonparallel or constrained one (b_mk = phi_m g_k is
// bilinear: db/dg = phi_m, db/dphi_m = g_k), none for another structure.
func (r *Result) slopeGradients(ly *layout, k int) [][]float64 {
	q, P := r.J-1, len(r.Estimates)
	s := ly.slope[k]
	switch r.Model.Effects[k] {
	case Parallel:
		g := make([]float64, P)
		g[s] = 1
		return [][]float64{g}
	case Nonparallel:
		out := make([][]float64, q)
		for m := range out {
			out[m] = make([]float64, P)
			out[m][s+m] = 1
		}
		return out
	case Constrained:
		grp := ly.groupOf[k]
		phi := ly.phi(r.Estimates, grp)
		out := make([][]float64, q)
		for m := range out {
			g := make([]float64, P)
			g[s] = phi[m]
			if m > 0 {
				g[ly.phiIndex[grp][m]] = r.Estimates[s]
			}
			out[m] = g
		}
		return out
	}
	return nil
}

// CombinedOddsRatio is exp(sum_k d_k b_mk), the odds ratio of a change
// that moves several model columns at once (one level of a categorical
// predictor against another: the difference of the two levels' coded
// columns), with the Wald z (or t on a pooled fit) of its log and the
// two-sided p-value.
type CombinedOddsRatio struct {
	OddsRatio
	Z float64 `json:"z"`
	P float64 `json:"p"`
}

// OddsRatioOf is the odds ratio exp(sum_k d_k b_mk) of a logit fit for the
// change d of its model columns (len(d) columns, in the fit's order),
// named name: one value at every boundary (Boundary 0) when every column d
// moves is parallel, else one per boundary. Its log's standard error is the
// delta method's on the whole covariance, sum_k d_k times each slope's
// gradient; the reference of the interval and p-value is as for the
// odds ratios (see Inference).
func (r *Result) OddsRatioOf(name string, d []float64, level float64) ([]CombinedOddsRatio, error) {
	if len(d) != len(r.Predictors) {
		return nil, fmt.Errorf("a change of %d columns, the fit has %d", len(d), len(r.Predictors))
	}
	ly, err := r.oddsRatioLayout(level)
	if err != nil {
		return nil, err
	}
	q, P := r.J-1, len(r.Estimates)
	bounds := 1
	for k, dk := range d {
		if dk == 0 {
			continue
		}
		switch r.Model.Effects[k] {
		case Parallel:
		case Nonparallel, Constrained:
			bounds = q
		default:
			return nil, fmt.Errorf("column %s has no odds ratio of its own in %s", r.Predictors[k], r.Name)
		}
	}
	kind := OddsRatioKind(r.Model)
	out := make([]CombinedOddsRatio, bounds)
	for m := range out {
		b, g := 0.0, make([]float64, P)
		for k, dk := range d {
			if dk == 0 {
				continue
			}
			gs := r.slopeGradients(ly, k)
			gk := gs[min(m, len(gs)-1)]
			b += dk * r.Effects[m][k]
			for a, v := range gk {
				g[a] += dk * v
			}
		}
		se := math.Sqrt(r.variance(g))
		df := r.referenceDF(g)
		z := TQuantile(0.5+level/2, df)
		o := CombinedOddsRatio{OddsRatio: OddsRatio{Predictor: name, Boundary: m + 1, Kind: kind, Log: b, LogSE: se,
			Ratio: math.Exp(b), Low: math.Exp(b - z*se), High: math.Exp(b + z*se), DF: df}, P: 1}
		if bounds == 1 {
			o.Boundary = 0
		}
		switch {
		case math.IsNaN(se):
			o.Z, o.P = math.NaN(), math.NaN() // not estimable (NotEstimable)
		case se > 0:
			o.Z = b / se
			o.P = TSurvival2(o.Z, df)
		}
		out[m] = o
	}
	return out, nil
}

// NullModel is the thresholds-only model of m: the same comparison,
// direction and link with no predictor (the offset, if any, kept).
func NullModel(m Model) Model {
	return Model{Comparison: m.Comparison, Backward: m.Backward, Link: m.Link}
}

// FitNull fits the thresholds-only model of m to the outcome (weights and
// offset) of d.
func FitNull(d *Data, m Model, opt Options) (*Result, error) {
	nd := &Data{Y: d.Y, J: d.J, Categories: d.Categories, Weights: d.Weights, Offset: d.Offset}
	opt.Start = nil
	return Fit(nd, NullModel(m), opt)
}

// Overall is the overall fit of a model against its thresholds-only model.
// A measure that is not defined for the model is NaN, with the reason in
// the matching note.
type Overall struct {
	NullLogLik float64 `json:"null_loglik"`
	LR         Test    `json:"lr_vs_null"`
	McFadden   float64 `json:"mcfadden_r2"`
	CoxSnell   float64 `json:"cox_snell_r2"`
	Nagelkerke float64 `json:"nagelkerke_r2"`
	// McKelvey-Zavoina: var(x'b) / (var(x'b) + var of the link's
	// distribution), cumulative models with parallel effects only; x'b
	// without the offset, which the thresholds-only model has too.
	McKelveyZavoina float64 `json:"mckelvey_zavoina_r2"`
	MZNote          string  `json:"mckelvey_zavoina_note,omitempty"`
}

// OverallFit compares fit r with its thresholds-only fit null on data d
// (the rows r was fitted to; used for the McKelvey-Zavoina variance).
func OverallFit(d *Data, r, null *Result) Overall {
	var s EtaSpread
	if d != nil && d.N() > 0 && len(d.Predictors) == len(r.Predictors) {
		s.Add(d, r)
	}
	return OverallFitSpread(r, null, &s)
}

// OverallFitSpread is OverallFit with the spread of the linear predictor
// over the rows gathered beforehand (by parts, for a fit summed over
// partitions); an empty spread leaves McKelvey-Zavoina out.
func OverallFitSpread(r, null *Result, s *EtaSpread) Overall {
	o := Overall{NullLogLik: math.NaN(), McFadden: math.NaN(), CoxSnell: math.NaN(), Nagelkerke: math.NaN(), McKelveyZavoina: math.NaN()}
	if null != nil && null.LikelihoodUsable() {
		o.NullLogLik = null.LogLik
	}
	o.LR = LRTest(null, r)
	o.LR.Name = "lr_vs_null"
	if r == nil || !r.OK() || math.IsNaN(o.NullLogLik) {
		o.MZNote = "no finite log-likelihood"
		return o
	}
	ll, ll0, n := r.LogLik, o.NullLogLik, r.NObs
	o.McFadden = 1 - ll/ll0
	// Cox-Snell: 1 - (L0/L)^(2/N); its largest value 1 - L0^(2/N).
	o.CoxSnell = -math.Expm1(2 * (ll0 - ll) / n)
	o.Nagelkerke = o.CoxSnell / -math.Expm1(2*ll0/n)
	o.McKelveyZavoina, o.MZNote = mckelveyZavoina(r, s)
	return o
}

// EtaSpread is the weighted mean and sum of squared deviations of the
// predictors' part of the linear predictor, eta = x'b, over rows (divisor:
// the sum of weights), gathered part by part. An offset is left out: it is
// a known part of every model's linear predictor, the thresholds-only
// model's too, so its variance is not explained by the predictors (as the
// likelihood-based measures, computed against the thresholds-only model
// with the offset, count only what the predictors add to it).
type EtaSpread struct {
	W, Mean, M2 float64
}

// Add gathers the rows of d (their weights) at the equation-1 slopes of
// r, by West's weighted update of the mean and sum of squares.
func (s *EtaSpread) Add(d *Data, r *Result) {
	K, n := len(r.Predictors), d.N()
	b, x := r.Effects[0][:K], d.X[:n*K]
	for i := 0; i < n; i++ {
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		if w == 0 {
			continue
		}
		eta := 0.0
		for k, v := range x[i*K : (i+1)*K] {
			eta += v * b[k]
		}
		s.W += w
		delta := eta - s.Mean
		s.Mean += w / s.W * delta
		s.M2 += w * delta * (eta - s.Mean)
	}
}

// LinkVariance is the variance of the distribution whose distribution
// function is the inverse link (the latent error of a cumulative model);
// ok is false when it has none (Cauchy).
func LinkVariance(l Link) (float64, bool) {
	switch l {
	case Logit:
		return math.Pi * math.Pi / 3, true
	case Probit:
		return 1, true
	case Cloglog, Loglog:
		return math.Pi * math.Pi / 6, true
	}
	return math.NaN(), false
}

// mckelveyZavoina is var(eta) / (var(eta) + var(e)) with the spread of
// eta = x'b (no offset: EtaSpread) over the rows of the fit.
func mckelveyZavoina(r *Result, s *EtaSpread) (float64, string) {
	if r.Model.Comparison != Cumulative {
		return math.NaN(), "defined for cumulative models only (one latent variable)"
	}
	for _, e := range r.Model.Effects {
		if e != Parallel {
			return math.NaN(), "defined for parallel effects only (one latent linear predictor)"
		}
	}
	ve, ok := LinkVariance(r.Model.Link)
	if !ok {
		return math.NaN(), "the Cauchy distribution has no variance"
	}
	if s == nil || s.W == 0 {
		return math.NaN(), "data not available"
	}
	v := s.M2 / s.W
	return v / (v + ve), ""
}
