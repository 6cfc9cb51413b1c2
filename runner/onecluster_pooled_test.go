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
)

// siteImputedPlan is a plan on invented (seeded) data written into dir: a
// four-category y from a cumulative logit in x, z and the site (8 sites a..h
// of 50 rows, each its own effect), with c a copy of the site column (the
// clusters) and x missing in about a fifth of the rows; data.missing:
// impute makes 5 sets, and the errors are clustered by c.
func siteImputedPlan(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(20261205, 8))
	var b strings.Builder
	b.WriteString("y,x,z,site,c\n")
	for s := range 8 {
		for range 50 {
			x, z, u := rng.NormFloat64(), rng.NormFloat64(), rng.Float64()
			eta := 0.7*x - 0.4*z + 0.15*float64(s%4)
			y := 1
			for _, cut := range []float64{-1, 0, 1} {
				if math.Log(u/(1-u))+eta > cut {
					y++
				}
			}
			xs := fmt.Sprintf("%.4f", x)
			if rng.Float64() < 0.2 {
				xs = ""
			}
			id := "abcdefgh"[s : s+1]
			fmt.Fprintf(&b, "%d,%s,%.4f,%s,%s\n", y, xs, z, id, id)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir
}

// TestPooledNotEstimable: on imputed data, site fixed effects under errors
// clustered by a copy of the site column (every site, the reference too, one
// cluster, so the thresholds and the site effects are not estimable in any
// set): the pooled fit marks the same parameters, their pooled standard
// errors and the pooling's own figures (within, between and total
// variances, RIV, lambda, FMI) are n/a (NaN), a hypothesis on the site
// effects is not computed and says why, and x and z are pooled exactly as
// Rubin's rules give from the sets' own estimates and covariances as
// computed, the rules written out here: the mean, T = W + (1 + 1/m) B, and
// the Barnard-Rubin degrees of freedom with complete-data df G-1 (the rules
// under clusters are checked against mitml by
// TestPooledClusteredAgainstMitml).
func TestPooledNotEstimable(t *testing.T) {
	dir := siteImputedPlan(t)
	src := `version: 1
seed: 7
data: {file: d.csv, cluster: c, missing: impute, imputation: {sets: 5, iterations: 3}}
outcomes: [{column: y}]
categorical: {site: {levels: [a, b, c, d, e, f, g, h]}}
predictors: [x, z, site]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
covariance: clustered
inference:
  hypotheses: ["x = z", "site = 0"]
`
	or := runPlan(t, planIn(t, dir, src), 1).Outcomes[0]
	if or.Imputed == nil || or.Chosen == nil || or.Chosen.Pooled == nil {
		t.Fatalf("not a pooled fit: %+v", or.Chosen)
	}
	res, pl := or.Chosen.Result, or.Chosen.Pooled
	sets, err := or.chosenPerSet()
	if err != nil {
		t.Fatal(err)
	}
	m := float64(len(sets))
	wantMarked := []string{"tau[1]", "tau[2]", "tau[3]", "site.b", "site.c", "site.d", "site.e", "site.f", "site.g", "site.h"}
	for k, s := range sets {
		if s.NotEstimable == nil || !slices.Equal(s.NotEstimable.Parameters, wantMarked) {
			t.Fatalf("set %d marks %+v, want %v", k+1, s.NotEstimable, wantMarked)
		}
	}
	if res.NotEstimable == nil || !slices.Equal(res.NotEstimable.Parameters, wantMarked) {
		t.Fatalf("pooled fit marks %+v, want %v", res.NotEstimable, wantMarked)
	}
	P := len(res.Estimates)
	G := float64(res.Clusters)
	if res.Clusters != 8 {
		t.Fatalf("%d clusters", res.Clusters)
	}
	for j, name := range res.ParamNames {
		if slices.Contains(wantMarked, name) {
			w, b, tot := PooledVariances(pl, j)
			for what, v := range map[string]float64{"std. error": res.StdErrors[j], "pooled SE": pl.SE[j], "df": PooledDF(pl, j), "RIV": pl.RIV[j], "lambda": pl.Lambda[j], "FMI": pl.FMI[j], "within": w, "between": b, "total": tot} {
				if !math.IsNaN(v) {
					t.Errorf("%s: %s %g, want n/a", name, what, v)
				}
			}
			continue
		}
		// Rubin's rules by hand from the sets.
		var q, w, b float64
		for _, s := range sets {
			q += s.Estimates[j] / m
			w += s.CovarianceAsComputed()[j*P+j] / m
		}
		for _, s := range sets {
			b += (s.Estimates[j] - q) * (s.Estimates[j] - q) / (m - 1)
		}
		tot := w + (1+1/m)*b
		lambda := (1 + 1/m) * b / tot
		riv := (1 + 1/m) * b / w
		dfCom := G - 1
		dfOld := (m - 1) / (lambda * lambda)
		dfObs := (dfCom + 1) / (dfCom + 3) * dfCom * (1 - lambda)
		df := dfOld * dfObs / (dfOld + dfObs)
		fmi := (riv + 2/(df+3)) / (riv + 1)
		gw, gb, gt := PooledVariances(pl, j)
		for _, c := range []struct {
			what      string
			got, want float64
		}{{"estimate", res.Estimates[j], q}, {"std. error", res.StdErrors[j], math.Sqrt(tot)}, {"within", gw, w}, {"between", gb, b}, {"total", gt, tot},
			{"df", res.DF[j], df}, {"df of the table", PooledDF(pl, j), df}, {"RIV", pl.RIV[j], riv}, {"lambda", pl.Lambda[j], lambda}, {"FMI", pl.FMI[j], fmi}} {
			if !(math.Abs(c.got-c.want) <= 1e-10*math.Abs(c.want)) {
				t.Errorf("%s %s: pooled %.12g, Rubin's rules by hand %.12g", name, c.what, c.got, c.want)
			}
		}
	}
	// x = z is pooled (D1, on the covariances as computed); site = 0 rests
	// on the marked parameters: not computed, with the reason.
	seen := 0
	for _, h := range or.Hypotheses {
		switch h.Text {
		case "x = z":
			seen++
			if !h.Test.OK || h.Test.Pooled != "D1" {
				t.Errorf("x = z: %+v", h.Test)
			}
		case "site = 0":
			seen++
			if h.Test.OK || !strings.Contains(h.Test.Reason, "are not estimable under clustered errors") {
				t.Errorf("site = 0 computed or without the reason: %+v", h.Test)
			}
		}
	}
	if seen != 2 {
		t.Errorf("%d of the 2 hypotheses found: %+v", seen, or.Hypotheses)
	}
}
