package impute

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Set is the analysis of one imputed data set: the estimates (P) and
// their covariance (P x P, row-major).
type Set struct {
	Est []float64
	Cov []float64
}

// Pooled is the combination of M analyses by Rubin's rules.
type Pooled struct {
	M, P int
	// DFComplete is the degrees of freedom the analysis would have had
	// without missing values (+Inf for a large-sample analysis); it enters
	// the Barnard-Rubin degrees of freedom.
	DFComplete float64
	Estimate   []float64 // the mean of the M estimates
	Within     []float64 // P x P: the mean of the M covariances
	Between    []float64 // P x P: the covariance of the estimates over the sets (divisor M-1)
	Total      []float64 // P x P: Within + (1 + 1/M) Between
	SE         []float64 // square roots of the diagonal of Total
	// Per parameter: the relative increase in variance (1+1/M) B / W, the
	// share of the total variance due to missing values (1+1/M) B / T, the
	// Barnard-Rubin degrees of freedom and the fraction of missing
	// information (r + 2/(df+3)) / (r + 1).
	RIV, Lambda, DF, FMI []float64
}

// Pool combines the analyses of the imputed sets by Rubin's rules. At
// least two sets are needed, all with the same number of parameters and
// finite numbers; dfComplete > 0 (or +Inf).
func Pool(sets []Set, dfComplete float64) (*Pooled, error) {
	m := len(sets)
	if m < 2 {
		return nil, fmt.Errorf("pooling needs at least two imputed data sets, got %d", m)
	}
	if !(dfComplete > 0) {
		return nil, fmt.Errorf("complete-data degrees of freedom must be positive, got %g", dfComplete)
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
	r := &Pooled{M: m, P: p, DFComplete: dfComplete,
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
		w, b, t := r.Within[j*p+j], r.Between[j*p+j], r.Total[j*p+j]
		r.SE[j] = math.Sqrt(t)
		r.RIV[j] = (1 + 1/fm) * b / w
		r.Lambda[j] = (1 + 1/fm) * b / t
		r.DF[j] = BarnardRubinDF(m, r.Lambda[j], dfComplete)
		r.FMI[j] = (r.RIV[j] + 2/(r.DF[j]+3)) / (r.RIV[j] + 1)
	}
	return r, nil
}

// BarnardRubinDF is the degrees of freedom of a pooled estimate with
// lambda = (1+1/m) B / T, adjusted for a complete-data analysis with
// dfComplete degrees of freedom (Barnard and Rubin 1999):
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
	Method   string // "D1" or "D3"
	F        float64
	DF1      int
	DF2, P   float64
	RIV      float64
	Imputed  int // number of imputed sets
	Warnings string
}

// pooledTestDF is the denominator degrees of freedom shared by D1 and D3
// (Li, Raghunathan and Rubin 1991): with t = k(m-1), 4 + (t-4)(1 +
// (1-2/t)/r)^2 when t > 4, else t(1+1/k)(1+1/r)^2/2.
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

// D1 tests C theta = c0 (C: k x P, row-major; c0 nil for zeros) with the
// pooled Wald statistic of Li, Raghunathan and Rubin (1991):
// D1 = d' W_c^-1 d / (k (1 + r)), d = C Qbar - c0, W_c = C W C',
// r = (1 + 1/m) tr(B_c W_c^-1) / k, referred to F(k, df) with the
// degrees of freedom of pooledTestDF.
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
	q := mat.Inner(d, &Wi, d)
	f := q / (float64(k) * (1 + r))
	df2 := pooledTestDF(k, p.M, r)
	return FTest{Method: "D1", F: f, DF1: k, DF2: df2, P: fSurvival(f, k, df2), RIV: r, Imputed: p.M}, nil
}

// D3 pools likelihood-ratio tests (Meng and Rubin 1992). own[i] is the
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
		r = 0
		warn = "the statistics at the pooled estimates exceed those at each set's own (r < 0, set to 0)"
	}
	f := mp / (fk * (1 + r))
	df2 := pooledTestDF(k, m, r)
	return FTest{Method: "D3", F: f, DF1: k, DF2: df2, P: fSurvival(f, k, df2), RIV: r, Imputed: m, Warnings: warn}, nil
}
