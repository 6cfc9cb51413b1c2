package impute

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"ordplan/runner/fit"
)

// Set is the analysis of one imputed data set: the estimates (P) and
// their covariance (P x P, row-major).
type Set struct {
	Est []float64
	Cov []float64
}

// Complete is the complete-data analysis whose references Rubin's rules
// adjust: what its inference would refer to on data without missing
// values. DF is the degrees of freedom of a single estimate's t (+Inf:
// the normal); it enters the Barnard-Rubin degrees of freedom. Clusters,
// when above 0, says that the covariance is cluster-robust from G =
// Clusters clusters: a single estimate then refers to t on G-1 (DF is
// G-1) and a joint Wald statistic W of q restrictions as W (G-q)/((G-1) q)
// to F(q, G-q) (Joint).
type Complete struct {
	DF       float64
	Clusters int
}

// Joint is the complete-data reference of a joint Wald test of q
// restrictions: the factor its statistic W/q is multiplied by and the
// denominator degrees of freedom of the F it is referred to. Under a
// cluster-robust covariance from G clusters (G-q)/(G-1) and G-q (with q =
// 1: 1 and G-1, the single estimate's t squared); otherwise 1 and DF.
func (c Complete) Joint(q int) (scale, df float64) {
	if c.Clusters > 0 {
		g := float64(c.Clusters)
		return (g - float64(q)) / (g - 1), g - float64(q)
	}
	return 1, c.DF
}

// Pooled is the combination of M analyses by Rubin's rules.
type Pooled struct {
	M, P int
	// Complete is the analysis the sets had without missing values.
	Complete Complete
	Estimate []float64 // the mean of the M estimates
	Within   []float64 // P x P: the mean of the M covariances
	Between  []float64 // P x P: the covariance of the estimates over the sets (divisor M-1)
	Total    []float64 // P x P: Within + (1 + 1/M) Between
	SE       []float64 // square roots of the diagonal of Total
	// Per parameter: the relative increase in variance (1+1/M) B / W, the
	// share of the total variance due to missing values (1+1/M) B / T, the
	// Barnard-Rubin degrees of freedom and the fraction of missing
	// information (r + 2/(df+3)) / (r + 1).
	RIV, Lambda, DF, FMI []float64
}

// Pool combines the analyses of the imputed sets by Rubin's rules. At
// least two sets are needed, all with the same number of parameters and
// finite numbers; c.DF > 0 (or +Inf), and under clusters c.DF = G-1.
func Pool(sets []Set, c Complete) (*Pooled, error) {
	m := len(sets)
	if m < 2 {
		return nil, fmt.Errorf("pooling needs at least two imputed data sets, got %d", m)
	}
	dfComplete := c.DF
	if !(dfComplete > 0) {
		return nil, fmt.Errorf("complete-data degrees of freedom must be positive, got %g", dfComplete)
	}
	if c.Clusters > 0 && dfComplete != float64(c.Clusters-1) {
		return nil, fmt.Errorf("complete-data degrees of freedom %g under a cluster-robust covariance from %d clusters, not G-1", dfComplete, c.Clusters)
	}
	p := len(sets[0].Est)
	for i, s := range sets {
		if len(s.Est) != p || len(s.Cov) != p*p {
			return nil, fmt.Errorf("imputed set %d has %d estimates and %d covariance entries; set 1 has %d and %d", i+1, len(s.Est), len(s.Cov), p, p*p)
		}
		for _, v := range s.Est {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("imputed set %d has an estimate that is not a finite number", i+1)
			}
		}
		for _, v := range s.Cov {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("imputed set %d has a covariance that is not a finite number", i+1)
			}
		}
	}
	fm := float64(m)
	r := &Pooled{M: m, P: p, Complete: c,
		Estimate: make([]float64, p), Within: make([]float64, p*p), Between: make([]float64, p*p), Total: make([]float64, p*p),
		SE: make([]float64, p), RIV: make([]float64, p), Lambda: make([]float64, p), DF: make([]float64, p), FMI: make([]float64, p)}
	// Means.
	for _, s := range sets {
		for j, v := range s.Est {
			r.Estimate[j] += v / fm
		}
		for j, v := range s.Cov {
			r.Within[j] += v / fm
		}
	}
	// Between: sum of centred cross-products over m-1.
	for _, s := range sets {
		for a := 0; a < p; a++ {
			da := s.Est[a] - r.Estimate[a]
			for b := 0; b < p; b++ {
				r.Between[a*p+b] += da * (s.Est[b] - r.Estimate[b]) / (fm - 1)
			}
		}
	}
	for j := range r.Total {
		r.Total[j] = r.Within[j] + (1+1/fm)*r.Between[j]
	}
	for j := 0; j < p; j++ {
		s := scalarRules(m, r.Estimate[j], r.Within[j*p+j], r.Between[j*p+j], dfComplete)
		r.SE[j], r.RIV[j], r.Lambda[j], r.DF[j], r.FMI[j] = s.SE, s.RIV, s.Lambda, s.DF, s.FMI
	}
	return r, nil
}

// Linear is Rubin's rules for the linear combination r'theta - c of the
// pooled parameters: its mean over the sets, within variance r'Wr and
// between variance r'Br (exactly what pooling the sets' values of
// r'theta - c gives).
func (p *Pooled) Linear(r []float64, c float64) Scalar {
	q, w, b := -c, 0.0, 0.0
	for a := 0; a < p.P; a++ {
		if r[a] == 0 {
			continue
		}
		q += r[a] * p.Estimate[a]
		for k := 0; k < p.P; k++ {
			w += r[a] * p.Within[a*p.P+k] * r[k]
			b += r[a] * p.Between[a*p.P+k] * r[k]
		}
	}
	return scalarRules(p.M, q, w, b, p.Complete.DF)
}

// Scalar is Rubin's rules for one quantity: the pooled estimate, the
// within, between and total variance, the total standard error, the
// relative increase in variance, lambda, the Barnard-Rubin degrees of
// freedom and the fraction of missing information (as in Pooled).
type Scalar struct {
	Estimate float64
	Within   float64
	Between  float64
	Total    float64
	SE       float64
	RIV      float64
	Lambda   float64
	DF       float64
	FMI      float64
}

// scalarRules finishes Rubin's rules for one quantity from its mean q, its
// mean within-set variance w and its between-set variance b over m sets.
func scalarRules(m int, q, w, b, dfComplete float64) Scalar {
	fm := float64(m)
	t := w + (1+1/fm)*b
	s := Scalar{Estimate: q, Within: w, Between: b, Total: t, SE: math.Sqrt(t)}
	switch {
	case b == 0:
		// No spread between the sets (also when every set's variance is
		// 0): nothing is added for missing data.
		s.RIV, s.Lambda = 0, 0
	case w == 0:
		// All the variance is between the sets: the limit of the ratios.
		s.RIV, s.Lambda = math.Inf(1), 1
	default:
		s.RIV = (1 + 1/fm) * b / w
		s.Lambda = (1 + 1/fm) * b / t
	}
	s.DF = BarnardRubinDF(m, s.Lambda, dfComplete)
	if math.IsInf(s.RIV, 1) {
		s.FMI = 1
	} else {
		s.FMI = (s.RIV + 2/(s.DF+3)) / (s.RIV + 1)
	}
	return s
}

// PoolScalar combines one quantity computed on each of the imputed sets:
// q[i] its value and u[i] its variance (squared standard error) in set i.
// It is Pool for one parameter.
func PoolScalar(q, u []float64, dfComplete float64) (Scalar, error) {
	if len(q) != len(u) {
		return Scalar{}, fmt.Errorf("%d values but %d variances", len(q), len(u))
	}
	sets := make([]Set, len(q))
	for i := range q {
		sets[i] = Set{Est: q[i : i+1], Cov: u[i : i+1]}
	}
	p, err := Pool(sets, Complete{DF: dfComplete})
	if err != nil {
		return Scalar{}, err
	}
	return scalarRules(p.M, p.Estimate[0], p.Within[0], p.Between[0], dfComplete), nil
}

// Interval is the two-sided interval at the given level (0.95: 95%) of a
// pooled quantity, from t on its degrees of freedom (normal when they are
// infinite), and the two-sided p-value of estimate / SE.
func (s Scalar) Interval(level float64) (low, high, p float64) {
	h := fit.TQuantile(0.5+level/2, s.DF) * s.SE
	p = 1
	if s.SE > 0 {
		p = fit.TSurvival2(s.Estimate/s.SE, s.DF)
	}
	return s.Estimate - h, s.Estimate + h, p
}

// BarnardRubinDF is the degrees of freedom of a pooled estimate with
// lambda = (1+1/m) B / T, adjusted for a complete-data analysis with
// dfComplete degrees of freedom (the Barnard-Rubin degrees of freedom):
// 1/df = 1/df_old + 1/df_obs with df_old = (m-1)/lambda^2 and
// df_obs = (dfc+1)/(dfc+3) dfc (1-lambda). With dfComplete = +Inf it is
// Rubin's df_old; with lambda = 0 it is df_obs.
func BarnardRubinDF(m int, lambda, dfComplete float64) float64 {
	old := math.Inf(1)
	if lambda > 0 {
		old = float64(m-1) / (lambda * lambda)
	}
	if math.IsInf(dfComplete, 1) {
		return old
	}
	obs := (dfComplete + 1) / (dfComplete + 3) * dfComplete * (1 - lambda)
	if math.IsInf(old, 1) {
		return obs
	}
	return old * obs / (old + obs)
}

// FTest is a pooled test: an F statistic on DF1 and DF2 degrees of
// freedom (DF2 may be +Inf: a chi-square on DF1 over DF1), its p-value and
// the average relative increase in variance it used.
type FTest struct {
	Method   string // "D1", "D2" or "D3"
	F        float64
	DF1      int
	DF2, P   float64
	RIV      float64
	Imputed  int // number of imputed sets
	Warnings string
	// D1: the quadratic form over (1 + RIV), before its division by the
	// restrictions and the complete-data factor, and the complete-data
	// analysis, which Referred reads.
	quad     float64
	complete Complete
}

// Referred is t referred to k numerator degrees of freedom in place of
// its own. D3: the same statistic DF1 x F, as F = DF1 F / k on (k,
// pooledTestDF(k, m, RIV)) degrees of freedom. D1: its quadratic form
// over k with the complete-data factor and degrees of freedom of k
// restrictions (d1Reference). A hypothesis with no reference of its own
// dimension (a whole constraint group, whose common factor it leaves
// unidentified) is referred so to the reference of a larger model it is
// nested in.
func (t FTest) Referred(k int) FTest {
	if k == t.DF1 || k < 1 {
		return t
	}
	if t.Method == "D1" {
		t.F, t.DF2 = d1Reference(t.quad, k, t.Imputed, t.RIV, t.complete)
		t.DF1 = k
		t.P = fit.FSurvival(t.F, k, t.DF2)
		return t
	}
	t.F = t.F * float64(t.DF1) / float64(k)
	t.DF1, t.DF2 = k, pooledTestDF(k, t.Imputed, t.RIV)
	t.P = fit.FSurvival(t.F, k, t.DF2)
	return t
}

// pooledTestDF is the large-sample denominator degrees of freedom of a
// pooled test of k restrictions (D3; D1 where d1DF has no small-sample
// value): with t = k(m-1), 4 + (t-4)(1 + (1-2/t)/r)^2 when t > 4, else
// t(1+1/k)(1+1/r)^2/2.
func pooledTestDF(k, m int, r float64) float64 {
	if r <= 0 {
		return math.Inf(1)
	}
	t := float64(k * (m - 1))
	if t > 4 {
		a := 1 + (1-2/t)/r
		return 4 + (t-4)*a*a
	}
	a := 1 + 1/r
	return t * (1 + 1/float64(k)) * a * a / 2
}

// d1Reference is D1 of k restrictions with quadratic form over (1 + r)
// quad, on m sets, for the complete-data analysis c: the statistic quad/k
// times the complete-data factor of k restrictions (c.Joint: (G-q)/(G-1)
// under clusters, else 1) and its denominator degrees of freedom d1DF
// with the complete-data ones of k restrictions (G-k under clusters, else
// c.DF).
func d1Reference(quad float64, k, m int, r float64, c Complete) (f, df2 float64) {
	scale, nu := c.Joint(k)
	return scale * quad / float64(k), d1DF(k, m, r, nu)
}

// d1DF is the denominator degrees of freedom of D1 of k restrictions over
// m sets with average relative increase in variance r, for a complete-data
// F test on nu denominator degrees of freedom (+Inf: a chi-square). With
// one restriction, the Barnard-Rubin degrees of freedom of lambda =
// r/(1+r): D1 is then the square of the pooled estimate's t. With more
// and nu finite, the small-sample value: with t = k(m-1), a = r t/(t-2),
// nu* = (nu+1)/(nu+3) nu, c1 = nu* - 2(1+a), c2 = nu* - 4(1+a),
//
//	z = 1/c2 + (a^2 c1/((1+a)^2 c2) + 8 a^2 c1/((1+a) c2^2)
//	    + 4 a^2/((1+a) c2) + 4 a^2/(c2 c1) + 16 a^2 c1/c2^3 + 8 a^2/c2^2) / (t-4),
//
// df = 4 + 1/z, which is nu* when r = 0 and tends to the large-sample
// pooledTestDF as nu grows. Where that expression is not defined (t <= 4,
// c1 or c2 not above 0: few sets and restrictions, or few complete-data
// degrees of freedom against the missing information) the smaller of the
// large-sample value and nu*. With nu infinite, the large-sample value.
func d1DF(k, m int, r, nu float64) float64 {
	if k == 1 {
		return BarnardRubinDF(m, r/(1+r), nu)
	}
	large := pooledTestDF(k, m, r)
	if math.IsInf(nu, 1) {
		return large
	}
	vstar := (nu + 1) / (nu + 3) * nu
	if r <= 0 {
		return vstar
	}
	t := float64(k * (m - 1))
	a := r * t / (t - 2)
	c1, c2 := vstar-2*(1+a), vstar-4*(1+a)
	if t <= 4 || c1 <= 0 || c2 <= 0 {
		return math.Min(large, vstar)
	}
	a2 := a * a
	z := 1/c2 + (a2*c1/((1+a)*(1+a)*c2)+8*a2*c1/((1+a)*c2*c2)+4*a2/((1+a)*c2)+
		4*a2/(c2*c1)+16*a2*c1/(c2*c2*c2)+8*a2/(c2*c2))/(t-4)
	if !(z > 0) {
		return math.Min(large, vstar)
	}
	return 4 + 1/z
}

// D1 tests C theta = c0 (C: k x P, row-major; c0 nil for zeros) with the
// pooled Wald statistic d' W_c^-1 d / (1 + r), d = C Qbar - c0,
// W_c = C W C', r = (1 + 1/m) tr(B_c W_c^-1) / k, over k and times the
// complete-data factor of k restrictions (1; (G-k)/(G-1) under a
// cluster-robust covariance from G clusters: Complete.Joint), referred to
// F(k, df) with the degrees of freedom of d1DF for the complete-data
// degrees of freedom of k restrictions (p.Complete.DF; G-k under
// clusters). With one restriction (k = 1) df is the Barnard-Rubin degrees
// of freedom of the restriction (lambda = r/(1+r)): the t test of the
// pooled estimate, which the interval of Rubin's rules inverts.
func D1(p *Pooled, C []float64, c0 []float64) (FTest, error) {
	if len(C) == 0 || len(C)%p.P != 0 {
		return FTest{}, fmt.Errorf("the contrast matrix has %d entries, not a multiple of the %d parameters", len(C), p.P)
	}
	k := len(C) / p.P
	if c0 == nil {
		c0 = make([]float64, k)
	}
	if len(c0) != k {
		return FTest{}, fmt.Errorf("the hypothesis has %d rows but %d right-hand values", k, len(c0))
	}
	if _, nu := p.Complete.Joint(k); !(nu > 0) {
		return FTest{}, fmt.Errorf("%d restrictions need at least %d clusters, and the data have %d: a cluster-robust covariance from G clusters has rank at most G-1", k, k+1, p.Complete.Clusters)
	}
	Cm := mat.NewDense(k, p.P, C)
	W := mat.NewDense(p.P, p.P, p.Within)
	B := mat.NewDense(p.P, p.P, p.Between)
	var Wc, Bc, tmp mat.Dense
	tmp.Mul(Cm, W)
	Wc.Mul(&tmp, Cm.T())
	tmp.Reset()
	tmp.Mul(Cm, B)
	Bc.Mul(&tmp, Cm.T())
	var Wi mat.Dense
	if err := Wi.Inverse(&Wc); err != nil {
		return FTest{}, errors.New("the within-imputation covariance of the tested combinations is singular")
	}
	d := mat.NewVecDense(k, nil)
	d.MulVec(Cm, mat.NewVecDense(p.P, p.Estimate))
	for i := 0; i < k; i++ {
		d.SetVec(i, d.AtVec(i)-c0[i])
	}
	var BW mat.Dense
	BW.Mul(&Bc, &Wi)
	r := (1 + 1/float64(p.M)) * mat.Trace(&BW) / float64(k)
	quad := mat.Inner(d, &Wi, d) / (1 + r)
	f, df2 := d1Reference(quad, k, p.M, r, p.Complete)
	return FTest{Method: "D1", F: f, DF1: k, DF2: df2, P: fit.FSurvival(f, k, df2), RIV: r, Imputed: p.M, quad: quad, complete: p.Complete}, nil
}

// D3 pools likelihood-ratio tests. own[i] is the
// likelihood-ratio statistic 2(l_full - l_restricted) of set i with each
// model at its own estimates; atPooled[i] the same statistic with both
// models at their pooled estimates. k is the number of restrictions.
// r = (m+1)/(k(m-1)) (mean(own) - mean(atPooled)),
// D3 = mean(atPooled) / (k (1 + r)), referred to F(k, df) with the
// degrees of freedom of pooledTestDF. A negative r (sampling noise when
// little is missing) is set to 0, and the test is then the mean
// statistic at the pooled estimates over k, on (k, infinity) degrees of
// freedom; Warnings says so.
func D3(own, atPooled []float64, k int) (FTest, error) {
	m := len(own)
	if m < 2 {
		return FTest{}, fmt.Errorf("pooling needs at least two imputed data sets, got %d", m)
	}
	if len(atPooled) != m {
		return FTest{}, fmt.Errorf("%d statistics at the sets' own estimates but %d at the pooled ones", m, len(atPooled))
	}
	if k < 1 {
		return FTest{}, fmt.Errorf("the test has %d restrictions", k)
	}
	var mo, mp float64
	for i := range own {
		if math.IsNaN(own[i]) || math.IsNaN(atPooled[i]) || math.IsInf(own[i], 0) || math.IsInf(atPooled[i], 0) {
			return FTest{}, fmt.Errorf("imputed set %d has a likelihood-ratio statistic that is not a finite number", i+1)
		}
		mo += own[i] / float64(m)
		mp += atPooled[i] / float64(m)
	}
	fk := float64(k)
	r := (float64(m) + 1) / (fk * float64(m-1)) * (mo - mp)
	warn := ""
	if r < 0 {
		warn = fmt.Sprintf("D3's between-imputation part came out negative (r = %.3g: the %d sets' statistics at the pooled estimates average more than at their own) and was set to 0, so the test is the mean statistic at the pooled estimates on infinite denominator degrees of freedom, as if nothing were missing; by chance when the sets differ little, otherwise a sign that the imputations disagree in a way D3 does not allow for", r, m)
		r = 0
	}
	f := mp / (fk * (1 + r))
	df2 := pooledTestDF(k, m, r)
	return FTest{Method: "D3", F: f, DF1: k, DF2: df2, P: fit.FSurvival(f, k, df2), RIV: r, Imputed: m, Warnings: warn}, nil
}

// D2 pools chi-square statistics on k degrees of freedom, one per imputed
// set, when only the statistics are available: with dbar their mean and
// r = (1 + 1/m) times the variance (divisor m-1) of their square roots,
// D2 = (dbar/k - (m+1)/(m-1) r) / (1 + r), referred to F(k, v) with
// v = k^(-3/m) (m-1) (1 + 1/r)^2. A negative D2 (statistics that vary a
// lot between the sets relative to their size) is set to 0, p = 1, and
// Warnings says so. With identical statistics r = 0 and D2 is the
// statistic over k on (k, infinity) degrees of freedom: the chi-square
// test of one set. D2 is less powerful than D1 or D3 and approximate; it
// is used only where neither applies.
func D2(chi2 []float64, k int) (FTest, error) {
	m := len(chi2)
	if m < 2 {
		return FTest{}, fmt.Errorf("pooling needs at least two imputed data sets, got %d", m)
	}
	if k < 1 {
		return FTest{}, fmt.Errorf("the test has %d degrees of freedom", k)
	}
	fm, fk := float64(m), float64(k)
	var dbar, sbar float64
	for i, d := range chi2 {
		if math.IsNaN(d) || math.IsInf(d, 0) || d < 0 {
			return FTest{}, fmt.Errorf("imputed set %d has a chi-square statistic that is not a finite number 0 or more (%g)", i+1, d)
		}
		dbar += d / fm
		sbar += math.Sqrt(d) / fm
	}
	var v float64
	for _, d := range chi2 {
		e := math.Sqrt(d) - sbar
		v += e * e / (fm - 1)
	}
	r := (1 + 1/fm) * v
	f := (dbar/fk - (fm+1)/(fm-1)*r) / (1 + r)
	warn := ""
	if f < 0 {
		f = 0
		warn = "the statistic is negative (the sets' statistics vary more than their size allows) and is set to 0"
	}
	df2 := math.Inf(1)
	if r > 0 {
		a := 1 + 1/r
		df2 = math.Pow(fk, -3/fm) * (fm - 1) * a * a
	}
	return FTest{Method: "D2", F: f, DF1: k, DF2: df2, P: fit.FSurvival(f, k, df2), RIV: r, Imputed: m, Warnings: warn}, nil
}
