package fit_test

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"ordplan/runner/fit"
)

// oneClusterThree is seeded data of our own with three ordered categories:
// 12 clusters of 40 rows; x, z ~ N(0,1) (three decimals); s1 and s2 are the
// dummies of clusters 1 and 2 (each site's rows in one cluster), the other
// clusters the reference site; the category is 1, 2 or 3 as 0.8 x - 0.5 z +
// 0.4 s1 - 0.3 s2 + e (e standard logistic) falls below -0.5, between -0.5
// and 0.7, or above.
func oneClusterThree() (*fit.Data, []string) {
	rng := rand.New(rand.NewPCG(20261205, 11))
	d := &fit.Data{J: 3, Predictors: []string{"x", "z", "s1", "s2"}}
	var clusters []string
	for g := 1; g <= 12; g++ {
		for i := 0; i < 40; i++ {
			x, z := round(rng.NormFloat64(), 3), round(rng.NormFloat64(), 3)
			var s1, s2 float64
			switch g {
			case 1:
				s1 = 1
			case 2:
				s2 = 1
			}
			u := rng.Float64()
			e := 0.8*x - 0.5*z + 0.4*s1 - 0.3*s2 + math.Log(u/(1-u))
			y := 0
			if e > -0.5 {
				y++
			}
			if e > 0.7 {
				y++
			}
			d.Y = append(d.Y, y)
			d.X = append(d.X, x, z, s1, s2)
			clusters = append(clusters, string(rune('a'+g-1)))
		}
	}
	return d, clusters
}

// clusteredFit fits m to the data of oneClusterThree with errors
// clustered by site, whose dummies s1 and s2 it must mark not estimable.
func clusteredFit(t *testing.T, m fit.Model) *fit.Result {
	t.Helper()
	d, clusters := oneClusterThree()
	r := mustFit(t, "site-clustered", d, m, fit.Options{})
	V, info, err := fit.SandwichEstimate(d, r, fit.Clustered, clusters, false)
	if err != nil {
		t.Fatal(err)
	}
	r.UseCovariance(V, info)
	if r.NotEstimable == nil {
		t.Fatalf("%s: nothing marked not estimable", r.Name)
	}
	for j, n := range r.ParamNames {
		if math.IsNaN(r.StdErrors[j]) != (strings.HasPrefix(n, "s1") || strings.HasPrefix(n, "s2")) {
			t.Fatalf("%s: %s has standard error %g (marked: %v)", r.Name, n, r.StdErrors[j], r.NotEstimable.Parameters)
		}
	}
	return r
}

// index is the position of parameter name among r's.
func index(t *testing.T, r *fit.Result, name string) int {
	t.Helper()
	for j, n := range r.ParamNames {
		if n == name {
			return j
		}
	}
	t.Fatalf("%s has no parameter %s (%v)", r.Name, name, r.ParamNames)
	return -1
}

// TestOneClusterBaselineForm: the baseline-category form of an adjacent
// nonparallel logit is a linear map of its parameters (ln[P(j)/P(1)] =
// -sum_{m<j} tau_m + x' sum_{m<j} b_m). With the site dummies marked not
// estimable under errors clustered by site, only the outputs whose row of
// the map touches them are n/a: the intercepts and the slopes of x and z
// keep the errors the identity Var(a'theta) = a'Va gives from the
// covariance as computed (the sandwich, whose entries TestOneClusterAgainstR
// checks against R's by hand), written out here per output.
func TestOneClusterBaselineForm(t *testing.T) {
	r := clusteredFit(t, parallelModel(fit.Adjacent, false, fit.Logit, 4, fit.Nonparallel))
	b, err := r.Baseline(0)
	if err != nil {
		t.Fatal(err)
	}
	V := r.CovarianceAsComputed()
	P := len(r.Estimates)
	sum := func(names ...string) float64 { // Var of the sum of the named parameters
		v := 0.0
		for _, a := range names {
			for _, c := range names {
				v += V[index(t, r, a)*P+index(t, r, c)]
			}
		}
		return v
	}
	want := map[string]float64{
		"alpha[1]": sum("tau[1]"), "alpha[2]": sum("tau[1]", "tau[2]"),
		"x[1]": sum("x[1]"), "x[2]": sum("x[1]", "x[2]"),
		"z[1]": sum("z[1]"), "z[2]": sum("z[1]", "z[2]"),
	}
	for i, n := range b.Names {
		v, ok := want[n]
		if !ok {
			if !math.IsNaN(b.StdErrors[i]) {
				t.Errorf("baseline %s rests on a site dummy but has standard error %g", n, b.StdErrors[i])
			}
			continue
		}
		if se := math.Sqrt(v); math.Abs(b.StdErrors[i]-se) > 1e-10*se {
			t.Errorf("baseline %s: standard error %.12g, by hand %.12g", n, b.StdErrors[i], se)
		}
	}
}

// TestOneClusterStereotypeScores: the category-score form of a stereotype
// fit maps every slope through the scale S = phi_1 + phi_2 = 1 + phi_2
// (beta_k = S g_k, score_2 = 1/S, alpha_j = -sum_{m<j} tau_m). With the site
// dummies marked, only their beta is n/a; alpha, the score and the beta of
// x and z keep the delta-method errors g'Vg, their gradients written out
// here, from the covariance as computed.
func TestOneClusterStereotypeScores(t *testing.T) {
	r := clusteredFit(t, parallelModel(fit.Adjacent, false, fit.Logit, 4, fit.Constrained))
	s, err := r.StereotypeScores()
	if err != nil {
		t.Fatal(err)
	}
	V := r.CovarianceAsComputed()
	P := len(r.Estimates)
	phi := -1
	for j, n := range r.ParamNames {
		if strings.HasPrefix(n, "phi") {
			phi = j
		}
	}
	if phi < 0 {
		t.Fatalf("no phi among %v", r.ParamNames)
	}
	S := 1 + r.Estimates[phi]
	se := func(g map[int]float64) float64 {
		v := 0.0
		for a, ga := range g {
			for c, gc := range g {
				v += ga * gc * V[a*P+c]
			}
		}
		return math.Sqrt(v)
	}
	near := func(what string, got, want float64) {
		if math.IsNaN(got) || math.Abs(got-want) > 1e-10*want {
			t.Errorf("%s: standard error %.12g, by hand %.12g", what, got, want)
		}
	}
	t1, t2 := index(t, r, "tau[1]"), index(t, r, "tau[2]")
	near("alpha[2]", s.AlphaSE[1], se(map[int]float64{t1: 1}))
	near("alpha[3]", s.AlphaSE[2], se(map[int]float64{t1: 1, t2: 1}))
	near("score[2]", s.ScoreSE[1], se(map[int]float64{phi: -1 / (S * S)}))
	for k, p := range s.Predictors {
		if p == "s1" || p == "s2" {
			if !math.IsNaN(s.BetaSE[k]) {
				t.Errorf("beta of %s: standard error %g, want n/a", p, s.BetaSE[k])
			}
			continue
		}
		g := index(t, r, p)
		near("beta of "+p, s.BetaSE[k], se(map[int]float64{g: S, phi: r.Estimates[g]}))
	}
}
