package fit

import (
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestClusterWaldReference: a Wald statistic W of q restrictions on a
// cluster-robust covariance of G clusters is referred as
// W (G-q)/((G-1) q) to F(q, G-q) (waldTest), and a single restriction
// (q = 1) to F(1, G-1), the square of the t(G-1) of ParamInference. The
// p-values are R's (Rscript, base R's pf and pt, printed with digits = 17):
//
//	W <- c(64.4, 37.476, 3.2, 10); q <- c(27, 27, 1, 5); G <- c(48, 48, 10, 12)
//	pf(W * (G - q) / ((G - 1) * q), q, G - q, lower.tail = FALSE)
//	2 * pt(-sqrt(3.2), 9)
func TestClusterWaldReference(t *testing.T) {
	for _, c := range []struct {
		w    float64
		q, G int
		f, p float64
		ref  string
	}{
		{64.4, 27, 48, 1.06572104018912528, 0.44606242335799823, "F(27, 21)"},
		{37.476, 27, 48, 0.62017021276595741, 0.87945604129004185, "F(27, 21)"},
		{3.2, 1, 10, 3.2, 0.10726510907316512, "F(1, 9)"},
		{10, 5, 12, 1.27272727272727271, 0.37156997003114611, "F(5, 7)"},
	} {
		r := &Result{Clusters: c.G, RefDF: float64(c.G - 1)}
		w := r.waldTest(c.w, c.q)
		if !w.OK || !w.FRef || w.DF != c.q || w.DF2 != float64(c.G-c.q) || w.Reference != c.ref {
			t.Fatalf("W = %g, q = %d, G = %d: %+v", c.w, c.q, c.G, w)
		}
		if math.Abs(w.F-c.f) > 1e-14*c.f || math.Abs(w.P-c.p) > 1e-12*c.p {
			t.Errorf("W = %g, q = %d, G = %d: F %.17g p %.17g, R: F %.17g p %.17g", c.w, c.q, c.G, w.F, w.P, c.f, c.p)
		}
		if c.q == 1 {
			// t(G-1) of a single estimate: the same p-value as F(1, G-1).
			if p := TSurvival2(math.Sqrt(c.w), float64(c.G-1)); math.Abs(p-c.p) > 1e-12*c.p {
				t.Errorf("t(%d) p-value %.17g, R's pt %.17g", c.G-1, p, c.p)
			}
		}
	}
	// Without clusters: chi-square on q, as before.
	if w := (&Result{}).waldTest(37.476, 27); w.FRef || w.DF2 != 0 || math.Abs(w.P-ChiSquareP(37.476, 27)) > 0 {
		t.Errorf("no clusters: %+v", w)
	}
	// q = G restrictions have no reference (G-q = 0).
	if w := (&Result{Clusters: 5, RefDF: 4}).waldTest(3, 5); w.OK || !strings.Contains(w.Reason, "5 restrictions need at least 6 clusters") {
		t.Errorf("q = G: %+v", w)
	}
}

// TestClusteredWaldStudy measures the rejection rate at 5% of the overall
// Wald test of parallel lines on a cluster-robust covariance when the
// parallel model is true, with the statistic referred to chi-square on q
// degrees of freedom (as before) and as W (G-q)/((G-1) q) to F(q, G-q)
// (waldTest), beside the same Wald test on the sandwich without clusters
// and the likelihood-ratio test. Seeded data of our own: 800 rows, each in
// one of 48 clusters drawn uniformly, no cluster effect; six numeric
// predictors (normal, 0/1, normal, uniform, normal, normal) and a
// four-level factor (three 0/1 columns); latent 0.5 x1 + 0.4 x2 - 0.3 x3 +
// 0.2 x4 + 0.1 x5 + (0, 0.2, -0.2, 0.1) by level + logistic noise cut at
// -1.5, -0.3, 0.8, 2.2 (five categories), so q = 9 x 3 = 27 restrictions.
// ORDPLAN_CLUSTER_WALD_STUDY=N runs N data sets (off otherwise: each takes
// two fits); docs/models.md quotes the rates of N = 400.
func TestClusteredWaldStudy(t *testing.T) {
	reps, _ := strconv.Atoi(os.Getenv("ORDPLAN_CLUSTER_WALD_STUDY"))
	if reps <= 0 {
		t.Skip("set ORDPLAN_CLUSTER_WALD_STUDY=N to run N data sets")
	}
	const n, G, K = 800, 48, 9
	rng := rand.New(rand.NewPCG(20261204, 48))
	names := []string{"x1", "x2", "x3", "x4", "x5", "x6", "sb", "sc", "sd"}
	siteEff := []float64{0, 0.2, -0.2, 0.1}
	cuts := []float64{-1.5, -0.3, 0.8, 2.2}
	var made, chi2Rej, fRej, hcRej, lrRej int
	var sumW float64
	for rep := 0; rep < reps; rep++ {
		d := &Data{J: 5, Predictors: names}
		clusters := make([]string, n)
		for i := 0; i < n; i++ {
			clusters[i] = strconv.Itoa(rng.IntN(G))
			x := []float64{rng.NormFloat64(), float64(rng.IntN(2)), rng.NormFloat64(), rng.Float64(), rng.NormFloat64(), rng.NormFloat64(), 0, 0, 0}
			s := rng.IntN(4)
			if s > 0 {
				x[5+s] = 1
			}
			p := rng.Float64()
			lat := 0.5*x[0] + 0.4*x[1] - 0.3*x[2] + 0.2*x[3] + 0.1*x[4] + siteEff[s] + math.Log(p/(1-p))
			y := 0
			for _, c := range cuts {
				if lat > c {
					y++
				}
			}
			d.Y = append(d.Y, y)
			d.X = append(d.X, x...)
		}
		np, err := Fit(d, robModel(Cumulative, false, Logit, K, Nonparallel), Options{Workers: 1})
		if err != nil || !np.OK() {
			continue
		}
		par, err := Fit(d, robModel(Cumulative, false, Logit, K, Parallel), Options{Workers: 1})
		if err != nil || !par.OK() {
			continue
		}
		hc := *np
		V, info, err := SandwichEstimate(d, np, Sandwich, nil, false)
		if err != nil {
			continue
		}
		hc.UseCovariance(V, info)
		V, info, err = SandwichEstimate(d, np, Clustered, clusters, false)
		if err != nil {
			continue
		}
		np.UseCovariance(V, info)
		w := WaldEqualSlopes(np, names)
		wh := WaldEqualSlopes(&hc, names)
		if !w.OK || !wh.OK || w.DF != 27 {
			continue
		}
		made++
		sumW += w.Chi2
		if (distuv.ChiSquared{K: 27}).Survival(w.Chi2) < 0.05 {
			chi2Rej++
		}
		if w.P < 0.05 {
			fRej++
		}
		if wh.P < 0.05 {
			hcRej++
		}
		if (distuv.ChiSquared{K: 27}).Survival(2*(np.LogLik-par.LogLik)) < 0.05 {
			lrRej++
		}
	}
	if made < reps/2 {
		t.Fatalf("only %d of %d data sets gave both fits and the covariances", made, reps)
	}
	rate := func(k int) float64 { return 100 * float64(k) / float64(made) }
	t.Logf("%d data sets: clustered Wald (27 restrictions, 48 clusters) mean %.1f; rejected at 5%%: on chi2(27) %d (%.1f%%), W (G-q)/((G-1) q) on F(27, 21) %d (%.1f%%); sandwich without clusters on chi2(27) %d (%.1f%%); likelihood ratio %d (%.1f%%)",
		made, sumW/float64(made), chi2Rej, rate(chi2Rej), fRej, rate(fRej), hcRej, rate(hcRej), lrRej, rate(lrRej))
	if rate(chi2Rej) < 20 || rate(fRej) > 10 {
		t.Errorf("rates: chi2 %.1f%%, F %.1f%%", rate(chi2Rej), rate(fRej))
	}
}

// TestStepwiseReadsSingularClustered: a step of stepwise selection by
// Wald tests reads a test made from a singular cluster-robust covariance (a
// model of more than G-1 parameters, SingularClustered) whenever it was
// computed: with 8 clusters the nonparallel start (12 parameters) has a
// singular covariance, but each candidate's q = 2 restrictions (at most
// G-1 = 7, of full rank) are tested on F(2, 6), and none is passed over.
func TestStepwiseReadsSingularClustered(t *testing.T) {
	d := clusteredData(t)
	clusters := dealt(d.N(), 8)
	sf := StepwiseFits{Predictors: d.Predictors, Wald: WaldEqualSlopes, LR: LRTest,
		Fit: func(m Model) (*Result, error) {
			r, err := Fit(d, m, Options{Workers: 1})
			if err != nil || !r.OK() {
				return r, err
			}
			V, info, err := SandwichEstimate(d, r, Clustered, clusters, false)
			if err != nil {
				return nil, err
			}
			r.UseCovariance(V, info)
			return r, nil
		}}
	var terms []Term
	for _, p := range d.Predictors {
		terms = append(terms, Term{Name: p, Columns: []string{p}})
	}
	sr := StepwiseWith(sf, Model{Comparison: Cumulative, Link: Logit}, terms, 0.05, TestWald)
	if sr.Start == nil || sr.Start.SingularClustered() == "" || len(sr.Steps) == 0 || len(sr.Steps[0].Skipped) != 0 || len(sr.Steps[0].Tests) != len(terms) {
		t.Fatalf("%+v", sr)
	}
	for _, tt := range sr.Steps[0].Tests {
		if !tt.OK || !tt.FRef || tt.DF != 2 || tt.DF2 != 6 {
			t.Errorf("%+v", tt)
		}
	}
}
