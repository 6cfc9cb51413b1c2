package fit

import (
	"fmt"
	"math"
	"strings"

	"ordplan/internal/words"
	"ordplan/render/numfmt"
)

// groupLabel names constraint group g in messages.
func groupLabel(ly *layout, g int) string {
	switch {
	case ly.gnames[g] != "":
		return fmt.Sprintf("of group %q", ly.gnames[g])
	case len(ly.groups) == 1:
		return "of the constrained predictors"
	}
	return fmt.Sprintf("of group g%d", g+1)
}

// Thresholds of identification of phi: effects of a group on the linear
// predictor (per standard deviation of each predictor) below phiZeroEffect
// vanish; |phi| above phiHuge means the equation-1 slopes vanish relative
// to the others; a standard error above phiHuge * max(1, |phi|) means the
// data do not determine phi.
const (
	phiZeroEffect = 1e-6
	phiHuge       = 1e6
	phiLarge      = 100
)

// markIdentification checks, at the chosen maximum, whether each group's phi
// is determined. When it is not, the status becomes StatusNotIdentified, the
// log-likelihood is kept, phi is NaN, and the other standard errors come
// from the information without that group's phi and gamma (holding its
// slopes at their estimates). Large but determined phi get a note.
func markIdentification(r *Result, ly *layout, pr *problem, st *newtonState, sd []float64, opt Options) {
	if math.IsInf(st.ll, -1) {
		return
	}
	bad, why := diagnosePhi(r, ly, st, sd)
	if len(bad) == 0 {
		return
	}
	drop := unidentifiedParams(ly, bad)
	cov, problem := identifiedCovariance(ly, pr, st, drop, opt)
	if problem != "" {
		// Something else is not determined either (e.g. separation), or the
		// identified part is not at its maximum: keep the engine's verdict
		// and add the phi diagnosis.
		r.Message = strings.Join(why, "; ") + problem + r.Message
		return
	}
	r.Estimates = append([]float64(nil), r.Estimates...)
	for _, g := range bad {
		for j := 1; j < ly.J-1; j++ {
			r.Estimates[ly.phiIndex[g][j]] = math.NaN()
			r.Phi[g][j] = math.NaN()
		}
	}
	r.settleNotIdentified(st.ll, cov, drop, covarianceType(opt), why, "phi is reported as NaN and the other standard errors hold these slopes at their estimates")
}

// diagnosePhi returns the constraint groups whose phi the maximum st does
// not determine, with the reason for each, and adds a note to r for a phi
// that is determined but large.
func diagnosePhi(r *Result, ly *layout, st *newtonState, sd []float64) (bad []int, why []string) {
	q := ly.J - 1
	for g, ks := range ly.groups {
		ph := ly.phi(st.theta, g)
		gs, pm := 0.0, 0.0
		for _, k := range ks {
			gs = math.Max(gs, math.Abs(st.theta[ly.slope[k]])*sd[k])
		}
		maxRef := 0
		for j, v := range ph {
			if math.Abs(v) > pm {
				pm, maxRef = math.Abs(v), j
			}
		}
		seBig := false
		if r.StdErrors != nil {
			for j := 1; j < q; j++ {
				i := ly.phiIndex[g][j]
				if !(r.StdErrors[i] <= phiHuge*math.Max(1, math.Abs(st.theta[i]))) {
					seBig = true
				}
			}
		}
		name := groupLabel(ly, g)
		switch {
		case gs*pm < phiZeroEffect:
			bad = append(bad, g)
			why = append(why, fmt.Sprintf("phi %s is not identified because gamma is near zero (largest |gamma_k| sd(x_k) = %.2g): these predictors have no effect, and every phi fits equally well", name, gs))
		case pm > phiHuge:
			bad = append(bad, g)
			why = append(why, fmt.Sprintf("phi %s is not identified in the normalization phi_1 = 1: the slopes of equation 1 are near zero relative to equation %d (|phi_%d| = %.2g); read the effects matrix", name, maxRef+1, maxRef+1, pm))
		case seBig:
			bad = append(bad, g)
			why = append(why, fmt.Sprintf("phi %s is not identified: its standard errors exceed %.0g times its size (gamma is too small to determine it, largest |gamma_k| sd(x_k) = %.2g)", name, phiHuge, gs))
		case pm > phiLarge:
			r.PhiNotes = append(r.PhiNotes, fmt.Sprintf("phi %s: the slopes of equation 1 are small relative to equation %d (|phi_%d| = %.3g); phi normalized by equation %d (PhiNormalized) is easier to read", name, maxRef+1, maxRef+1, pm, maxRef+1))
		}
	}
	return bad, why
}

// unidentifiedParams marks phi and gamma of the groups bad.
func unidentifiedParams(ly *layout, bad []int) []bool {
	drop := make([]bool, len(ly.params))
	for _, g := range bad {
		for j := 1; j < ly.J-1; j++ {
			drop[ly.phiIndex[g][j]] = true
		}
		for _, k := range ly.groups[g] {
			drop[ly.slope[k]] = true
		}
	}
	return drop
}

// identifiedCovariance inverts the information of the parameters not in
// drop, holding the dropped ones at their estimates, and returns it in the
// full parameter order (the dropped rows and columns zero). When those
// parameters are not determined either, or not at their maximum, it says
// so instead (a phrase that ends the diagnosis).
func identifiedCovariance(ly *layout, pr *problem, st *newtonState, drop []bool, opt Options) ([]float64, string) {
	P := len(ly.params)
	var keep []int
	for i := 0; i < P; i++ {
		if !drop[i] {
			keep = append(keep, i)
		}
	}
	H := st.hess
	if opt.Covariance == Expected {
		H = pr.expectedHessian(st.theta)
	}
	nk := len(keep)
	sub := make([]float64, nk*nk)
	gk := make([]float64, nk)
	for a, i := range keep {
		gk[a] = st.grad[i]
		for b, j := range keep {
			sub[a*nk+b] = -H[i*P+j]
		}
	}
	cov := make([]float64, P*P)
	if nk == 0 {
		return cov, ""
	}
	cond, _, pd := scaledCondition(sub, nk)
	if !pd || cond > conditionLimit {
		return nil, ". "
	}
	c, err := invertSym(sub, nk)
	if err != nil {
		return nil, ". "
	}
	// The identified part must be at its maximum.
	if dec := dot(gk, symMulVec(c, gk)); dec > 1e-8*math.Max(1, math.Abs(st.ll)) {
		return nil, fmt.Sprintf(" (and the other parameters are not at a maximum: Newton decrement %.2g). ", dec)
	}
	for a, i := range keep {
		for b, j := range keep {
			cov[i*P+j] = c[a*nk+b]
		}
	}
	return cov, ""
}

// PhiNormalized rescales the common factor of constraint group g (0-based,
// in the order of Result.PhiGroups) so that phi of equation ref (1-based)
// is 1, with gamma multiplied by the old phi_ref; standard errors by the
// delta method from Cov (r.linearMap: NaN for those resting on
// parameters NotEstimable marks).
func (r *Result) PhiNormalized(g, ref int) (*PhiNormalization, error) {
	if g < 0 || g >= len(r.Phi) {
		return nil, fmt.Errorf("%s has no constraint group %d", r.Name, g+1)
	}
	q := r.J - 1
	if ref < 1 || ref > q {
		return nil, fmt.Errorf("equation %d outside 1..%d", ref, q)
	}
	if r.Cov == nil || !(r.OK() || r.Status == StatusNotIdentified) {
		return nil, fmt.Errorf("%s has no covariance matrix (%s)", r.Name, r.Status)
	}
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil {
		return nil, err
	}
	ph := r.Phi[g]
	pr := ph[ref-1]
	if math.IsNaN(pr) || math.Abs(pr) < 1e-12 {
		return nil, fmt.Errorf("phi_%d is %g: it cannot be the normalization", ref, pr)
	}
	P := len(r.Estimates)
	ks := ly.groups[g]
	n := q + len(ks)
	A := make([]float64, n*P) // Jacobian of (phi', gamma') in theta
	est := make([]float64, n)
	refIdx := ly.phiIndex[g][ref-1] // -1 when ref = 1
	for j := 0; j < q; j++ {
		est[j] = ph[j] / pr
		if j > 0 && j != ref-1 {
			A[j*P+ly.phiIndex[g][j]] = 1 / pr
		}
		if refIdx >= 0 && j != ref-1 {
			A[j*P+refIdx] = -ph[j] / (pr * pr)
		}
	}
	out := &PhiNormalization{Group: ly.gnames[g], Ref: ref}
	for t, k := range ks {
		s := ly.slope[k]
		row := q + t
		est[row] = pr * r.Estimates[s]
		A[row*P+s] = pr
		if refIdx >= 0 {
			A[row*P+refIdx] = r.Estimates[s]
		}
		out.Predictors = append(out.Predictors, r.Predictors[k])
	}
	_, cov := r.linearMap(A, n)
	se := make([]float64, n)
	for i := range se {
		se[i] = math.Sqrt(math.Max(cov[i*n+i], 0))
	}
	se[ref-1] = 0
	out.Phi, out.PhiSE = est[:q], se[:q]
	out.Gamma, out.GammaSE = est[q:], se[q:]
	return out, nil
}

// ScaleNearZeroLevel is the level of the test by which the scale g of a
// constraint group counts as near zero (CheckScale): g is near zero when
// the Wald test that all of the group's g_k are 0 (its slopes in equation
// 1, the normalization phi_1 = 1) does not reject at this level. The data
// are then consistent with g = 0, where phi is not identified: a
// confidence set of this level for a ratio phi_m = b_m / g whose
// denominator is not distinguishable from zero is unbounded, so phi's
// delta-method standard errors and intervals do not describe it.
const ScaleNearZeroLevel = 0.05

// NearZeroScale is a constraint group whose g is near zero at the maximum
// (CheckScale): phi is near non-identification there.
type NearZeroScale struct {
	Group      string    `json:"group,omitempty"`
	Predictors []string  `json:"predictors"`
	Gamma      []float64 `json:"g"`
	GammaSE    []float64 `json:"g_se"`
	// Test is the Wald test of g = 0 (every g_k of the group).
	Test  Test    `json:"wald_g_zero"`
	Level float64 `json:"level"`
	// LargestPhi is the phi of largest absolute value (equation PhiAt,
	// 1-based), with its standard error.
	LargestPhi   float64 `json:"largest_phi"`
	LargestPhiSE float64 `json:"largest_phi_se"`
	PhiAt        int     `json:"largest_phi_equation"`
	Reason       string  `json:"reason"`
}

// ScaleNearZeroMeaning says what g near zero is and means, in the words
// of every report of it.
var ScaleNearZeroMeaning = fmt.Sprintf("a constraint group's g, its slopes in equation 1 (where phi_1 = 1), counts as near zero when the Wald test of g = 0 does not reject at %g; the data are then consistent with g = 0, where phi is not identified, so phi and its standard errors and intervals are not to be trusted, while the effects phi_m g_k remain estimated", ScaleNearZeroLevel)

// Clause says which g is near zero and by how much: "g of arm and sex.F
// is near zero (Wald test of g = 0: chi-square 0.033 on 2 df, p =
// 0.9837; phi_4 = 16.2, standard error 89.4)"; on a cluster-robust
// covariance the statistic is the F its p-value is read from
// (Test.FRefStatistic).
func (nz NearZeroScale) Clause() string {
	of := words.AndList(nz.Predictors)
	if nz.Group != "" {
		of = fmt.Sprintf("group %s (%s)", nz.Group, of)
	}
	stat := fmt.Sprintf("chi-square %s on %d df", numfmt.Stat(nz.Test.Chi2), nz.Test.DF)
	if nz.Test.FRef {
		stat = nz.Test.FRefStatistic()
	}
	return fmt.Sprintf("g of %s is near zero (Wald test of g = 0: %s, %s; phi_%d = %.3g, standard error %.3g)",
		of, stat, numfmt.PText(nz.Test.P), nz.PhiAt, nz.LargestPhi, nz.LargestPhiSE)
}

// CheckScale sets r.NearZeroScale to the constraint groups whose g is
// near zero (ScaleNearZeroLevel) by the fit's covariance, whatever it is
// (model-based, sandwich, pooled over imputed sets); nil for a fit without
// usable estimates or a covariance, or without constraint groups of more
// than one phi. Every fit of a constrained or stereotype model gets it at
// the end of its search, and again when its covariance is replaced
// (UseCovariance).
func (r *Result) CheckScale() {
	r.NearZeroScale = nil
	P := len(r.Estimates)
	if !r.OK() || r.J < 3 || len(r.Phi) == 0 || len(r.Cov) != P*P {
		return
	}
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil || len(ly.params) != P {
		return
	}
	for g, ks := range ly.groups {
		nz := NearZeroScale{Group: ly.gnames[g], Level: ScaleNearZeroLevel}
		R := make([][]float64, len(ks))
		for i, k := range ks {
			s := ly.slope[k]
			R[i] = make([]float64, P)
			R[i][s] = 1
			nz.Predictors = append(nz.Predictors, r.Predictors[k])
			nz.Gamma = append(nz.Gamma, r.Estimates[s])
			nz.GammaSE = append(nz.GammaSE, r.StdErrors[s])
		}
		x, err := r.waldStat(R)
		if err != nil {
			continue
		}
		nz.Test = r.waldTest(x, len(R))
		if !(nz.Test.P >= ScaleNearZeroLevel) {
			continue
		}
		for j := 1; j < r.J-1; j++ {
			if i := ly.phiIndex[g][j]; math.Abs(r.Estimates[i]) > math.Abs(nz.LargestPhi) || j == 1 {
				nz.LargestPhi, nz.LargestPhiSE, nz.PhiAt = r.Estimates[i], r.StdErrors[i], j+1
			}
		}
		nz.Reason = fmt.Sprintf("phi %s is near non-identification: %s; %s", groupLabel(ly, g), nz.Clause(), ScaleNearZeroMeaning)
		r.NearZeroScale = append(r.NearZeroScale, nz)
	}
}
