package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"ordplan/internal/rscript"
	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// TestPooledClusteredAgainstMitml: on imputed data under clustered errors
// the pooled slopes' t, Barnard-Rubin degrees of freedom and p, and the
// pooled Wald test (D1) of a three-level factor, against base R's glm with
// a cluster-robust sandwich computed by hand on each imputed set and
// pooled by the general-purpose multiple-imputation package mitml with
// the complete-data degrees of freedom G-1 (testEstimates) and G-q
// (testConstraints, whose F the script multiplies by (G-q)/(G-1));
// script testdata/rcheck/clusterpool.R. With two categories the
// cumulative logit model is glm's binary logistic regression, its slopes
// the same. Data: invented (seeded): 300 rows in 12 sites with a site
// effect, x missing in about a quarter of the rows and drawn at random
// in each imputed set (any completed sets serve to check the pooling).
func TestPooledClusteredAgainstMitml(t *testing.T) {
	rscript.RequirePackages(t, "mitml")
	const m, sites = 5, 12
	dir := clusteredImputedData(t, m, sites)
	src := strings.Replace(xgPlan("{file: orig.csv, cluster: site, imputed: {file: stacked.csv, column: imp}}", "parallel", "aic"),
		"rules:", "covariance: clustered\ninference: {hypotheses: [\"g = 0\"]}\nrules:", 1)
	or := runPlan(t, planIn(t, dir, src), 0).Outcomes[0]
	if or.Imputed == nil || or.Chosen == nil || or.Chosen.Pooled == nil {
		t.Fatalf("not a pooled fit: %+v", or.Chosen)
	}
	res := or.Chosen.Result
	want := rscript.Run(t, dir, "testdata/rcheck/clusterpool.R")
	if g := want.Scalar(t, "clusters"); g != sites || res.Clusters != sites || res.RefDF != sites-1 {
		t.Fatalf("clusters: R %g, the fit %d (reference df %g), want %d", g, res.Clusters, res.RefDF, sites)
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if d := math.Abs(got - want); !(d <= 1e-6*math.Max(1e-3, math.Abs(want))) {
			t.Errorf("%s: %.10g, R %.10g", what, got, want)
		}
	}
	// The slopes follow the one threshold: x, g.b, g.c.
	for j, name := range []string{"x", "gb", "gc"} {
		i := j + 1
		inf := res.ParamInference(i, 0.95)
		w := want.Get(t, name) // estimate, se, t, df, p, RIV, FMI, lambda
		pl := or.Chosen.Pooled
		for _, c := range []struct {
			what      string
			got, want float64
		}{{"estimate", res.Estimates[i], w[0]}, {"std. error", res.StdErrors[i], w[1]}, {"t", inf.Stat, w[2]}, {"df", res.DF[i], w[3]}, {"p", inf.P, w[4]},
			{"RIV", pl.RIV[i], w[5]}, {"FMI", pl.FMI[i], w[6]}, {"lambda", pl.Lambda[i], w[7]}} {
			near(res.ParamNames[i]+" "+c.what, c.got, c.want)
		}
	}
	var h *HypothesisResult
	for i := range or.Hypotheses {
		if or.Hypotheses[i].Model == or.Chosen.ID {
			h = &or.Hypotheses[i]
		}
	}
	if h == nil || !h.Test.OK || h.Test.Pooled != "D1" || h.Test.DF != 2 {
		t.Fatalf("hypothesis g = 0: %+v", h)
	}
	d1 := want.Get(t, "d1") // F, df1, df2, p, RIV
	near("D1 F", h.Test.Chi2/2, d1[0])
	near("D1 df2", h.Test.DF2, d1[2])
	near("D1 p", h.Test.P, d1[3])
	t.Logf("G = %d: x t = %.4f on %.2f df; D1 F(2, %.2f) = %.5f, p %.5g (mitml F(2, %.2f) scaled, p %.5g)", res.Clusters, res.ParamInference(1, 0.95).Stat, res.DF[1], h.Test.DF2, h.Test.Chi2/2, h.Test.P, d1[2], d1[3])
}

// clusteredImputedData writes, in a new folder it returns, invented
// (seeded) data of 300 rows in sites clusters (column site) with a site
// effect on a binary y, x missing in about a quarter of the rows
// (orig.csv), m imputed sets drawing the missing x at random (imp1.csv ..
// impM.csv, and stacked in stacked.csv by column imp) and m.txt.
func clusteredImputedData(t *testing.T, m, sites int) string {
	t.Helper()
	const n = 300
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(20261204, 12))
	levels := []string{"a", "b", "c"}
	effect := make([]float64, sites)
	for s := range effect {
		effect[s] = 0.7 * rng.NormFloat64()
	}
	type row struct {
		y, g, site int
		x          float64
		miss       bool
	}
	rows := make([]row, n)
	var orig, stacked strings.Builder
	orig.WriteString("y,x,g,site\n")
	stacked.WriteString("imp,y,x,g,site\n")
	for i := range rows {
		s, g, x := i%sites, rng.IntN(3), rng.NormFloat64()
		y := 0
		if rng.Float64() < 1/(1+math.Exp(-(0.2+0.6*x+[]float64{0, 0.5, -0.4}[g]+effect[s]))) {
			y = 1
		}
		rows[i] = row{y, g, s, x, rng.Float64() < 0.25}
		xs := fmt.Sprintf("%.6f", x)
		if rows[i].miss {
			xs = ""
		}
		fmt.Fprintf(&orig, "%d,%s,%s,s%d\n", y, xs, levels[g], s)
	}
	for k := 1; k <= m; k++ {
		var set strings.Builder
		set.WriteString("y,x,g,site\n")
		for _, r := range rows {
			x := r.x
			if r.miss {
				x = rng.NormFloat64()
			}
			fmt.Fprintf(&set, "%d,%.6f,%s,s%d\n", r.y, x, levels[r.g], r.site)
			fmt.Fprintf(&stacked, "%d,%d,%.6f,%s,s%d\n", k, r.y, x, levels[r.g], r.site)
		}
		os.WriteFile(filepath.Join(dir, fmt.Sprintf("imp%d.csv", k)), []byte(set.String()), 0o644)
	}
	os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(orig.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), []byte(stacked.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "m.txt"), []byte(fmt.Sprintln(m)), 0o644)
	return dir
}

// TestPooledJackknife: under the few-cluster correction on imputed data
// each imputed set's fit takes its own delete-one-cluster jackknife
// covariance, the same as the plan run on that set alone as complete
// data, and the pooled fit is Rubin's rules of those with complete-data
// degrees of freedom G-1 (and D1 with G-q and its factor): pooled by
// impute.Pool from the single-set runs. The jackknife itself is checked
// against R elsewhere (the agreement checks of the covariances), the
// pooling under clusters by TestPooledClusteredAgainstMitml.
func TestPooledJackknife(t *testing.T) {
	const m, sites = 3, 8
	dir := clusteredImputedData(t, m, sites)
	plan := func(data string) string {
		return strings.Replace(xgPlan(data, "parallel", "aic"), "rules:", "covariance: clustered\nfew_clusters: jackknife\ninference: {hypotheses: [\"g = 0\"]}\nrules:", 1)
	}
	or := runPlan(t, planIn(t, dir, plan("{file: orig.csv, cluster: site, imputed: {file: stacked.csv, column: imp}}")), 0).Outcomes[0]
	if or.Chosen == nil || or.Chosen.Pooled == nil {
		t.Fatalf("not a pooled fit: %+v", or.Chosen)
	}
	res := or.Chosen.Result
	if res.Correction != fit.Jackknife || res.Clusters != sites || res.RefDF != sites-1 {
		t.Fatalf("pooled fit: correction %v, %d clusters, reference df %g", res.Correction, res.Clusters, res.RefDF)
	}
	// The few-cluster warning says that on imputed data G-1 is the
	// complete-data df, the pooled references fewer.
	if !slices.ContainsFunc(or.Notes, func(n string) bool {
		return strings.Contains(n, "holds 8 clusters") && strings.Contains(n, "on imputed data G-1 = 7 is the complete-data degrees of freedom of Rubin's rules")
	}) {
		t.Errorf("no few-cluster warning naming the complete-data degrees of freedom in %q", or.Notes)
	}
	// check counts the rows as run does: each imputed set's 300 rows, not
	// the original file's complete rows (about three quarters of them).
	warns, err := CheckData(planIn(t, dir, plan("{file: orig.csv, cluster: site, imputed: {file: stacked.csv, column: imp}}")))
	if err != nil {
		t.Fatal(err)
	}
	if !slices.ContainsFunc(warns, func(w string) bool { return strings.Contains(w, `column "site" holds 8 clusters in the 300 rows used`) }) {
		t.Errorf("check's warnings count other rows than run's: %q", warns)
	}
	// So with the imputation made by the run (data.missing: impute): the
	// rows kept for imputation.
	if warns, err = CheckData(planIn(t, dir, plan("{file: orig.csv, cluster: site, missing: impute, imputation: {sets: 2, iterations: 1}}"))); err != nil {
		t.Fatal(err)
	}
	if !slices.ContainsFunc(warns, func(w string) bool { return strings.Contains(w, `column "site" holds 8 clusters in the 300 rows used`) }) {
		t.Errorf("check's warnings with data.missing: impute count other rows than run's: %q", warns)
	}
	sets := make([]impute.Set, m)
	for k := range sets {
		one := runPlan(t, planIn(t, dir, plan(fmt.Sprintf("{file: imp%d.csv, cluster: site}", k+1))), 0).Outcomes[0].Chosen.Result
		if one.Correction != fit.Jackknife {
			t.Fatalf("set %d alone: correction %v", k+1, one.Correction)
		}
		sets[k] = impute.Set{Est: one.Estimates, Cov: one.Cov}
	}
	want, err := impute.Pool(sets, impute.Complete{DF: sites - 1, Clusters: sites})
	if err != nil {
		t.Fatal(err)
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if d := math.Abs(got - want); !(d <= 1e-8*math.Max(1e-3, math.Abs(want))) {
			t.Errorf("%s: %.10g, pooled from the single-set runs %.10g", what, got, want)
		}
	}
	for j := range res.Estimates {
		near(res.ParamNames[j]+" estimate", res.Estimates[j], want.Estimate[j])
		near(res.ParamNames[j]+" within variance", or.Chosen.Pooled.Within[j*want.P+j], want.Within[j*want.P+j])
		near(res.ParamNames[j]+" std. error", res.StdErrors[j], want.SE[j])
		near(res.ParamNames[j]+" df", res.DF[j], want.DF[j])
	}
	C := make([]float64, 2*want.P)
	C[2], C[want.P+3] = 1, 1 // g.b and g.c after the threshold and x
	d1, err := impute.D1(want, C, nil)
	if err != nil {
		t.Fatal(err)
	}
	tested := 0
	for _, h := range or.Hypotheses {
		if h.Model == or.Chosen.ID && h.Test.Pooled == "D1" {
			tested++
			near("D1 F", h.Test.Chi2/2, d1.F)
			near("D1 df2", h.Test.DF2, d1.DF2)
			near("D1 p", h.Test.P, d1.P)
		}
	}
	if tested != 1 {
		t.Errorf("%d pooled tests of g = 0 in the chosen model, want 1: %+v", tested, or.Hypotheses)
	}
}
