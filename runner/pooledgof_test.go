package runner

import (
	"math"
	"slices"
	"strings"
	"testing"

	"ordplan/internal/rscript"
	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// The check of D2 on goodness-of-fit statistics against mitml (the
// general-purpose multiple-imputation package whose D2 mice::D2 uses):
// testdata/gofd2.R pools the statistics of TestPooledGoodnessOfFit's run
// with mitml, testdata/gofd2-mitml.txt is what it printed (with the R and
// mitml versions and the script's SHA-256), so the check runs without R;
// with R and mitml installed TestPooledGOFAgainstMitml runs it again.
const (
	gofD2Script = "testdata/gofd2.R"
	gofD2Frozen = "testdata/gofd2-mitml.txt"
)

// TestPooledGoodnessOfFit: on imputed data (chained equations, sets that
// differ; a categorical predictor, so both tests apply) the Lipsitz and
// Pulkstenis-Robinson tests of the chosen model are computed on every set
// with that set's own fit, made here again by fit.Fit, and rows, and their
// statistics pooled by D2; the tables are the means of the sets' counts.
func TestPooledGoodnessOfFit(t *testing.T) {
	p := chainedFixture(t, "  imputation: {sets: 4, iterations: 2}")
	or := runPlan(t, p, 0).Outcomes[0]
	im, rec := or.Imputed, or.GOFPooling
	if rec == nil || rec.Method != "D2" || or.Lipsitz == nil || or.PatternSplit == nil || or.PatternSplit.PatternSplit == nil {
		t.Fatalf("pooling %+v, lipsitz %+v, pattern split %+v", rec, or.Lipsitz, or.PatternSplit)
	}
	// Each pooled test keeps its sets' statistics (decisions.json's
	// chi2_by_set).
	ps := or.PatternSplit.PatternSplit
	byLz, byPe, byDe := or.Lipsitz.Test.BySet, ps.Pearson.BySet, ps.Deviance.BySet
	if len(byLz) != im.M || len(byPe) != im.M || len(byDe) != im.M {
		t.Fatalf("statistics by set: %v %v %v", byLz, byPe, byDe)
	}
	var lzDF, prDF int
	for k := range im.Sets {
		r, err := fit.Fit(im.Sets[k], or.Chosen.Result.Model, fit.Options{})
		if err != nil || !r.OK() {
			t.Fatalf("set %d: %v", k+1, err)
		}
		lz, err := fit.LipsitzTest(im.Sets[k], r, 0, fit.Options{})
		if err != nil || !lz.Test.OK {
			t.Fatalf("set %d: Lipsitz %v %+v", k+1, err, lz)
		}
		_, pr := goodnessOfFit(&Loaded{Data: im.Data[k], Design: or.Design, FitData: im.Sets[k]}, r, fit.Options{}, false)
		if pr == nil || pr.PatternSplit == nil {
			t.Fatalf("set %d: Pulkstenis-Robinson %+v", k+1, pr)
		}
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"Lipsitz", byLz[k], lz.Test.Chi2}, {"Pearson", byPe[k], pr.Pearson.Chi2}, {"deviance", byDe[k], pr.Deviance.Chi2}} {
			if math.Abs(c.got-c.want) > 1e-6*math.Max(1, c.want) {
				t.Errorf("set %d: %s statistic %.10g, its own fit gives %.10g", k+1, c.name, c.got, c.want)
			}
		}
		lzDF, prDF = lz.Test.DF, pr.Pearson.DF
	}
	// The statistics are those the check against mitml pools.
	frozen := rscript.Frozen(t, gofD2Frozen)
	for _, c := range []struct {
		name string
		by   []float64
	}{{"lipsitz", byLz}, {"pearson", byPe}, {"deviance", byDe}} {
		want := frozen.Get(t, c.name+"_chi2")
		for k := range want {
			if math.Abs(c.by[k]-want[k]) > 1e-6*want[k] {
				t.Errorf("%s statistic of set %d: %.17g, %s has %.17g (make the script's statistics again)", c.name, k+1, c.by[k], gofD2Frozen, want[k])
			}
		}
	}
	if byLz[0] == byLz[1] {
		t.Error("the sets give the same Lipsitz statistic: the check cannot tell sets apart")
	}
	for _, c := range []struct {
		name string
		got  fit.Test
		by   []float64
		df   int
	}{{"lipsitz", or.Lipsitz.Test, byLz, lzDF}, {"pulkstenis_robinson_pearson", ps.Pearson, byPe, prDF}, {"pulkstenis_robinson_deviance", ps.Deviance, byDe, prDF}} {
		want, err := impute.D2(c.by, c.df)
		if err != nil {
			t.Fatal(err)
		}
		g := c.got
		if want.Warnings == "" && (!g.OK || g.P != want.P) || g.Name != c.name || g.Pooled != "D2" || g.DF != c.df || g.Chi2 != want.F*float64(c.df) || g.DF2 != want.DF2 {
			t.Errorf("%s: %+v, want D2 %+v", c.name, g, want)
		}
		if !slices.Equal(g.BySet, c.by) {
			t.Errorf("%s: statistics by set %v, want %v", c.name, g.BySet, c.by)
		}
		// A negative D2 is set to 0, the usual practice, and the test has
		// no p-value (the 1 of F = 0 would read as a perfect fit): its
		// reason says that the sets disagree.
		if want.Warnings != "" {
			if g.OK || !g.Negative || !math.IsNaN(g.P) || g.Chi2 != 0 || !strings.HasPrefix(g.Reason, D2NegativeWords+"; the 4 imputed sets' statistics (from ") {
				t.Errorf("%s: D2 below 0 gives %+v, want 0 with no p-value and the reason", c.name, g)
			}
		} else if g.Warning != "" {
			t.Errorf("%s: warning %q on a positive D2", c.name, g.Warning)
		}
	}
	// The tables: the means of the sets' counts, so the observations add up
	// to the rows of a set and observed and expected agree in total.
	for _, tab := range []struct {
		name     string
		weight   []float64
		obs, exp [][]float64
	}{{"score groups", or.Lipsitz.Table.Weight, or.Lipsitz.Table.Observed, or.Lipsitz.Table.Expected}, {"patterns", ps.Weight, ps.Observed, ps.Expected}} {
		n, o, e := 0.0, 0.0, 0.0
		for g := range tab.weight {
			n += tab.weight[g]
			for j := range tab.obs[g] {
				o += tab.obs[g][j]
				e += tab.exp[g][j]
			}
		}
		if math.Abs(n-float64(im.Rows)) > 1e-9 || math.Abs(o-n) > 1e-9 || math.Abs(e-n) > 1e-6 {
			t.Errorf("%s: N %g, observed %g, expected %g, want %d rows", tab.name, n, o, e, im.Rows)
		}
	}
}

// TestPooledChi2NegativeD2: statistics that vary more between the sets
// than their size allows (five sets' Lipsitz statistics on 9 df, from a
// run of clustered imputed data) give a D2 below 0, here
// (7.8173/9 - 1.5 r)/(1 + r) = -0.0074 with r = 1.2 var(sqrt(d)) = 0.5869 (by
// hand below), which mitml
// leaves negative (it computes the formula as it stands): the pooled test
// is set to 0, as is usual, keeps the sets' statistics, and has no p-value
// (OK false, Negative, P NaN: the 1 of F = 0 would read as a perfect fit),
// its reason saying that the sets disagree.
func TestPooledChi2NegativeD2(t *testing.T) {
	chi := []float64{7.724170720314078, 14.280725339636774, 6.695936285814923, 3.3120164958536407, 7.073863827351715}
	per := make([]fit.Test, len(chi))
	for k, x := range chi {
		per[k] = fit.Test{Name: "lipsitz", OK: true, Chi2: x, DF: 9}
	}
	// The formula by hand: mean, variance of the square roots.
	var dbar, sbar, v float64
	for _, x := range chi {
		dbar += x / 5
		sbar += math.Sqrt(x) / 5
	}
	for _, x := range chi {
		v += (math.Sqrt(x) - sbar) * (math.Sqrt(x) - sbar) / 4
	}
	r := 1.2 * v
	if raw := (dbar/9 - 1.5*r) / (1 + r); raw >= 0 {
		t.Fatalf("D2 by hand %g is not negative: the case is not checked", raw)
	}
	g := pooledChi2("lipsitz", per)
	want := "no p-value: the D2 statistic came out negative and is shown as 0; the 5 imputed sets' statistics (from 3.31202 to 14.2807 on 9 df) vary more than their size allows, so the pooled test is not informative (the p = 1 of F = 0 would not mean that the model fits)"
	if g.OK || !g.Negative || g.Chi2 != 0 || !math.IsNaN(g.P) || g.DF != 9 || g.Pooled != "D2" || g.Reason != want || g.Warning != "" || !slices.Equal(g.BySet, chi) {
		t.Errorf("pooled: %+v", g)
	}
	// A set's negative statistic counts as 0 in the statistics kept.
	per[3].Chi2 = -0.5
	if g := pooledChi2("lipsitz", per); g.BySet[3] != 0 {
		t.Errorf("a negative statistic of a set is kept as %g", g.BySet[3])
	}
}

// checkGOFD2 pools the statistics R printed (v) by impute.D2 and compares
// with mitml's D2: F (a negative F is 0 here, with p = 1), k, v, r and the
// p-value of F(k, v). It returns the largest relative difference.
func checkGOFD2(t *testing.T, v rscript.Values) float64 {
	t.Helper()
	worst := 0.0
	cmp := func(what string, got, want float64) {
		d := math.Abs(got - want)
		if want != 0 {
			d /= math.Abs(want)
		}
		worst = math.Max(worst, d)
		if !(d <= 1e-12) {
			t.Errorf("%s: %.17g, mitml %.17g", what, got, want)
		}
	}
	for _, name := range []string{"lipsitz", "pearson", "deviance"} {
		r := v.Get(t, name+"_d2") // F, k, v, r, p
		got, err := impute.D2(v.Get(t, name+"_chi2"), int(r[1]))
		if err != nil {
			t.Fatal(err)
		}
		if r[0] < 0 {
			if got.F != 0 || got.P != 1 || got.Warnings == "" {
				t.Errorf("%s: mitml's D2 is negative (%g); here F %g, p %g, warning %q", name, r[0], got.F, got.P, got.Warnings)
			}
		} else {
			cmp(name+" F", got.F, r[0])
		}
		cmp(name+" k", float64(got.DF1), r[1])
		cmp(name+" v", got.DF2, r[2])
		cmp(name+" r", got.RIV, r[3])
		cmp(name+" p", got.P, r[4])
	}
	return worst
}

// D2 on the goodness-of-fit statistics of a run agrees with mitml's D2,
// frozen in testdata by the script that sits beside it.
func TestPooledGOFAgainstMitmlFrozen(t *testing.T) {
	v := rscript.FrozenBy(t, gofD2Script, gofD2Frozen, "cd runner/testdata && Rscript --vanilla gofd2.R")
	t.Logf("largest relative difference from mitml's D2: %.2g", checkGOFD2(t, v))
}

// TestPooledGOFAgainstMitml runs testdata/gofd2.R with the mitml installed
// here: D2 agrees with it, and it prints what the frozen file holds.
func TestPooledGOFAgainstMitml(t *testing.T) {
	rscript.RequirePackages(t, "mitml")
	v := rscript.Run(t, t.TempDir(), gofD2Script)
	worst := checkGOFD2(t, v)
	frozen := rscript.Frozen(t, gofD2Frozen)
	for _, name := range []string{"lipsitz_d2", "pearson_d2", "deviance_d2"} {
		a, b := v.Get(t, name), frozen.Get(t, name)
		for j := range a {
			if math.Abs(a[j]-b[j]) > 1e-12*math.Abs(b[j]) {
				t.Errorf("%s[%d]: mitml here %.17g, frozen %.17g", name, j, a[j], b[j])
			}
		}
	}
	t.Logf("agreement with mitml's D2: %.2g (limit 1e-12)", worst)
}

// The pooled goodness-of-fit records say why they are not pooled: a
// reason every set gives (sampling weights) as it is, another naming its
// set, sets with other numbers of score groups, or other patterns.
func TestPooledGoodnessOfFitNotPooled(t *testing.T) {
	ok := fit.Test{Name: "lipsitz", OK: true, Chi2: 3, DF: 2}
	why := fit.Test{Name: "lipsitz", Reason: likelihoodNote}
	if got := setReason([]fit.Test{why, why}); got != likelihoodNote {
		t.Errorf("shared reason: %q", got)
	}
	if got := setReason([]fit.Test{ok, why}); got != "in imputed set 2: "+likelihoodNote {
		t.Errorf("reason of one set: %q", got)
	}
	table := func(groups int) *fit.ScoreGroups {
		return &fit.ScoreGroups{Groups: groups, Categories: []string{"1", "2"}, Low: make([]float64, groups), High: make([]float64, groups),
			Weight: make([]float64, groups), Observed: zeros(groups, 2), Expected: zeros(groups, 2)}
	}
	lz := pooledLipsitz([]*fit.Lipsitz{{Test: ok, Table: table(3)}, {Test: ok, Table: table(2)}})
	if lz.Test.OK || lz.Table != nil || !strings.Contains(lz.Test.Reason, "imputed set 2 has 2 groups of predicted score but set 1 has 3") {
		t.Errorf("groups differ: %+v", lz)
	}
	lz = pooledLipsitz([]*fit.Lipsitz{{Test: why, Table: table(3)}, {Test: why, Table: table(3)}})
	if lz.Test.OK || lz.Test.Reason != likelihoodNote || lz.Table == nil {
		t.Errorf("sampling weights: %+v", lz)
	}
	split := func(patterns ...string) *PatternSplitRecord {
		n := len(patterns)
		return &PatternSplitRecord{Predictors: []string{"g"}, PatternSplit: &fit.PatternSplit{Groups: n, Categories: []string{"1", "2"}, Pattern: patterns,
			Half: make([]string, n), Weight: make([]float64, n), Observed: zeros(n, 2), Expected: zeros(n, 2)}}
	}
	ps := pooledPatternSplit([]*PatternSplitRecord{split("g=a", "g=b"), split("g=a", "g=c")})
	if ps.PatternSplit != nil || !strings.Contains(ps.NotComputed, "imputed set 2 differ from those of set 1") {
		t.Errorf("patterns differ: %+v", ps)
	}
}
