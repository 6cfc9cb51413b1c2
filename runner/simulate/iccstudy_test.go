package simulate

import (
	"math"
	"os"
	"strconv"
	"testing"
)

// concordance is the chance that the two rows of a cluster of two fall
// on the same side of a binary outcome split at its median, when each
// row's latent value is its cluster's normal intercept (sd) plus an error
// of distribution function F: with c the median of the latent value
// (E F(c - u) = 1/2, u the intercept), it is E[F(c-u)^2 + (1-F(c-u))^2].
// The expectations over u are taken by the trapezoid rule on a fine grid
// of the standard normal, whose error is far below what is compared.
func concordance(F func(float64) float64, sd float64) float64 {
	const h, lim = 0.01, 10.0
	mean := func(g func(float64) float64) float64 {
		s := 0.0
		for z := -lim; z <= lim+h/2; z += h {
			s += g(sd*z) * math.Exp(-z*z/2)
		}
		return s * h / math.Sqrt(2*math.Pi)
	}
	lo, hi := -20.0, 20.0
	for range 100 {
		c := (lo + hi) / 2
		if mean(func(u float64) float64 { return F(c - u) }) < 0.5 {
			lo = c
		} else {
			hi = c
		}
	}
	c := (lo + hi) / 2
	return mean(func(u float64) float64 { p := F(c - u); return p*p + (1-p)*(1-p) })
}

// iccOf inverts concordance: the latent intraclass correlation whose
// clusters of two have the concordance C, for an error of variance v.
func iccOf(F func(float64) float64, v, C float64) float64 {
	lo, hi := 0.0, 0.99
	for range 40 {
		icc := (lo + hi) / 2
		if concordance(F, math.Sqrt(icc/(1-icc)*v)) < C {
			lo = icc
		} else {
			hi = icc
		}
	}
	return (lo + hi) / 2
}

// The concordance of clusters of two under the probit link is that of a
// bivariate normal split at its medians, 1/2 + asin(rho)/pi (the
// quadrant probability, as TestLatentICCRecovered uses it): a check of
// the quadrature the study below relies on.
func TestConcordanceQuadrature(t *testing.T) {
	for _, icc := range []float64{0, 0.05, 0.3, 0.6} {
		got := concordance(normalCDF, math.Sqrt(icc/(1-icc)))
		if want := 0.5 + math.Asin(icc)/math.Pi; math.Abs(got-want) > 1e-10 {
			t.Errorf("icc %v: concordance %.12f, quadrant probability %.12f", icc, got, want)
		}
	}
}

// A study of the latent intraclass correlation the simulation makes, over
// many data sets (ORDPLAN_ICC_STUDY=R data sets per link; skipped
// otherwise, as it takes about a second per data set): each of 200000
// rows in clusters of two, latent_icc 0.3, no effect, proportions 0.5 and
// 0.5, replicate r drawn from plan seed 1000+r (so that the calibration
// of the cutpoint varies too). For each link the mean concordance of the
// pairs is compared with the exact concordance of the stated model
// (concordance: intercept sd sqrt(icc/(1-icc) v), v = 1 under probit,
// pi^2/3 under logit, pi^2/6 under cloglog), and the mean of the
// intraclass correlations recovered from each data set (iccOf; under
// probit sin(pi (C - 1/2)), as TestLatentICCRecovered) with 0.3, each
// against its Monte Carlo error (the standard deviation over data sets
// over sqrt(R)). A difference beyond 4 Monte Carlo errors fails. The
// links share the seeds, so their data sets draw the same uniforms and
// normals: their errors are alike, not independent.
//
//	ORDPLAN_ICC_STUDY=200 go test ./runner/simulate -run TestLatentICCStudy -v -timeout 2h
//
// measured (255 s on two shared cores):
//
//	probit:  concordance 0.597093 (MC se 0.000115), exact 0.596987, z = 0.93; icc 0.30032 (MC se 0.00034, sd per data set 0.00486)
//	logit:   concordance 0.610011 (MC se 0.000114), exact 0.609939, z = 0.63; icc 0.30021 (MC se 0.00033, sd per data set 0.00467)
//	cloglog: concordance 0.613170 (MC se 0.000112), exact 0.613150, z = 0.18; icc 0.30006 (MC se 0.00031, sd per data set 0.00439)
//
// The sd of the concordance per data set (0.00162, 0.00161, 0.00158) is
// near its binomial sd (0.00155, 0.00154, 0.00154).
func TestLatentICCStudy(t *testing.T) {
	reps, _ := strconv.Atoi(os.Getenv("ORDPLAN_ICC_STUDY"))
	if reps < 2 {
		t.Skip("set ORDPLAN_ICC_STUDY to the number of data sets per link (at least 2)")
	}
	const n, icc = 200_000, 0.3
	for _, l := range []struct {
		link string
		v    float64
		F    func(float64) float64
	}{
		{"probit", 1, normalCDF},
		{"logit", math.Pi * math.Pi / 3, func(z float64) float64 { return 1 / (1 + math.Exp(-z)) }},
		{"cloglog", math.Pi * math.Pi / 6, func(z float64) float64 { return -math.Expm1(-math.Exp(z)) }},
	} {
		p := clusterPlan(t, l.link, "  clusters: {rows_each: 2, latent_icc: 0.3}\n", 0)
		exact := concordance(l.F, math.Sqrt(icc/(1-icc)*l.v))
		var sc, scc, si, sii float64
		for r := range reps {
			q := *p
			q.Seed = uint64(1000 + r)
			ys, _ := columns(t, &q, n, uint64(r))
			same := 0
			for i := 0; i < n; i += 2 {
				if ys[i] == ys[i+1] {
					same++
				}
			}
			C := float64(same) / (n / 2)
			est := iccOf(l.F, l.v, C)
			sc, scc, si, sii = sc+C, scc+C*C, si+est, sii+est*est
		}
		R := float64(reps)
		mc, mi := sc/R, si/R
		sec := math.Sqrt((scc/R-mc*mc)*R/(R-1)) / math.Sqrt(R)
		sei := math.Sqrt((sii/R-mi*mi)*R/(R-1)) / math.Sqrt(R)
		// The concordance of one data set is a share of n/2 independent
		// pairs: its binomial sd, beside the sd over data sets.
		binom := math.Sqrt(exact * (1 - exact) / (n / 2))
		t.Logf("%s: %d data sets: concordance mean %.6f (MC se %.6f; sd per data set %.6f, binomial %.6f), exact %.6f, z = %.2f; latent icc mean %.5f (MC se %.5f, sd per data set %.5f), stated %.2f, z = %.2f",
			l.link, reps, mc, sec, sec*math.Sqrt(R), binom, exact, (mc-exact)/sec, mi, sei, sei*math.Sqrt(R), icc, (mi-icc)/sei)
		if math.Abs(mc-exact) > 4*sec || math.Abs(mi-icc) > 4*sei {
			t.Errorf("%s: the simulated clusters do not have the stated latent intraclass correlation", l.link)
		}
	}
}
