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
// reference-site row has an interval, one at a site-1 row has none. The
// delete-one-cluster jackknife marks the same four parameters with the
// same reason and gives tau, x and z R's jackknife by hand (glm refitted
// without each cluster), with its t(G-1) p-values and F test.
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
	// The delete-one-cluster jackknife: tau, x and z against R's by hand
	// (onecluster.R: glm refitted without each cluster on the columns that
	// still vary there), the four others not estimable with the same
	// reason as under the sandwich.
	J, jinfo, err := fit.ClusterJackknife(d, r, clusters, fit.Options{})
	if err != nil {
		t.Fatalf("jackknife: %v", err)
	}
	if jinfo.NotEstimable == nil || jinfo.NotEstimable.Reason != ne.Reason {
		t.Fatalf("jackknife's not estimable: %+v, want the sandwich's %+v", jinfo.NotEstimable, ne)
	}
	Rj := vals.Get(t, "oc.jackknife")
	worst := 0.0
	for i := 0; i < P; i++ {
		for j := 0; j < P; j++ {
			v := J[i*P+j]
			if i >= 3 || j >= 3 {
				if !math.IsNaN(v) {
					t.Errorf("jackknife entry %s, %s: %g, want NaN", r.ParamNames[i], r.ParamNames[j], v)
				}
				continue
			}
			worst = math.Max(worst, math.Abs(v-Rj[i*3+j])/math.Sqrt(Rj[i*3+i]*Rj[j*3+j]))
		}
	}
	t.Logf("jackknife of tau, x, z against R's glm refits: %.3g (relative)", worst)
	if !(worst <= 1e-6) {
		t.Errorf("jackknife of tau, x, z differs from R's glm refits by %.3g (relative)", worst)
	}
	rj := *r
	rj.UseCovariance(J, jinfo)
	for i, want := range vals.Get(t, "oc.jk_p") {
		if got := rj.ParamInference(i, 0.95).P; math.Abs(got-want) > 1e-6*want {
			t.Errorf("%s: jackknife p-value on t(11) %.10g, R's pt %.10g", r.ParamNames[i], got, want)
		}
	}
	for i := 3; i < P; i++ {
		if inf := rj.ParamInference(i, 0.95); !math.IsNaN(rj.StdErrors[i]) || !math.IsNaN(inf.P) {
			t.Errorf("%s: jackknife error %g, p %g: want n/a", r.ParamNames[i], rj.StdErrors[i], inf.P)
		}
	}
	h, err = fit.ParseHypothesis("x = z = 0", r.ParamNames)
	if err != nil {
		t.Fatal(err)
	}
	wj, want := fit.WaldLinear(&rj, h), vals.Get(t, "oc.jk_wald")
	if !wj.OK || math.Abs(wj.Chi2-want[0]) > 1e-6*want[0] || math.Abs(wj.P-want[1]) > 1e-6*want[1] {
		t.Errorf("jackknife x = z = 0: %+v, R's W %g, p on F(2, 10) %g", wj, want[0], want[1])
	}
	h, err = fit.ParseHypothesis("x = s1", r.ParamNames)
	if err != nil {
		t.Fatal(err)
	}
	if w := fit.WaldLinear(&rj, h); w.OK || !strings.Contains(w.Reason, "are not estimable under clustered errors") {
		t.Errorf("jackknife x = s1 was computed or says nothing: %+v", w)
	}

	// x, s1 and xs1 on a common scale: with two categories the common
	// factor has no parameter of its own (phi_1 = 1), so the model is
	// glm's logistic regression again, fitted as a constrained model
	// (several starts), and its jackknife, whose refits without clusters
	// 1 to 3 hold the site columns in the group, is R's by hand as well.
	mc := m
	mc.Effects = []fit.Effect{fit.Constrained, fit.Parallel, fit.Constrained, fit.Parallel, fit.Parallel, fit.Constrained}
	rc := mustFit(t, "onecluster constrained", d, mc, fit.Options{})
	Jc, cinfo, err := fit.ClusterJackknife(d, rc, clusters, fit.Options{})
	if err != nil {
		t.Fatalf("constrained jackknife: %v", err)
	}
	if cinfo.NotEstimable == nil || strings.Join(cinfo.NotEstimable.Parameters, ",") != "s1,s2,s3,xs1" {
		t.Fatalf("constrained jackknife's not estimable: %+v", cinfo.NotEstimable)
	}
	if len(rc.Estimates) != P {
		t.Fatalf("constrained model of two categories: parameters %v", rc.ParamNames)
	}
	worst = 0
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			worst = math.Max(worst, math.Abs(Jc[i*P+j]-Rj[i*3+j])/math.Sqrt(Rj[i*3+i]*Rj[j*3+j]))
		}
	}
	t.Logf("constrained: jackknife of tau, x, z against R's glm refits: %.3g (relative)", worst)
	if !(worst <= 1e-6) {
		t.Errorf("constrained: jackknife of tau, x, z differs from R's glm refits by %.3g (relative)", worst)
	}
}
