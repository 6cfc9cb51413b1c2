package fit

import (
	"math"
	"math/rand/v2"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// nullLogLikClosedForm is the log-likelihood of the thresholds-only model
// without an offset: its J-1 thresholds reproduce the observed category
// shares exactly, whatever the comparison and link, so it is
// sum_j n_j log(n_j / N).
func nullLogLikClosedForm(d *Data) float64 {
	n := make([]float64, d.J)
	tot := 0.0
	for i, y := range d.Y {
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		n[y] += w
		tot += w
	}
	ll := 0.0
	for _, c := range n {
		ll += c * math.Log(c/tot)
	}
	return ll
}

// TestOverallFitGSS checks the null model, the likelihood-ratio test
// against it and the pseudo-R2 measures of the cumulative logit with
// parallel effects on the General Social Survey extract of Long (1997),
// ch. 5 (data: testdata/reference/gsswarm).
//
// Published values, from memory (Long & Freese 2014, Regression Models for
// Categorical Dependent Variables Using Stata, 3rd ed., the ordered logit
// of warm): LR chi2(6) = 301.72, McFadden's R2 = 0.050, Cox-Snell 0.123,
// Nagelkerke (Cragg-Uhler) 0.133. They are checked to the digits printed.
// No published McKelvey-Zavoina value is at hand with certainty: it is
// checked against its definition with the variance from gonum's
// stat.PopVariance. The exact identities are checked tightly.
func TestOverallFitGSS(t *testing.T) {
	t.Logf("data: %s", refSources["gsswarm"])
	rs := loadRef(t, "gsswarm")
	preds := []string{"yr89", "male", "white", "age", "ed", "prst"}
	d := rs.data(preds)
	m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(len(preds), Parallel)}
	r, err := Fit(d, m, Options{})
	if err != nil || !r.OK() {
		t.Fatalf("fit: %v %v", err, r)
	}
	null, err := FitNull(d, m, Options{})
	if err != nil || !null.OK() {
		t.Fatalf("null fit: %v", err)
	}
	if want := nullLogLikClosedForm(d); math.Abs(null.LogLik-want) > tolLL {
		t.Errorf("null log-likelihood %.8f, closed form %.8f", null.LogLik, want)
	}
	o := OverallFit(d, r, null)
	if !o.LR.OK || o.LR.DF != 6 {
		t.Fatalf("LR against the null model: %+v", o.LR)
	}
	if want := 2 * (r.LogLik - null.LogLik); math.Abs(o.LR.Chi2-want) > 1e-9 {
		t.Errorf("LR %.8f, want %.8f", o.LR.Chi2, want)
	}
	// Exact definitions.
	n := r.NObs
	cs := 1 - math.Exp(2*(null.LogLik-r.LogLik)/n)
	checks := []struct {
		name       string
		got, exact float64
		published  float64
		digits     int
	}{
		{"LR chi2", o.LR.Chi2, 2 * (r.LogLik - null.LogLik), 301.72, 2},
		{"McFadden", o.McFadden, 1 - r.LogLik/null.LogLik, 0.050, 3},
		{"Cox-Snell", o.CoxSnell, cs, 0.123, 3},
		{"Nagelkerke", o.Nagelkerke, cs / (1 - math.Exp(2*null.LogLik/n)), 0.133, 3},
		{"McKelvey-Zavoina", o.McKelveyZavoina, mzDirect(d, r), math.NaN(), 3},
	}
	for _, c := range checks {
		if math.Abs(c.got-c.exact) > 1e-10*math.Max(1, math.Abs(c.exact)) {
			t.Errorf("%s = %.12g, definition gives %.12g", c.name, c.got, c.exact)
		}
		if math.IsNaN(c.published) {
			continue
		}
		half := 0.5 * math.Pow(10, -float64(c.digits))
		if math.Abs(c.got-c.published) > half+1e-12 {
			t.Errorf("%s = %.6f, published %.*f (from memory)", c.name, c.got, c.digits, c.published)
		}
		t.Logf("%s = %.6f (published %.*f)", c.name, c.got, c.digits, c.published)
	}
}

// mzDirect computes the McKelvey-Zavoina R2 of a parallel cumulative logit
// from its definition, the variance of x'b by gonum's stat.PopVariance.
func mzDirect(d *Data, r *Result) float64 {
	K := len(d.Predictors)
	eta := make([]float64, d.N())
	for i := range eta {
		for k := 0; k < K; k++ {
			eta[i] += d.X[i*K+k] * r.Effects[0][k]
		}
	}
	v := stat.PopVariance(eta, nil)
	return v / (v + math.Pi*math.Pi/3)
}

// TestNullModelEveryComparison: the thresholds-only fit of every comparison
// and link reaches sum_j n_j log(n_j/N) (housing, frequency weights,
// Madsen 1976), and its thresholds are the closed forms that reproduce the
// observed shares p_j (docs/models.md, "The three comparisons"): F^-1 of
// P(y <= m) (cumulative), of p_m / P(y >= m) (stage), of
// P(y <= m) / P(y <= m+1) (stage backward, 0-based m), of
// p_m / (p_m + p_{m+1}) (adjacent); the same on the data expanded to one
// row per person (which the engine tabulates again). With an offset it is
// a real fit and at least as good as the offset-free thresholds shifted by
// the mean offset.
func TestNullModelEveryComparison(t *testing.T) {
	t.Logf("data: %s", refSources["housing"])
	rs := loadRef(t, "housing")
	d := rs.data([]string{"apartment", "atrium", "terrace"})
	want := nullLogLikClosedForm(d)
	p := make([]float64, d.J)
	for i, y := range d.Y {
		p[y] += d.Weights[i]
	}
	floats.Scale(1/floats.Sum(p), p)
	ex := &Data{J: d.J}
	for i, y := range d.Y {
		for r := 0; r < int(d.Weights[i]); r++ {
			ex.Y = append(ex.Y, y)
		}
	}
	for _, c := range []Comparison{Cumulative, Stage, Adjacent} {
		for _, back := range []bool{false, true} {
			if back && c != Stage {
				continue
			}
			for _, l := range []Link{Logit, Probit, Cloglog, Loglog, Cauchy} {
				m := Model{Comparison: c, Backward: back, Link: l, Effects: allEffects(3, Parallel)}
				for _, data := range []*Data{d, ex} {
					null, err := FitNull(data, m, Options{})
					if err != nil || !null.OK() {
						t.Fatalf("%v %v: %v", c, l, err)
					}
					if math.Abs(null.LogLik-want) > tolLL || null.NParams != d.J-1 || null.NRows != data.N() {
						t.Errorf("%s: null LL %.8f (%d params, %d rows), want %.8f", null.Name, null.LogLik, null.NParams, null.NRows, want)
					}
					for j, tau := range null.Cutpoints {
						var share float64
						switch {
						case c == Cumulative:
							share = floats.Sum(p[:j+1])
						case c == Stage && !back:
							share = p[j] / floats.Sum(p[j:])
						case c == Stage:
							share = floats.Sum(p[:j+1]) / floats.Sum(p[:j+2])
						default:
							share = p[j] / (p[j] + p[j+1])
						}
						if closed := l.Quantile(share); math.Abs(tau-closed) > 1e-9*math.Max(1, math.Abs(closed)) {
							t.Errorf("%s (%d rows): tau[%d] = %.12f, closed form %.12f", null.Name, data.N(), j+1, tau, closed)
						}
					}
				}
			}
		}
	}
}

// TestOddsRatios: exp of each slope and of its interval bounds, for
// parallel, nonparallel and constrained effects (gsswarm, Long 1997); the
// constrained standard error is the delta method on b_m = phi_m g, checked
// against a linear combination built by hand.
func TestOddsRatios(t *testing.T) {
	t.Logf("data: %s", refSources["gsswarm"])
	rs := loadRef(t, "gsswarm")
	preds := []string{"yr89", "male", "white", "age", "ed", "prst"}
	d := rs.data(preds)
	eff := allEffects(len(preds), Parallel)
	eff[0], eff[1] = Nonparallel, Parallel
	eff[3], eff[4] = Constrained, Constrained
	level := 0.9
	z := distuv.UnitNormal.Quantile(0.95)
	for _, c := range []Comparison{Cumulative, Stage, Adjacent} {
		m := Model{Comparison: c, Link: Logit, Effects: eff}
		r, err := Fit(d, m, Options{RandomStarts: -1})
		if err != nil || !r.OK() {
			t.Fatalf("%v: %v", c, err)
		}
		ors, err := r.OddsRatios(level)
		if err != nil {
			t.Fatal(err)
		}
		// yr89: 3 boundaries; male, white, prst: 1; age, ed: 3 each.
		if len(ors) != 3+1+1+3+3+1 {
			t.Fatalf("%d odds ratios", len(ors))
		}
		for _, o := range ors {
			k := indexOf(preds, o.Predictor)
			m := max(o.Boundary-1, 0)
			b := r.Effects[m][k]
			var se float64
			switch eff[k] {
			case Parallel:
				i := indexOf(r.ParamNames, o.Predictor)
				se = r.StdErrors[i]
			case Nonparallel:
				i := indexOf(r.ParamNames, o.Predictor+"["+string(rune('0'+o.Boundary))+"]")
				se = r.StdErrors[i]
			case Constrained:
				gi := indexOf(r.ParamNames, o.Predictor)
				g := r.Estimates[gi]
				if o.Boundary == 1 {
					se = r.StdErrors[gi]
				} else {
					pi := indexOf(r.ParamNames, "phi["+string(rune('0'+o.Boundary))+"]")
					phi := r.Estimates[pi]
					P := len(r.Estimates)
					v := phi*phi*r.Cov[gi*P+gi] + g*g*r.Cov[pi*P+pi] + 2*phi*g*r.Cov[gi*P+pi]
					se = math.Sqrt(v)
				}
			}
			if !near(o.Log, b, 1e-12, 1e-14) || !near(o.LogSE, se, 1e-10, 1e-14) {
				t.Errorf("%s %s[%d]: log %g se %g, want %g %g", r.Name, o.Predictor, o.Boundary, o.Log, o.LogSE, b, se)
			}
			if !near(o.Ratio, math.Exp(b), 1e-12, 0) || !near(o.Low, math.Exp(b-z*se), 1e-12, 0) || !near(o.High, math.Exp(b+z*se), 1e-12, 0) {
				t.Errorf("%s %s[%d]: %g [%g, %g] is not exp of %g -/+ %g*%g", r.Name, o.Predictor, o.Boundary, o.Ratio, o.Low, o.High, b, z, se)
			}
			if o.Kind != OddsRatioKind(r.Model) {
				t.Errorf("kind %q", o.Kind)
			}
		}
	}
	// Not a logit: refused.
	r, _ := Fit(d, Model{Comparison: Cumulative, Link: Probit, Effects: allEffects(len(preds), Parallel)}, Options{})
	if _, err := r.OddsRatios(0.95); err == nil {
		t.Error("odds ratios of a probit fit: want an error")
	}
}

// TestLipsitzByDefinition recomputes the Lipsitz test (Lipsitz,
// Fitzmaurice & Molenberghs 1996, Applied Statistics 45:175-190) from its
// definition, independently of GroupByScore: scores from Predict, ranks,
// ten groups by rank (a row with b rows scoring below it and a rows
// scoring the same, itself included, goes to group floor(10 (b + a/2) / n),
// so tied rows stay together), indicators of groups 2..10 added as
// parallel predictors, and the likelihood ratio of the two fits (gsswarm,
// Long 1997).
func TestLipsitzByDefinition(t *testing.T) {
	t.Logf("data: %s", refSources["gsswarm"])
	rs := loadRef(t, "gsswarm")
	preds := []string{"yr89", "male", "white", "age", "ed", "prst"}
	d := rs.data(preds)
	for _, c := range []Comparison{Cumulative, Adjacent} {
		m := Model{Comparison: c, Link: Logit, Effects: allEffects(len(preds), Parallel)}
		r, err := Fit(d, m, Options{})
		if err != nil || !r.OK() {
			t.Fatal(err)
		}
		lz, err := LipsitzTest(d, r, 10, Options{})
		if err != nil {
			t.Fatal(err)
		}
		// The definition, step by step.
		pred, err := r.Predict(d.X, nil)
		if err != nil {
			t.Fatal(err)
		}
		n := d.N()
		idx := make([]int, n)
		for i := range idx {
			idx[i] = i
		}
		sort.Slice(idx, func(a, b int) bool { return pred.Expected[idx[a]] < pred.Expected[idx[b]] })
		const G = 10
		K := len(preds)
		ad := &Data{Y: d.Y, J: d.J, Predictors: append(append([]string(nil), preds...), "g2", "g3", "g4", "g5", "g6", "g7", "g8", "g9", "g10"), X: make([]float64, n*(K+G-1))}
		grp := make([]int, n)
		obs := make([][]float64, G)
		for g := range obs {
			obs[g] = make([]float64, d.J)
		}
		for a := 0; a < n; {
			b := a
			for b < n && pred.Expected[idx[b]] == pred.Expected[idx[a]] {
				b++
			}
			for c := a; c < b; c++ {
				grp[idx[c]] = int(math.Floor(G * (float64(a) + float64(b-a)/2) / float64(n)))
			}
			a = b
		}
		for i := 0; i < n; i++ {
			g := grp[i]
			copy(ad.X[i*(K+G-1):], d.X[i*K:(i+1)*K])
			if g > 0 {
				ad.X[i*(K+G-1)+K+g-1] = 1
			}
			obs[g][d.Y[i]]++
		}
		full, err := Fit(ad, Model{Comparison: c, Link: Logit, Effects: allEffects(K+G-1, Parallel)}, Options{})
		if err != nil || !full.OK() {
			t.Fatal(err)
		}
		want := 2 * (full.LogLik - r.LogLik)
		if !lz.Test.OK || lz.Test.DF != G-1 || math.Abs(lz.Test.Chi2-want) > 1e-5 {
			t.Errorf("%s: Lipsitz %+v, definition chi2(%d) = %.6f", r.Name, lz.Test, G-1, want)
		}
		if wantP := (distuv.ChiSquared{K: G - 1}).Survival(want); math.Abs(lz.Test.P-wantP) > 1e-6 {
			t.Errorf("p %.8f, want %.8f", lz.Test.P, wantP)
		}
		for g := 0; g < G; g++ {
			sumE := 0.0
			for j := 0; j < d.J; j++ {
				if lz.Table.Observed[g][j] != obs[g][j] {
					t.Errorf("group %d category %d: observed %g, want %g", g+1, j+1, lz.Table.Observed[g][j], obs[g][j])
				}
				sumE += lz.Table.Expected[g][j]
			}
			if math.Abs(sumE-lz.Table.Weight[g]) > 1e-9 {
				t.Errorf("group %d: expected counts sum to %g, group has %g", g+1, sumE, lz.Table.Weight[g])
			}
		}
		t.Logf("%s: Lipsitz chi2(%d) = %.4f, p = %.4f", r.Name, lz.Test.DF, lz.Test.Chi2, lz.Test.P)
	}
}

// TestScoreGroupsWeightsAndTies: with frequency weights and many rows
// sharing a score (housing, Madsen 1976: 72 cells of 1681 people), groups
// keep ties together and their weights add up to the observations; the
// weighted table equals the table of the data expanded to one row per
// person.
func TestScoreGroupsWeightsAndTies(t *testing.T) {
	t.Logf("data: %s", refSources["housing"])
	rs := loadRef(t, "housing")
	preds := []string{"inflmed", "inflhigh", "apartment", "atrium", "terrace", "conthigh"}
	K := len(preds)
	d := rs.data(preds)
	m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(K, Parallel)}
	r, _ := Fit(d, m, Options{})
	lz, err := LipsitzTest(d, r, 0, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// 24 distinct predictor patterns, 1681 people: ten groups.
	if lz.Table.Groups != 10 || lz.Test.DF != 9 || !lz.Test.OK {
		t.Errorf("groups %d, test %+v; want 10 groups, 9 df", lz.Table.Groups, lz.Test)
	}
	t.Logf("Lipsitz chi2(%d) = %.4f, p = %.4f", lz.Test.DF, lz.Test.Chi2, lz.Test.P)
	tot := 0.0
	for _, w := range lz.Table.Weight {
		tot += w
	}
	if tot != r.NObs {
		t.Errorf("group weights sum to %g, want %g", tot, r.NObs)
	}
	// Expanded data: same table.
	ex := &Data{J: d.J, Predictors: preds}
	for i, y := range d.Y {
		for c := 0; c < int(d.Weights[i]); c++ {
			ex.Y = append(ex.Y, y)
			ex.X = append(ex.X, d.X[i*K:(i+1)*K]...)
		}
	}
	r2, _ := Fit(ex, m, Options{})
	lz2, err := LipsitzTest(ex, r2, 0, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(lz.Test.Chi2-lz2.Test.Chi2) > 1e-6 {
		t.Errorf("weighted chi2 %.8f, expanded %.8f", lz.Test.Chi2, lz2.Test.Chi2)
	}
	for g := range lz.Table.Observed {
		for j := range lz.Table.Observed[g] {
			if math.Abs(lz.Table.Observed[g][j]-lz2.Table.Observed[g][j]) > 1e-9 || math.Abs(lz.Table.Expected[g][j]-lz2.Table.Expected[g][j]) > 1e-6 {
				t.Errorf("group %d category %d differs between weighted and expanded data", g+1, j+1)
			}
		}
	}
}

// TestLipsitzNotDefinedOnFewPatterns: when the score groups coincide with
// predictor values (wine, Randall 1989: four patterns of temp and contact,
// two groups), the test is reported as not defined, with the reason.
func TestLipsitzNotDefinedOnFewPatterns(t *testing.T) {
	t.Logf("data: %s", refSources["wine"])
	rs := loadRef(t, "wine")
	d := rs.data([]string{"temp", "contact"})
	r, err := Fit(d, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(2, Parallel)}, Options{})
	if err != nil || !r.OK() {
		t.Fatal(err)
	}
	lz, err := LipsitzTest(d, r, 0, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if lz.Test.OK || !strings.Contains(lz.Test.Reason, "not defined for these data") || lz.Table == nil || lz.Table.Groups != 2 {
		t.Errorf("got %+v with %d groups", lz.Test, lz.Table.Groups)
	}
	// The indicator is named as the user knows it, not by its column's
	// internal name, and no removal of a predictor is advised.
	want := `so the indicator of group 2 of predicted score is a combination of "temp" and the constant`
	if !strings.HasSuffix(lz.Test.Reason, want) || strings.Contains(lz.Test.Reason, indicatorPrefix) || strings.Contains(lz.Test.Reason, "remove") {
		t.Errorf("reason %q, want it to end %q", lz.Test.Reason, want)
	}
}

// TestLipsitzRefitSeparated: seeded data of our own in which the lowest
// category occurs only where x < -1 (every such row is in category 1), and
// x's effect dominates z's, so that the lowest groups of predicted score
// hold every row of category 1:
// the parallel model has a finite maximum (its slope is shared by every
// boundary), the refit with group indicators none (the indicators of the
// groups without category 1 and tau[1] diverge). The test is not made, and
// its reason says that the refit, not the model, has no finite maximum.
func TestLipsitzRefitSeparated(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261203, 8))
	d := &Data{J: 4, Predictors: []string{"x", "z"}}
	for i := 0; i < 300; i++ {
		x, z := rng.NormFloat64(), rng.NormFloat64()
		u := rng.Float64()
		lat := 1.5*x + 0.2*z + math.Log(u/(1-u))
		y := 1
		switch {
		case x < -1:
			y = 0
		case lat > 0.8:
			y = 3
		case lat > -0.5:
			y = 2
		}
		d.Y = append(d.Y, y)
		d.X = append(d.X, x, z)
	}
	r, err := Fit(d, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(2, Parallel)}, Options{})
	if err != nil || !r.OK() {
		t.Fatal(err, r.Message)
	}
	lz, err := LipsitzTest(d, r, 0, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := "the model with indicators of the 10 groups of predicted score has no finite maximum (separation: the log-likelihood keeps rising as tau[1], tau[2], tau[3] and the indicators of groups 2 to 10 of predicted score diverge"
	if lz.Test.OK || !strings.HasPrefix(lz.Test.Reason, want) || strings.Contains(lz.Test.Reason, r.Name) || strings.Contains(lz.Test.Reason, indicatorPrefix) {
		t.Errorf("test %+v", lz.Test)
	}
}

// TestRefitWordsNameIndicatorsAsGroups: the messages of a failed Lipsitz
// refit (the refit's own, which list its parameters and columns by name)
// say the indicators as groups of predicted score: one, a run, a list
// with gaps, quoted or not, beside the model's own names, and a constant
// indicator (an empty group) too.
func TestRefitWordsNameIndicatorsAsGroups(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"nearly flat (tau[2], score_group_3); predictors involved: x, score_group_3",
			"nearly flat (tau[2], the indicator of group 3 of predicted score); predictors involved: x, the indicator of group 3 of predicted score"},
		{"along that direction: score_group_2, score_group_3, score_group_4)",
			"along that direction: the indicators of groups 2 to 4 of predicted score)"},
		{`predictor "score_group_2", "score_group_5" and x`,
			`predictor the indicators of groups 2 and 5 of predicted score and x`},
		{"score_group_2, score_group_3, score_group_7",
			"the indicators of groups 2, 3 and 7 of predicted score"},
		{"score_groups and score_group_x stay", "score_groups and score_group_x stay"},
	} {
		if got := refitWords(c.in); got != c.want {
			t.Errorf("refitWords(%q) = %q, want %q", c.in, got, c.want)
		}
	}
	names := []string{"x", "z", "score_group_2", "score_group_3"}
	err := &InputError{Msg: `predictor "score_group_3" is constant`, Collinear: &Collinearity{Predictor: 3, Constant: true}}
	want := "not defined for these data: the indicator of group 3 of predicted score takes one value, 0, in every row, so its effect cannot be estimated beside the thresholds"
	if got := refitFailed(names, 3, err); got.OK || got.Reason != want {
		t.Errorf("constant indicator: %q, want %q", got.Reason, want)
	}
	err = &InputError{Msg: "collinear", Collinear: &Collinearity{Predictor: 3, With: []int{0, 2}}}
	want = `not defined for these data: the score groups coincide with values of the predictors (too few distinct predictor patterns for 3 groups), so the indicator of group 3 of predicted score is a combination of "x", the indicator of group 2 of predicted score and the constant`
	if got := refitFailed(names, 3, err); got.Reason != want {
		t.Errorf("collinear indicator: %q, want %q", got.Reason, want)
	}
}

// TestMcKelveyZavoinaLeavesOffsetOut: with an offset, the thresholds-only
// model keeps it, and McKelvey-Zavoina is the variance of the predictors'
// part x'b alone (docs/models.md), checked against its definition with
// gonum's stat.PopVariance on the General Social Survey extract of Long
// (1997), with an invented offset (0.3 times age in decades plus a
// seeded normal draw) that varies across rows and correlates with a
// predictor.
func TestMcKelveyZavoinaLeavesOffsetOut(t *testing.T) {
	t.Logf("data: %s", refSources["gsswarm"])
	rs := loadRef(t, "gsswarm")
	preds := []string{"yr89", "male", "white", "ed", "prst"}
	d := rs.data(preds)
	age := rs.data([]string{"age"}).X
	rng := rand.New(rand.NewPCG(7, 11))
	d.Offset = make([]float64, d.N())
	for i := range d.Offset {
		d.Offset[i] = 0.03*age[i] + 0.5*rng.NormFloat64()
	}
	m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(len(preds), Parallel)}
	r, err := Fit(d, m, Options{})
	if err != nil || !r.OK() {
		t.Fatalf("fit: %v %v", err, r)
	}
	null, err := FitNull(d, m, Options{})
	if err != nil || !null.OK() {
		t.Fatalf("null fit: %v", err)
	}
	o := OverallFit(d, r, null)
	if want := mzDirect(d, r); math.Abs(o.McKelveyZavoina-want) > 1e-10 {
		t.Errorf("McKelvey-Zavoina with an offset %.12g, the variance of x'b alone gives %.12g", o.McKelveyZavoina, want)
	}
}
