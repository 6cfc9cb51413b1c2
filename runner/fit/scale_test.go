package fit

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// adjacentScaleData draws n rows (seed fixed) from the adjacent logit
// ln[P(y=m)/P(y=m+1)] = tau_m - phi_m (g1 x1 + g2 x2), x1 standard normal
// and x2 0/1, with 5 categories: phi1 is phi_1, the factor of equation 1,
// and phi_2..phi_4 = 1, 1.3, 1.8. With phi1 small the effects of equation
// 1 nearly vanish, so that g in the normalization phi_1 = 1 is near zero.
func adjacentScaleData(seed uint64, n int, phi1 float64) *Data {
	rng := rand.New(rand.NewPCG(seed, 11))
	tau := []float64{-1.2, -0.3, 0.4, 1.1}
	phi := []float64{phi1, 1, 1.3, 1.8}
	d := &Data{J: 5, Predictors: []string{"x1", "x2"}}
	for i := 0; i < n; i++ {
		x1, x2 := rng.NormFloat64(), float64(rng.IntN(2))
		s := 0.9*x1 + 0.6*x2
		// log P(y=j) up to a constant: sum of L_m over m >= j.
		lp := make([]float64, 5)
		for j := 3; j >= 0; j-- {
			lp[j] = lp[j+1] + tau[j] - phi[j]*s
		}
		mx := lp[0]
		for _, v := range lp {
			mx = math.Max(mx, v)
		}
		tot := 0.0
		for j := range lp {
			lp[j] = math.Exp(lp[j] - mx)
			tot += lp[j]
		}
		u, c := rng.Float64()*tot, 0
		for c < 4 && u > lp[c] {
			u -= lp[c]
			c++
		}
		d.Y = append(d.Y, c)
		d.X = append(d.X, x1, x2)
	}
	return d
}

// TestScaleNearZero: the scale g of a constraint group counts as near zero
// when the Wald test of g = 0 does not reject at ScaleNearZeroLevel. On
// invented data whose equation-1 effects nearly vanish (phi_1 = 0.02 of
// phi_2) the adjacent logit and probit models with both predictors
// constrained in one group (the stereotype model) say so; on data with
// phi_1 = 1 (g well away from zero) they do not. The test's statistic is checked against the identity that
// makes it one: (g - 0)' V_gg^-1 (g - 0) from the estimates and the
// covariance's block, by hand. A covariance that replaces the fit's
// (UseCovariance) is judged again.
func TestScaleNearZero(t *testing.T) {
	for _, c := range []struct {
		phi1 float64
		near bool
	}{{0.02, true}, {1, false}} {
		d := adjacentScaleData(5, 1500, c.phi1)
		for _, m := range []Model{
			{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained, Constrained}},
			{Comparison: Adjacent, Link: Probit, Effects: []Effect{Constrained, Constrained}},
		} {
			res := fitOK(t, d, m)
			checkStarts(t, res)
			for _, s := range res.Starts {
				t.Logf("phi_1 %g, %s: start %s ll %.6f reached %v refitted %v: %s", c.phi1, res.Name, s.Label, s.LogLik, s.ReachedBest, s.Refitted, s.Reason)
			}
			// By hand: g = (x1, x2) with its 2 x 2 covariance block.
			i1, i2 := nameIndex(res.ParamNames, "x1"), nameIndex(res.ParamNames, "x2")
			P := len(res.Estimates)
			a, b, cc := res.Cov[i1*P+i1], res.Cov[i1*P+i2], res.Cov[i2*P+i2]
			g1, g2 := res.Estimates[i1], res.Estimates[i2]
			det := a*cc - b*b
			w := (cc*g1*g1 - 2*b*g1*g2 + a*g2*g2) / det
			p := math.Exp(-w / 2) // chi-square with 2 df
			t.Logf("phi_1 %g, %s: g %.4g %.4g, Wald %.4f p %.4f, phi %v", c.phi1, res.Name, g1, g2, w, p, res.Phi)
			if c.near != (p >= ScaleNearZeroLevel) {
				t.Fatalf("phi_1 %g, %s: the data do not give the case the test is for (p = %.4g)", c.phi1, res.Name, p)
			}
			if !c.near {
				if res.NearZeroScale != nil {
					t.Errorf("phi_1 %g, %s: g reported near zero: %+v", c.phi1, res.Name, res.NearZeroScale)
				}
				// A covariance that replaces the fit's (a sandwich) is
				// judged again: 1000 times as wide, the same g is near
				// zero (the statistic a thousandth).
				wide := make([]float64, len(res.Cov))
				for i, v := range res.Cov {
					wide[i] = 1000 * v
				}
				res.UseCovariance(wide, SandwichInfo{Type: res.CovType})
				if len(res.NearZeroScale) != 1 || !near(res.NearZeroScale[0].Test.Chi2, w/1000, 1e-8, 1e-10) {
					t.Errorf("phi_1 %g, %s: with a covariance 1000 times as wide: %+v (statistic %.6g)", c.phi1, res.Name, res.NearZeroScale, w/1000)
				}
				continue
			}
			if len(res.NearZeroScale) != 1 {
				t.Fatalf("phi_1 %g, %s: NearZeroScale %+v", c.phi1, res.Name, res.NearZeroScale)
			}
			nz := res.NearZeroScale[0]
			if !near(nz.Test.Chi2, w, 1e-8, 1e-10) || nz.Test.DF != 2 || !near(nz.Test.P, p, 1e-8, 1e-10) {
				t.Errorf("Wald test %+v, by hand %.10g (p %.10g)", nz.Test, w, p)
			}
			for _, want := range []string{"near non-identification", "g of x1 and x2 is near zero", "does not reject at 0.05"} {
				if !strings.Contains(nz.Reason, want) {
					t.Errorf("reason %q lacks %q", nz.Reason, want)
				}
			}
		}
	}
}

// TestRefittedStartCounts: on invented data with no effect in equation 1
// (adjacentScaleData, seed 2, phi_1 = 0) the best start of the adjacent
// logit with both predictors constrained stops on the ridge g -> 0, and the
// reported maximum is reached by refitting from there with phi normalized
// by another equation. That start counts as reaching the maximum
// (StartsAgreeing, ReachedBest), with the maximum's log-likelihood, and its
// reason says where it stopped and how the maximum was reached.
func TestRefittedStartCounts(t *testing.T) {
	d := adjacentScaleData(2, 1500, 0)
	res := fitOK(t, d, Model{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained, Constrained}})
	checkStarts(t, res)
	n := 0
	for _, s := range res.Starts {
		t.Logf("start %s ll %.6f reached %v refitted %v: %s", s.Label, s.LogLik, s.ReachedBest, s.Refitted, s.Reason)
		if !s.Refitted {
			continue
		}
		n++
		if !s.ReachedBest || s.LogLik != res.LogLik {
			t.Errorf("start %s refitted to the maximum but ReachedBest %v, loglik %.10f (maximum %.10f)", s.Label, s.ReachedBest, s.LogLik, res.LogLik)
		}
		for _, want := range []string{reasonRidge, "stopped at log-likelihood", "refitted from there with the common factor normalized by phi_", "it reached the best"} {
			if !strings.Contains(s.Reason, want) {
				t.Errorf("reason %q lacks %q", s.Reason, want)
			}
		}
	}
	if n != 1 || res.StartsAgreeing < 1 {
		t.Errorf("%d starts refitted, %d agreeing: the data no longer give the case the test is for", n, res.StartsAgreeing)
	}
	if len(res.NearZeroScale) != 1 {
		t.Errorf("g of a group with no effect in equation 1 not reported near zero: %+v", res.NearZeroScale)
	}
}

// TestNearZeroClauseClustered: on a cluster-robust covariance of G
// clusters the Wald test of g = 0 is read as W (G-q)/((G-1) q) on F(q,
// G-q), and the warning gives that F, not a chi-square on q df whose p
// would disagree with the p-value shown. W = 9.022, q = 2, G = 7: F =
// 3.7592, p = 0.1008 (R: pf(9.022*5/12, 2, 5, lower.tail = FALSE) =
// 0.1008228; pchisq(9.022, 2, lower.tail = FALSE) = 0.011 would be
// the chi-square's).
func TestNearZeroClauseClustered(t *testing.T) {
	r := &Result{RefDF: 6}
	nz := NearZeroScale{Predictors: []string{"programme", "shift"}, Group: "g1", Test: r.waldTest(9.022, 2), PhiAt: 2, LargestPhi: 1.14, LargestPhiSE: 0.799}
	got := nz.Clause()
	want := "g of group g1 (programme and shift) is near zero (Wald test of g = 0: F(2, 5) = 3.759 (Wald 9.022 times (G-q)/((G-1) q), G = 7 clusters), p = 0.1008; phi_2 = 1.14, standard error 0.799)"
	if got != want {
		t.Errorf("Clause:\n got %s\nwant %s", got, want)
	}
	if math.Abs(nz.Test.P-0.1008228) > 1e-6 {
		t.Errorf("p = %.7f, R's pf gives 0.1008228", nz.Test.P)
	}
}
