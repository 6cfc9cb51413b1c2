package fit_test

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/rscript"
	"ordplan/runner/fit"
)

// oneClusterData is seeded data of our own: 12 clusters of 30 rows (g =
// 1..12); x ~ N(0,1) and z ~ N(0,1) (three decimals); sites 1, 2 and 3 are
// clusters 1, 2 and 3 (dummies s1, s2, s3), the other clusters the
// reference site; xs1 = x * s1 (an interaction with a one-cluster dummy);
// category 2 when 0.8 x - 0.5 z + 0.6 s1 - 0.4 s2 + 0.3 s3 + e > 0.2 with e
// standard logistic, else 1.
func oneClusterData() (names []string, cols [][]float64) {
	rng := rand.New(rand.NewPCG(20261205, 7))
	names = []string{"y", "x", "z", "s1", "s2", "s3", "xs1", "g"}
	cols = make([][]float64, len(names))
	for g := 1; g <= 12; g++ {
		for i := 0; i < 30; i++ {
			x, z := round(rng.NormFloat64(), 3), round(rng.NormFloat64(), 3)
			s := [3]float64{}
			if g <= 3 {
				s[g-1] = 1
			}
			u := rng.Float64()
			e := math.Log(u / (1 - u))
			y := 1.0
			if 0.8*x-0.5*z+0.6*s[0]-0.4*s[1]+0.3*s[2]+e > 0.2 {
				y = 2
			}
			for k, v := range []float64{y, x, z, s[0], s[1], s[2], x * s[0], float64(g)} {
				cols[k] = append(cols[k], v)
			}
		}
	}
	return names, cols
}

// TestOneClusterAgainstR: under errors clustered by g, the parameters of
// the site dummies s1, s2, s3 and of the interaction xs1 (columns whose
// rows lie in one cluster) are marked not estimable (NaN standard errors,
// named with the reason: their sandwich errors, which leave out their own
// cluster's part, are not printed); tau, x and z keep the clustered
// sandwich, equal to R's by hand (glm's logit scores, rowsum by cluster, A^-1 B A^-1 times
// G/(G-1) (N-1)/(N-P): common.R); a Wald test of x = z = 0 is made from
// it, one touching s1 is not computed and says why; a prediction at a
// reference-site row has an interval, one at a site-1 row has none; the
// delete-one-cluster jackknife is refused with the same reason.
func TestOneClusterAgainstR(t *testing.T) {
	dir := workDir(t)
	names, cols := oneClusterData()
	rscript.WriteCSV(t, filepath.Join(dir, "onecluster.csv"), names, cols)
	vals := rscript.Run(t, dir, rfile("common.R"), rfile("onecluster.R"))
	tab := rscript.ReadCSV(t, filepath.Join(dir, "onecluster.csv"))
	preds := []string{"x", "z", "s1", "s2", "s3", "xs1"}
	d := dataFrom(t, tab, "y", 1, 2, preds, "")
	clusters := ids(tab.Col(t, "g"))
	m := parallelModel(fit.Cumulative, false, fit.Logit, len(preds), fit.Parallel)
	r := mustFit(t, "onecluster", d, m, fit.Options{})
	theta := vals.Get(t, "oc.theta")
	for j, v := range r.Estimates {
		if math.Abs(v-theta[j]) > 1e-7*math.Max(1, math.Abs(theta[j])) {
			t.Fatalf("%s: estimate %.10g, R's glm %.10g", r.ParamNames[j], v, theta[j])
		}
	}
	V, info, err := fit.SandwichEstimate(d, r, fit.Clustered, clusters, false)
	if err != nil {
		t.Fatal(err)
	}
	r.UseCovariance(V, info)
	ne := r.NotEstimable
	if ne == nil || strings.Join(ne.Parameters, ",") != "s1,s2,s3,xs1" || strings.Join(ne.Clusters, ",") != "1,2,3" {
		t.Fatalf("not estimable: %+v", ne)
	}
	if !strings.HasPrefix(ne.Reason, "the standard errors of s1, s2, s3, xs1 are not estimable under clustered errors: they depend on combinations of the model's columns whose rows all lie in one cluster (clusters \"1\", \"2\", \"3\")") {
		t.Errorf("reason: %s", ne.Reason)
	}
	Rv := vals.Get(t, "oc.clustered")
	P := len(r.Estimates)
	for i := 0; i < P; i++ {
		bound := i >= 3
		if bound != math.IsNaN(r.StdErrors[i]) {
			t.Errorf("%s: standard error %g", r.ParamNames[i], r.StdErrors[i])
		}
		if bound {
			continue
		}
		want := math.Sqrt(Rv[i*P+i])
		if math.Abs(r.StdErrors[i]-want) > 1e-7*want {
			t.Errorf("%s: clustered error %.10g, R's by hand %.10g", r.ParamNames[i], r.StdErrors[i], want)
		}
	}
	// The covariance as computed, every entry, is R's (the marked rows
	// and columns too: only their reading changes).
	raw := r.CovarianceAsComputed()
	for i, v := range Rv {
		if math.Abs(raw[i]-v) > 1e-7*math.Sqrt(Rv[(i/P)*P+i/P]*Rv[(i%P)*P+i%P]) {
			t.Errorf("covariance entry %d: %.10g, R's by hand %.10g", i, raw[i], v)
		}
	}
	// x = z = 0: from the clustered covariance of x and z, as R's.
	h, err := fit.ParseHypothesis("x = z = 0", r.ParamNames)
	if err != nil {
		t.Fatal(err)
	}
	w := fit.WaldLinear(r, h)
	bx, bz := r.Estimates[1], r.Estimates[2]
	vxx, vxz, vzz := Rv[1*P+1], Rv[1*P+2], Rv[2*P+2]
	det := vxx*vzz - vxz*vxz
	W := (bx*bx*vzz - 2*bx*bz*vxz + bz*bz*vxx) / det
	if !w.OK || math.Abs(w.Chi2-W) > 1e-6*W {
		t.Errorf("x = z = 0: %+v, R's covariance gives W = %g", w, W)
	}
	h, err = fit.ParseHypothesis("x = s1", r.ParamNames)
	if err != nil {
		t.Fatal(err)
	}
	if w := fit.WaldLinear(r, h); w.OK || !strings.Contains(w.Reason, "are not estimable under clustered errors") {
		t.Errorf("x = s1 was computed or says nothing: %+v", w)
	}
	// Predictions: a reference-site row, a site-1 row.
	pr, err := r.Predict([]float64{0.5, -0.2, 0, 0, 0, 0, 0.5, -0.2, 1, 0, 0, 0.5}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.IsNaN(pr.SE[0]) || !math.IsNaN(pr.SE[2]) {
		t.Errorf("prediction errors %v: want a number for the reference site, NaN for site 1", pr.SE)
	}
	if _, _, err := fit.ClusterJackknife(d, r, clusters, fit.Options{}); err == nil || !strings.Contains(err.Error(), "are not estimable under clustered errors") {
		t.Errorf("jackknife: %v", err)
	}
}
