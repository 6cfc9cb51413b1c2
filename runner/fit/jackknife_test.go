package fit

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"
)

// jackknifeByHand is the delete-one-cluster jackknife covariance made
// without ClusterJackknife: each cluster's rows left out, the model fitted
// anew from its usual start (random starts included), and
// (G-1)/G sum_g (b_(g) - b_mean)(b_(g) - b_mean)'.
func jackknifeByHand(t *testing.T, d *Data, m Model, clusters []string, G int) []float64 {
	t.Helper()
	var est [][]float64
	for g := 0; g < G; g++ {
		id := fmt.Sprintf("c%02d", g)
		var out []int
		for i, c := range clusters {
			if c == id {
				out = append(out, i)
			}
		}
		r, err := Fit(d.without(out), m, Options{Workers: 1})
		if err != nil || !r.OK() {
			t.Fatalf("%s without %s: %v %v", m.Name(), id, err, r)
		}
		est = append(est, r.Estimates)
	}
	P := len(est[0])
	mean := make([]float64, P)
	for _, b := range est {
		for j := range b {
			mean[j] += b[j] / float64(G)
		}
	}
	V := make([]float64, P*P)
	for _, b := range est {
		for i := 0; i < P; i++ {
			for j := 0; j < P; j++ {
				V[i*P+j] += float64(G-1) / float64(G) * (b[i] - mean[i]) * (b[j] - mean[j])
			}
		}
	}
	return V
}

// TestJackknifeEveryModel: for every comparison (stage in both
// directions), every link and every effect structure (parallel, partial,
// constrained, nonparallel, stereotype), the delete-one-cluster jackknife
// of ClusterJackknife, whose refits start at the full fit's estimates with
// no random starts, equals the same formula on refits made from each
// model's usual starts (jackknifeByHand) to 1e-6 relative (of
// sqrt(V_ii V_jj)): the warm start changes where the iterations begin,
// not the maximum they reach. Its references are t and F on G-1 = 7
// degrees of freedom, and its rank is at most G-1.
func TestJackknifeEveryModel(t *testing.T) {
	d := clusteredData(t)
	const G = 8
	clusters := dealt(d.N(), G)
	var cases []Model
	for _, c := range []struct {
		cmp      Comparison
		backward bool
	}{{Cumulative, false}, {Stage, false}, {Stage, true}, {Adjacent, false}} {
		cases = append(cases,
			robModel(c.cmp, c.backward, Logit, 3, Parallel),
			robModel(c.cmp, c.backward, Logit, 3, Nonparallel),
			Model{Comparison: c.cmp, Backward: c.backward, Link: Logit, Effects: []Effect{Nonparallel, Parallel, Parallel}},
			Model{Comparison: c.cmp, Backward: c.backward, Link: Logit, Effects: []Effect{Constrained, Constrained, Parallel}})
	}
	for _, l := range []Link{Probit, Cloglog, Loglog, Cauchy} {
		cases = append(cases, robModel(Cumulative, false, l, 3, Parallel))
	}
	cases = append(cases, robModel(Adjacent, false, Logit, 3, Constrained))
	structures := map[Structure]bool{}
	for _, m := range cases {
		structures[m.Structure()] = true
		r := fitOK(t, d, m)
		V, info, err := ClusterJackknife(d, r, clusters, Options{Workers: 1})
		if err != nil {
			t.Fatalf("%s: %v", m.Name(), err)
		}
		want := jackknifeByHand(t, d, m, clusters, G)
		P := len(r.Estimates)
		worst := 0.0
		for i := 0; i < P; i++ {
			for j := 0; j < P; j++ {
				worst = math.Max(worst, math.Abs(V[i*P+j]-want[i*P+j])/math.Sqrt(want[i*P+i]*want[j*P+j]))
			}
		}
		if !(worst <= 1e-6) {
			t.Errorf("%s: jackknife differs from refits from the usual starts by %.3g (relative)", m.Name(), worst)
		}
		if info.Clusters != G || info.DF != G-1 || info.Correction != Jackknife || info.Type != Clustered {
			t.Errorf("%s: info %+v", m.Name(), info)
		}
		r.UseCovariance(V, info)
		if r.RefDF != G-1 || r.ReferenceDF() != G-1 {
			t.Errorf("%s: reference df %g", m.Name(), r.RefDF)
		}
		if P > G-1 {
			if rank := RestrictionRank(identityRows(P), V); rank > G-1 {
				t.Errorf("%s: rank %d above G-1 = %d", m.Name(), rank, G-1)
			}
		}
	}
	if len(structures) != len(StructureWords.Names()) {
		t.Errorf("structures covered: %v", structures)
	}
}

// TestJackknifeReferences: on a jackknife covariance from G clusters an
// estimate's interval and p-value take t on G-1 degrees of freedom, and a
// Wald statistic W of q restrictions is referred as W/q to F(q, G-1).
// Reference values of t and F from their definitions, computed here by
// numerical integration of the densities (independent of the library
// routines the program calls).
func TestJackknifeReferences(t *testing.T) {
	d := clusteredData(t)
	const G = 6
	clusters := dealt(d.N(), G)
	r := fitOK(t, d, robModel(Cumulative, false, Logit, 3, Parallel))
	V, info, err := ClusterJackknife(d, r, clusters, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	r.UseCovariance(V, info)
	k := 3 // the first slope
	inf := r.ParamInference(k, 0.95)
	tStat := r.Estimates[k] / r.StdErrors[k]
	if want := 2 * tTail(math.Abs(tStat), G-1); math.Abs(inf.P-want) > 1e-7*want {
		t.Errorf("p-value %.12g, t(%d) tail by integration %.12g", inf.P, G-1, want)
	}
	// The 0.975 quantile of t(5) is 2.570582 (printed tables of t, to six
	// decimals; a value from memory).
	if q := (inf.High - r.Estimates[k]) / r.StdErrors[k]; math.Abs(q-2.570582) > 6e-7 {
		t.Errorf("interval half-width %.12g standard errors, want the t(5) quantile 2.570582", q)
	}
	h := mustHypothesis(t, "x1 = 0; x2 = 0", r.ParamNames)
	w := WaldLinear(r, h)
	// Referred as W (G-q)/((G-1) q) to F(q, G-q) (waldTest).
	if !w.OK || !w.FRef || w.DF != 2 || w.DF2 != G-2 || math.Abs(w.F-w.Chi2*(G-2)/((G-1)*2)) > 1e-12*w.F || w.Reference != "F(2, 4)" {
		t.Fatalf("Wald test %+v", w)
	}
	if want := fTail(w.F, 2, G-2); math.Abs(w.P-want) > 1e-7*want {
		t.Errorf("Wald p-value %.12g, F(2, %d) tail by integration %.12g", w.P, G-2, want)
	}
	// G-1 = 5 restrictions are tested, 6 are refused.
	all := identityRows(len(r.Estimates))
	if x := WaldLinear(r, &Hypothesis{R: all[:6], C: make([]float64, 6)}); x.OK || !strings.Contains(x.Reason, "6 restrictions need at least 7 clusters") {
		t.Errorf("6 restrictions on 6 clusters: %+v", x)
	}
}

// tTail is P(T > x) for T ~ t(nu), by Simpson's rule on the density
// over [x, x + 200] in 200000 steps (the rest is below 1e-9 for nu >= 5).
func tTail(x float64, nu int) float64 {
	n := float64(nu)
	lc := lgammaOf((n+1)/2) - lgammaOf(n/2) - 0.5*math.Log(n*math.Pi)
	f := func(u float64) float64 { return math.Exp(lc - (n+1)/2*math.Log1p(u*u/n)) }
	return simpson(f, x, x+200, 200000)
}

// fTail is P(F > x) for F ~ F(d1, d2), by Simpson's rule on the density
// after the substitution F = x + s/(1-s), s in [0, 1).
func fTail(x float64, d1, d2 int) float64 {
	a, b := float64(d1), float64(d2)
	lc := lgammaOf((a+b)/2) - lgammaOf(a/2) - lgammaOf(b/2) + a/2*math.Log(a/b)
	dens := func(v float64) float64 {
		return math.Exp(lc + (a/2-1)*math.Log(v) - (a+b)/2*math.Log1p(a*v/b))
	}
	g := func(s float64) float64 {
		if s >= 1 {
			return 0
		}
		return dens(x+s/(1-s)) / ((1 - s) * (1 - s))
	}
	return simpson(g, 0, 1, 200000)
}

func lgammaOf(x float64) float64 { v, _ := math.Lgamma(x); return v }

func simpson(f func(float64) float64, a, b float64, n int) float64 {
	h := (b - a) / float64(n)
	s := f(a) + f(b)
	for i := 1; i < n; i++ {
		w := 2.0
		if i%2 == 1 {
			w = 4
		}
		s += w * f(a+float64(i)*h)
	}
	return s * h / 3
}

// TestJackknifeRefusesFailedRefit: a refit without a cluster that cannot
// reach a maximum refuses the covariance, naming the cluster and why.
func TestJackknifeRefusesFailedRefit(t *testing.T) {
	d := clusteredData(t)
	const G = 5
	clusters := dealt(d.N(), G)
	// Every row of the top category in cluster c03: without it the
	// category is empty.
	for i, y := range d.Y {
		if y == d.J-1 {
			clusters[i] = "c03"
		}
	}
	m := robModel(Cumulative, false, Logit, 3, Parallel)
	r := fitOK(t, d, m)
	_, _, err := ClusterJackknife(d, r, clusters, Options{Workers: 1})
	if err == nil || !strings.Contains(err.Error(), `without cluster "c03"`) || !strings.Contains(err.Error(), `has no row in category "4"`) {
		t.Errorf("empty category: %v", err)
	}
	// x2 (0/1) is 1 only in cluster c01: its column's rows lie in one
	// cluster (NotEstimable). The jackknife is computed for the others
	// (TestJackknifeOneClusterColumns) and marks x2 with the sandwich's
	// reason.
	d2 := clusteredData(t)
	cl2 := dealt(d2.N(), G)
	for i := range cl2 {
		if d2.X[i*3+1] == 1 {
			cl2[i] = "c01"
		}
	}
	r2 := fitOK(t, d2, m)
	_, info2, err := ClusterJackknife(d2, r2, cl2, Options{Workers: 1})
	if err != nil || info2.NotEstimable == nil || strings.Join(info2.NotEstimable.Parameters, ",") != "x2" ||
		!strings.Contains(info2.NotEstimable.Reason, "the standard errors of x2 are not estimable under clustered errors") {
		t.Errorf("constant predictor: %v %+v", err, info2.NotEstimable)
	}
	// Separation: the rows with x2 = 1 in the lowest category all lie in
	// cluster c02; without it x2 = 1 never meets the lowest category, and in
	// the nonparallel model the slope of x2 at the first boundary has no
	// finite maximum.
	d3 := clusteredData(t)
	cl3 := dealt(d3.N(), G)
	for i := range cl3 {
		if cl3[i] == "c02" {
			cl3[i] = "c00"
		}
		if d3.X[i*3+1] == 1 && d3.Y[i] == 0 {
			cl3[i] = "c02"
		}
	}
	r3 := fitOK(t, d3, robModel(Cumulative, false, Logit, 3, Nonparallel))
	_, _, err = ClusterJackknife(d3, r3, cl3, Options{Workers: 1})
	if err == nil || !strings.Contains(err.Error(), `without cluster "c02"`) || !strings.Contains(err.Error(), "has no usable maximum (no_finite_maximum") {
		t.Errorf("separation: %v", err)
	}
}

// dealt deals n rows into G clusters c00, c01, ...: row i into i mod G.
func dealt(n, G int) []string {
	out := make([]string, n)
	for i := range out {
		out[i] = fmt.Sprintf("c%02d", i%G)
	}
	return out
}

// withColumns is d with the predictors listed (by name) left out and
// the columns of extra (one value per row each, named by names) added
// after the others.
func withColumns(d *Data, drop []string, names []string, extra [][]float64) *Data {
	K := d.width()
	var keep []int
	out := &Data{J: d.J, Categories: d.Categories, Y: d.Y, Weights: d.Weights, Offset: d.Offset}
	for k, p := range d.Predictors {
		if !slices.Contains(drop, p) {
			keep = append(keep, k)
			out.Predictors = append(out.Predictors, p)
		}
	}
	out.Predictors = append(out.Predictors, names...)
	for i := range d.Y {
		for _, k := range keep {
			out.X = append(out.X, d.X[i*K+k])
		}
		for _, c := range extra {
			out.X = append(out.X, c[i])
		}
	}
	return out
}

// TestJackknifeOneClusterColumns: with sites as fixed effects and every
// site a cluster of its own (5 clusters: dummies s1 to s4, the site of
// cluster c00 the reference), every site effect and the thresholds rest
// on one cluster each (the thresholds on the reference's: the combination
// that moves the thresholds and every site effect together moves only its
// rows), so they are not estimable; the slopes x1, x2, x3 are. Their
// jackknife equals the same formula on refits made by hand with the usual
// Fit on the columns each refit can estimate: without cluster c0g (g >= 1)
// the data less its dummy s_g (0 on every row left), without c00 the data
// less s1 as well (the other dummies then add up to 1 on every row) — the
// maximum of the slopes does not depend on which such columns are left
// out. The same holds for a nonparallel model, where the site effects are
// one per boundary, and for models constraining predictors to a common
// scale, x1 and x2, or x1 and the site dummies (phi[2], phi[3] and the g
// of x1 and x2 estimable, as x3), whose refits by hand are the usual Fit
// of the same constrained model (several starts, the best kept). Each
// model's entries of the marked parameters are NaN.
func TestJackknifeOneClusterColumns(t *testing.T) {
	base := clusteredData(t)
	const G = 5
	clusters := dealt(base.N(), G)
	names := []string{"s1", "s2", "s3", "s4"}
	dummies := make([][]float64, len(names))
	for k := range dummies {
		dummies[k] = make([]float64, base.N())
		for i, c := range clusters {
			if c == fmt.Sprintf("c%02d", k+1) {
				dummies[k][i] = 1
			}
		}
	}
	d := withColumns(base, nil, names, dummies)
	P, N, C := Parallel, Nonparallel, Constrained
	for _, c := range []struct {
		effects []Effect
		kept    []string // the parameters the jackknife estimates
	}{
		{[]Effect{P, P, P, P, P, P, P}, []string{"x1", "x2", "x3"}},
		{[]Effect{P, P, P, N, N, N, N}, []string{"x1", "x2", "x3"}},
		// x1 and x2 on a common scale.
		{[]Effect{C, C, P, P, P, P, P}, []string{"x1", "x2", "x3", "phi[2]", "phi[3]"}},
		// The site dummies on x1's common scale: without the reference's
		// cluster the thresholds and their g move together, along phi.
		{[]Effect{C, P, P, C, C, C, C}, []string{"x1", "x2", "x3", "phi[2]", "phi[3]"}},
	} {
		m := Model{Comparison: Cumulative, Link: Logit, Effects: c.effects}
		kept := c.kept
		r := fitOK(t, d, m)
		V, info, err := ClusterJackknife(d, r, clusters, Options{Workers: 1})
		if err != nil {
			t.Fatalf("%s: %v", m.Name(), err)
		}
		ne := info.NotEstimable
		if ne == nil || strings.Join(ne.Clusters, ",") != "c00,c01,c02,c03,c04" {
			t.Fatalf("%s: not estimable %+v", m.Name(), ne)
		}
		P := len(r.Estimates)
		slopes := map[string]int{}
		for j, n := range r.ParamNames {
			if slices.Contains(kept, n) {
				slopes[n] = j
			} else if !slices.Contains(ne.Parameters, n) {
				t.Errorf("%s: %s not marked", m.Name(), n)
			}
		}
		if len(slopes) != len(kept) || len(ne.Parameters) != P-len(kept) {
			t.Fatalf("%s: slopes %v, marked %v", m.Name(), slopes, ne.Parameters)
		}
		// By hand.
		var est [][]float64
		for g := 0; g < G; g++ {
			id := fmt.Sprintf("c%02d", g)
			var out []int
			for i, c := range clusters {
				if c == id {
					out = append(out, i)
				}
			}
			drop := []string{"s1"}
			if g > 0 {
				drop = []string{names[g-1]}
			}
			var sub []string
			var subCols [][]float64
			for k, n := range names {
				if !slices.Contains(drop, n) {
					sub = append(sub, n)
					subCols = append(subCols, dummies[k])
				}
			}
			dg := withColumns(base, nil, sub, subCols).without(out)
			mg := Model{Comparison: Cumulative, Link: Logit, Effects: m.Effects[:3+len(sub)]}
			rg, err := Fit(dg, mg, Options{Workers: 1})
			if err != nil || !rg.OK() {
				t.Fatalf("%s without %s: %v %v", m.Name(), id, err, rg)
			}
			b := make([]float64, len(kept))
			for k, n := range kept {
				b[k] = rg.Estimates[slices.Index(rg.ParamNames, n)]
			}
			est = append(est, b)
		}
		worst := 0.0
		for a, na := range kept {
			for c, nc := range kept {
				ma, mc := 0.0, 0.0
				for _, b := range est {
					ma += b[a] / G
					mc += b[c] / G
				}
				want := 0.0
				for _, b := range est {
					want += float64(G-1) / G * (b[a] - ma) * (b[c] - mc)
				}
				got := V[slopes[na]*P+slopes[nc]]
				worst = math.Max(worst, math.Abs(got-want)/math.Sqrt(V[slopes[na]*P+slopes[na]]*V[slopes[nc]*P+slopes[nc]]))
			}
		}
		t.Logf("%s: marked %v; slopes' jackknife against refits by hand %.3g", m.Name(), ne.Parameters, worst)
		if !(worst <= 1e-6) {
			t.Errorf("%s: slopes' jackknife differs from refits by hand by %.3g (relative)", m.Name(), worst)
		}
		for j := 0; j < P; j++ {
			if slices.Contains(ne.Parameters, r.ParamNames[j]) && !math.IsNaN(V[j*P+j]) {
				t.Errorf("%s: %s variance %g, want NaN", m.Name(), r.ParamNames[j], V[j*P+j])
			}
		}
	}
}
