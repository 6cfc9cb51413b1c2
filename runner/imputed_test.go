package runner

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
	"ordplan/plan"
	"ordplan/runner/fit"
	"ordplan/runner/impute"

	"github.com/xuri/excelize/v2"
)

// imputedFixture writes an invented survey (seeded): y in three ordered
// categories from a cumulative logit in x1 and x2, x2 missing in about a
// fifth of the rows of orig.csv, complete.csv with the true values, and
// stacked.csv with set 0 (the original) and sets 1..m whose missing x2 are
// the true values (same) or fresh draws (differ).
func imputedFixture(t *testing.T, m int, same bool) string {
	dir := t.TempDir()
	sv := testsurvey.Pooling.Imputed(rand.New(rand.NewPCG(7, 11)), testsurvey.ImputedOptions{Rows: 300, Sets: m, Missing: 0.2, Digits: 6, Same: same, Original: true})
	os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(sv.Orig), 0o644)
	os.WriteFile(filepath.Join(dir, "complete.csv"), []byte(sv.Complete), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), []byte(sv.Stacked), 0o644)
	return dir
}

func imputedPlan(t *testing.T, dir, data string) (*plan.Plan, error) {
	src := `version: 1
title: imputed
data: ` + data + `
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr, wald, score, brant, wolfe_gould]}
rules:
  - reject_if_test_rejects: {test: lr}
  - choose: {by: bic}
inference:
  hypotheses: ["x2 = 0"]
  marginal_effects: [average, means]
  predict: new.csv
`
	os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644)
	os.WriteFile(filepath.Join(dir, "new.csv"), []byte("x1,x2\n0,0\n1.5,-0.5\n-1,2\n"), 0o644)
	return plan.Load(filepath.Join(dir, "p.yaml"))
}

// identicalSetsP is the p-value a test pooled over identical imputed sets
// (pooled) has when the same test on one set (single) has single.P: the
// same, except for D1, whose denominator degrees of freedom with no
// between-set variance are those of the complete data, (nu+1)/(nu+3) nu
// (as mice's pool() gives them for one restriction and mitml's
// testModels with df.com for more): the single set's statistic over its
// restrictions on F(DF, DF2), DF2 below the rows.
func identicalSetsP(pooled, single fit.Test) float64 {
	if pooled.Pooled != "D1" {
		return single.P
	}
	if !(pooled.DF2 > 0 && pooled.DF2 < 300) {
		return math.NaN()
	}
	return fit.FSurvival(single.Chi2/float64(pooled.DF), pooled.DF, pooled.DF2)
}

// TestImputedIdenticalSets: with identical imputed sets the pooled fits
// are the single-set fits, the between variance is zero, and the pooled
// likelihood-ratio test (D3) is the single-set test.
func TestImputedIdenticalSets(t *testing.T) {
	dir := imputedFixture(t, 3, true)
	pi, err := imputedPlan(t, dir, "{file: orig.csv, imputed: {file: stacked.csv, column: imp}}")
	if err != nil {
		t.Fatal(err)
	}
	ri := runPlan(t, pi, 0)
	ps, err := imputedPlan(t, dir, "{file: complete.csv}")
	if err != nil {
		t.Fatal(err)
	}
	rs := runPlan(t, ps, 0)
	oi, os1 := ri.Outcomes[0], rs.Outcomes[0]
	if oi.Imputed == nil || oi.Imputed.M != 3 {
		t.Fatalf("imputed run %+v", oi.Imputed)
	}
	for _, f := range oi.Fits {
		g := os1.Find(f.ID)
		if !f.OK() || !g.OK() || f.Pooled == nil {
			t.Fatalf("%s: not pooled or not usable", f.ID)
		}
		for j := range f.Result.Estimates {
			if d := math.Abs(f.Result.Estimates[j] - g.Result.Estimates[j]); d > 1e-9 {
				t.Errorf("%s estimate %d: %g vs %g", f.ID, j, f.Result.Estimates[j], g.Result.Estimates[j])
			}
			if d := math.Abs(f.Result.StdErrors[j]/g.Result.StdErrors[j] - 1); d > 1e-9 {
				t.Errorf("%s se %d: %g vs %g", f.ID, j, f.Result.StdErrors[j], g.Result.StdErrors[j])
			}
		}
		for _, b := range f.Pooled.Between {
			if math.Abs(b) > 1e-28 { // zero up to the rounding of the mean
				t.Fatalf("%s: between variance %v", f.ID, f.Pooled.Between)
			}
		}
	}
	ti, ts := oi.Tests[0].Nested[0].Test, os1.Tests[0].Nested[0].Test
	if ti.Pooled != "D3" || math.Abs(ti.Chi2-ts.Chi2) > 1e-6 || math.Abs(ti.P-ts.P) > 1e-9 {
		t.Errorf("D3 %+v vs single-set LR %+v", ti, ts)
	}
	// Every parallel-lines test pooled over identical sets is the
	// single-set test: Brant by D1, score and Wolfe-Gould by D2 (r = 0).
	methods := map[string]string{"lr": "D3", "wald": "D1", "score": "D2", "brant": "D1", "wolfe_gould": "D2", "lr_vs_null": "D3"}
	gi, gs := oi.Tests[0].Global, os1.Tests[0].Global
	if len(gi) != 5 || len(gs) != 5 {
		t.Fatalf("global tests: %d pooled, %d single", len(gi), len(gs))
	}
	same := func(what string, a, b fit.Test) {
		t.Helper()
		if !a.OK || !b.OK || a.Pooled != methods[b.Name] || math.Abs(a.Chi2-b.Chi2) > 1e-6*math.Max(1, b.Chi2) || math.Abs(a.P-identicalSetsP(a, b)) > 1e-9 || a.DF != b.DF {
			t.Errorf("%s: pooled %+v, single %+v", what, a, b)
		}
	}
	for i := range gs {
		same(gs[i].Name, gi[i], gs[i])
	}
	for v, vt := range os1.Tests[0].PerVariable {
		for i, tt := range vt.Tests {
			same(vt.Predictor+" "+tt.Name, oi.Tests[0].PerVariable[v].Tests[i], tt)
		}
	}
	// Overall fit over identical sets: the single-set LL0, pseudo-R2 and
	// likelihood-ratio test (D3 with r = 0).
	if len(oi.Overall) != len(os1.Overall) || len(oi.Overall) == 0 {
		t.Fatalf("overall fit: %d pooled, %d single", len(oi.Overall), len(os1.Overall))
	}
	for i, o := range oi.Overall {
		w := os1.Overall[i]
		for _, c := range [][2]float64{{o.NullLogLik, w.NullLogLik}, {o.McFadden, w.McFadden}, {o.CoxSnell, w.CoxSnell}, {o.Nagelkerke, w.Nagelkerke}} {
			if math.Abs(c[0]-c[1]) > 1e-9 {
				t.Errorf("overall fit of %s: pooled %+v, single %+v", o.Model, o.Overall, w.Overall)
				break
			}
		}
		if math.IsNaN(w.McKelveyZavoina) != math.IsNaN(o.McKelveyZavoina) || !math.IsNaN(w.McKelveyZavoina) && math.Abs(o.McKelveyZavoina-w.McKelveyZavoina) > 1e-9 {
			t.Errorf("McKelvey-Zavoina of %s: %g vs %g", o.Model, o.McKelveyZavoina, w.McKelveyZavoina)
		}
		same("overall "+o.Model, o.LR, w.LR)
	}
	// The plan's test rule uses the pooled test (D3 here), which is the
	// single-set test.
	for i, v := range oi.Rules[0].Verdicts {
		w := os1.Rules[0].Verdicts[i]
		if v.Model != w.Model || v.Kept != w.Kept || v.Model == "cumulative/parallel/logit" && !strings.Contains(v.Reason, "(pooled, D3)") {
			t.Errorf("rule verdict on %s: %+v, single-set %+v", v.Model, v, w)
		}
	}
	// D1 of identical sets is the single-set Wald statistic, on F with the
	// complete-data denominator degrees of freedom (identicalSetsP).
	for i, h := range oi.Hypotheses {
		g := os1.Hypotheses[i]
		if h.Test.Pooled != "D1" || math.Abs(h.Test.Chi2-g.Test.Chi2) > 1e-6*g.Test.Chi2 || math.Abs(h.Test.P-identicalSetsP(h.Test, g.Test)) > 1e-9 {
			t.Errorf("hypothesis in %s: D1 %+v vs single-set Wald %+v", h.Model, h.Test, g.Test)
		}
	}
	// Marginal effects and predictions pooled over identical sets are the
	// single-set ones with zero between variance; their degrees of freedom
	// are the Barnard-Rubin ones with lambda = 0, (n+1)/(n+3) n for the
	// complete-data n = observations - parameters, and intervals use t.
	chosen := oi.Chosen.Result
	dfc := chosen.NObs - float64(chosen.NParams)
	dfObs := (dfc + 1) / (dfc + 3) * dfc
	tq := fit.TQuantile(0.975, dfObs)
	if len(oi.Marginal) != 2 || len(oi.Marginal) != len(os1.Marginal) {
		t.Fatalf("marginal effects: %d pooled, %d single", len(oi.Marginal), len(os1.Marginal))
	}
	for s, set := range oi.Marginal {
		g := os1.Marginal[s]
		if set.Error != "" || len(set.Effects) != len(g.Effects) || len(set.Pooling) != len(set.Effects) || len(set.Effects) == 0 {
			t.Fatalf("%s: %+v", set.Kind, set)
		}
		for e, me := range set.Effects {
			w := g.Effects[e]
			for _, c := range [][2]float64{{me.Effect, w.Effect}, {me.SE, w.SE}, {me.Low, w.Effect - tq*w.SE}, {me.High, w.Effect + tq*w.SE}, {me.P, fit.TSurvival2(w.Z, dfObs)}} {
				if math.Abs(c[0]-c[1]) > 1e-9 {
					t.Errorf("%s %s %s: pooled %+v, single %+v", set.Kind, me.Predictor, me.Category, me, w)
					break
				}
			}
			if pp := set.Pooling[e]; pp.Between > 1e-28 || pp.DF == nil || math.Abs(*pp.DF-dfObs) > 1e-9 {
				t.Errorf("%s %s: between %g, df %v; want 0 and %g", set.Kind, me.Predictor, pp.Between, pp.DF, dfObs)
			}
		}
	}
	pn, sn := oi.NewRows, os1.NewRows
	if pn == nil || pn.Pred == nil || pn.DF == nil || sn == nil || sn.Pred == nil {
		t.Fatalf("predictions: pooled %+v, single %+v", pn, sn)
	}
	for a := range sn.Pred.Prob {
		if math.Abs(pn.Pred.Prob[a]-sn.Pred.Prob[a]) > 1e-9 || math.Abs(pn.Pred.SE[a]-sn.Pred.SE[a]) > 1e-9 || math.Abs(pn.DF.Prob[a]-dfObs) > 1e-9 {
			t.Errorf("prediction %d: pooled %g (se %g, df %g), single %g (se %g)", a, pn.Pred.Prob[a], pn.Pred.SE[a], pn.DF.Prob[a], sn.Pred.Prob[a], sn.Pred.SE[a])
		}
	}
	if !slices.Equal(pn.Pred.MostLikely, sn.Pred.MostLikely) {
		t.Errorf("most likely %v vs %v", pn.Pred.MostLikely, sn.Pred.MostLikely)
	}
	if oi.Data.Missing == nil || oi.Data.Missing.ByColumn[2] == 0 {
		t.Errorf("the missing values of the original file are not described: %+v", oi.Data.Missing)
	}
}

// TestImputedDifferentSets: sets that differ give a positive fraction of
// missing information for x2 and finite degrees of freedom.
func TestImputedDifferentSets(t *testing.T) {
	dir := imputedFixture(t, 5, false)
	p, err := imputedPlan(t, dir, "{file: orig.csv, imputed: {file: stacked.csv, column: imp}}")
	if err != nil {
		t.Fatal(err)
	}
	or := runPlan(t, p, 0).Outcomes[0]
	f := or.Find("cumulative/parallel/logit")
	j := len(f.Result.Estimates) - 1 // x2
	if pl := f.Pooled; pl == nil || !(pl.FMI[j] > 0 && pl.FMI[j] < 1) || math.IsInf(pl.DF[j], 0) {
		t.Fatalf("pooled %+v", f.Pooled)
	}
	if or.Chosen == nil {
		t.Fatal("nothing chosen")
	}
	rec := imputationRecord(or, false)
	if rec == nil || rec.Sets != 5 || len(rec.Pooling) != 2 || rec.Pooling[0].Parameters[j].FMI != f.Pooled.FMI[j] {
		t.Errorf("decisions.json imputation record %+v", rec)
	}
	// TIC on imputed data averages each set's TIC, computed with that
	// set's own fit and rows (as AIC and BIC are averaged), so it does not
	// depend on which set comes first.
	env := newRuleEnv(ResolvePlan(p), or)
	v, pen, err := env.tic(f)
	if err != nil {
		t.Fatal(err)
	}
	i := slices.Index(or.Fits, f)
	var wantV, wantPen float64
	for k, d := range or.Imputed.Sets {
		vk, pk, err := fit.TIC(d, or.Imputed.Fits[k][i].Result, false)
		if err != nil {
			t.Fatal(err)
		}
		wantV += vk / 5
		wantPen += pk / 5
	}
	if math.Abs(v-wantV) > 1e-9*math.Abs(wantV) || math.Abs(pen-wantPen) > 1e-9*wantPen || math.Abs(v-2*pen+2*f.Result.LogLik) > 1e-8*math.Abs(v) {
		t.Errorf("pooled TIC %g (penalty %g), want the mean over the sets %g (penalty %g)", v, pen, wantV, wantPen)
	}
	// Pooled marginal effects by hand from the per-set effects.
	fits, err := or.chosenPerSet()
	if err != nil {
		t.Fatal(err)
	}
	avg := or.Marginal[0]
	q, u := make([]float64, len(fits)), make([]float64, len(fits))
	for e, me := range avg.Effects {
		var mean, w, b float64
		for k, r := range fits {
			s := marginalSet(ResolvePlan(p), or.onSet(k), r, "average").Effects[e]
			q[k], u[k] = s.Effect, s.SE*s.SE
			mean += s.Effect / 5
			w += s.SE * s.SE / 5
		}
		for _, v := range q {
			b += (v - mean) * (v - mean) / 4
		}
		if math.Abs(me.Effect-mean) > 1e-12 || math.Abs(me.SE-math.Sqrt(w+1.2*b)) > 1e-12 {
			t.Errorf("average effect %s %s: %g (se %g), by hand %g (se %g)", me.Predictor, me.Category, me.Effect, me.SE, mean, math.Sqrt(w+1.2*b))
		}
		if pp := avg.Pooling[e]; pp.DF == nil || !(pp.FMI > 0) {
			t.Errorf("average effect %s %s: df %v fmi %g", me.Predictor, me.Category, pp.DF, pp.FMI)
		}
	}
	// One point over the sets: the effects at the means, on every set, and
	// the prediction grid hold the numeric columns at their means over the
	// rows of all imputed sets (by hand here), not over set 1's rows.
	S := len(or.Design.Sources)
	byHand := make([]float64, S)
	rows := 0
	for _, ds := range or.Imputed.Data {
		for i := 0; i < ds.N; i++ {
			for s := range byHand {
				byHand[s] += ds.X[i*S+s]
			}
		}
		rows += ds.N
	}
	set1 := 0.0
	for i := 0; i < or.Data.N; i++ {
		set1 += or.Data.X[i*S+1] / float64(or.Data.N)
	}
	if math.Abs(set1-byHand[1]/float64(rows)) < 1e-6 {
		t.Fatalf("x2's mean in set 1 %g equals its mean over the sets: the fixture does not tell them apart", set1)
	}
	pf, err := or.NewProfile("x1", nil)
	if err != nil {
		t.Fatal(err)
	}
	for s := range byHand {
		byHand[s] /= float64(rows)
		for k := range fits {
			if p := marginalSet(ResolvePlan(p), or.onSet(k), fits[k], "means").Point; math.Abs(p[s]-byHand[s]) > 1e-12 {
				t.Errorf("set %d: effects at the means at %s = %g, want the mean over the sets %g", k+1, or.Design.Sources[s].Name, p[s], byHand[s])
			}
		}
		if s != 0 && math.Abs(pf.base[s]-byHand[s]) > 1e-12 {
			t.Errorf("prediction grid holds %s at %g, want the mean over the sets %g", or.Design.Sources[s].Name, pf.base[s], byHand[s])
		}
	}
	if h := pf.HeldAt(); !strings.Contains(h, "means over the rows of all 5 imputed sets") {
		t.Errorf("grid: %s", h)
	}
	// The grid over x2, which has imputed values, spans its observed
	// values (the file's, as the flags of extrapolation), not set 1's:
	// a value of set 1 put beyond them (as a normal imputation model may
	// draw) does not stretch it.
	lo, hi, j := math.Inf(1), math.Inf(-1), slices.Index(or.Observed.Predictors, "x2")
	for i := 0; i < or.Observed.N; i++ {
		if v := or.Observed.X[i*or.Observed.K+j]; !math.IsNaN(v) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	kept := or.Data.X[1]
	or.Data.X[1] = hi + 100
	px2, err := or.NewProfile("x2", nil)
	or.Data.X[1] = kept
	if err != nil {
		t.Fatal(err)
	}
	if px2.Min != lo || px2.Max != hi {
		t.Errorf("grid over x2 from %g to %g, want the observed range %g to %g", px2.Min, px2.Max, lo, hi)
	}
	if or.NewRows == nil || or.NewRows.Error != "" || or.NewRows.DF == nil {
		t.Fatalf("predictions %+v", or.NewRows)
	}
	for i := 0; i < or.NewRows.Pred.N; i++ {
		s := 0.0
		for j := 0; j < or.NewRows.Pred.J; j++ {
			s += or.NewRows.Pred.Prob[i*or.NewRows.Pred.J+j]
		}
		if math.Abs(s-1) > 1e-12 {
			t.Errorf("pooled probabilities of row %d sum to %g", i, s)
		}
	}
	if len(or.Hypotheses) == 0 || or.Hypotheses[0].Test.Pooled != "D1" || !or.Hypotheses[0].Test.OK {
		t.Errorf("hypothesis on imputed data: %+v", or.Hypotheses)
	}
	// Overall fit: LL0 and pseudo-R2 are the means of the sets' values,
	// the test against the thresholds-only model is D3.
	ov := or.OverallOf("cumulative/parallel/logit")
	var ll, ll0, r2 float64
	for k, d := range or.Imputed.Sets {
		r := or.perSetOf(f)[k].Result
		null, err := fit.FitNull(d, f.Result.Model, fit.Options{})
		if err != nil {
			t.Fatal(err)
		}
		ll += r.LogLik / 5
		ll0 += null.LogLik / 5
		r2 += fit.OverallFit(d, r, null).McFadden / 5
	}
	if ov == nil || ov.LR.Pooled != "D3" || !ov.LR.OK || math.Abs(ov.NullLogLik-ll0) > 1e-9 || math.Abs(ov.McFadden-r2) > 1e-12 || math.Abs(ov.LR.LLFull-ll) > 1e-9 {
		t.Errorf("overall fit %+v; by hand LL0 %g, McFadden %g, LL %g", ov, ll0, r2, ll)
	}
	for i, want := range []string{"D3", "D1", "D2", "D1", "D2"} {
		if g := or.Tests[0].Global[i]; !g.OK || g.Pooled != want || !(g.DF2 > 0) || !(g.P > 0 && g.P <= 1) {
			t.Errorf("global test %d: %+v, want pooled by %s with finite df2", i, g, want)
		}
	}
	if nt := or.Tests[0].Nested[0].Test; nt.Pooled != "D3" || !(nt.DF2 > 0) || !strings.Contains(TestStatistic(nt), "(pooled, D3)") {
		t.Errorf("nested test %+v: %s", nt, TestStatistic(nt))
	}
}

// TestImputedBadInput: gaps in the imputation numbers, one set, sets of
// different rows or columns are refused with a message naming them.
func TestImputedBadInput(t *testing.T) {
	dir := imputedFixture(t, 3, false)
	b, _ := os.ReadFile(filepath.Join(dir, "stacked.csv"))
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	write := func(name string, keep func(string) (string, bool)) {
		out := []string{lines[0]}
		for _, l := range lines[1:] {
			if s, ok := keep(l); ok {
				out = append(out, s)
			}
		}
		os.WriteFile(filepath.Join(dir, name), []byte(strings.Join(out, "\n")+"\n"), 0o644)
	}
	write("gap.csv", func(l string) (string, bool) {
		if strings.HasPrefix(l, "3,") {
			return "4" + l[1:], true
		}
		return l, true
	})
	write("one.csv", func(l string) (string, bool) { return l, l[0] == '0' || l[0] == '1' })
	short := 0
	write("rows.csv", func(l string) (string, bool) {
		if l[0] == '2' {
			short++
			return l, short > 1
		}
		return l, true
	})
	os.WriteFile(filepath.Join(dir, "a.csv"), []byte("y,x1,x2\n1,0.1,0.2\n2,0.3,0.1\n3,0.5,0.7\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "b.csv"), []byte("y,x1,x2,z\n1,0.1,0.2,1\n2,0.3,0.1,1\n3,0.5,0.7,1\n"), 0o644)
	for _, c := range []struct{ data, want string }{
		{"{file: orig.csv, imputed: {file: gap.csv, column: imp}}", "imputation numbers must run 1, 2, ..., m without gaps; 3 has no rows but 4 has"},
		{"{file: orig.csv, imputed: {file: one.csv, column: imp}}", "holds one imputed set only (imputation number 1); pooling needs at least two imputed sets"},
		{"{file: orig.csv, imputed: {file: rows.csv, column: imp}}", "imputed set 2 has 299 rows but set 1 has 300; imputed sets must hold the same rows"},
		{"{file: orig.csv, imputed: {files: [a.csv, b.csv]}}", "b.csv has the columns y, x1, x2, z but a.csv has y, x1, x2; imputed sets must have the same columns"},
		{"{file: orig.csv, imputed: {file: orig.csv, column: imp}}", `data.imputed.column: column "imp" is not in orig.csv`},
	} {
		p, err := imputedPlan(t, dir, c.data)
		if err == nil {
			_, err = Run(p, Options{})
		}
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got %v\nwant %s", c.data, err, c.want)
		}
		if p != nil {
			if _, err := CheckData(p); err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("check %s: got %v\nwant %s", c.data, err, c.want)
			}
		}
	}
	if _, err := imputedPlan(t, dir, "{file: orig.csv, imputed: {files: [a.csv]}}"); err == nil || !strings.Contains(err.Error(), "lists 1 file; pooling over imputed data needs at least two imputed sets") {
		t.Errorf("one file: %v", err)
	}
}

// TestImputedStackedWorkbook: the imputation numbers of a stacked file are
// read like its data, through the file's format and dialect: the same sets
// as an .xlsx workbook (header in row 2 of a named sheet) and as
// semicolon-separated text with decimal commas give the fits of the CSV
// file, bit for bit; and each, run through an executor (as on a queue,
// the file handed over and read elsewhere), gives the local decisions.
func TestImputedStackedWorkbook(t *testing.T) {
	dir := imputedFixture(t, 3, false)
	raw, err := os.ReadFile(filepath.Join(dir, "stacked.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	book := excelize.NewFile()
	book.NewSheet("sets")
	book.SetCellValue("sets", "A1", "imputed sets, stacked")
	for i, ln := range lines {
		for j, c := range strings.Split(ln, ",") {
			cell, _ := excelize.CoordinatesToCellName(j+1, i+2)
			if v, err := strconv.ParseFloat(c, 64); err == nil && i > 0 {
				book.SetCellValue("sets", cell, v)
			} else if c != "" {
				book.SetCellValue("sets", cell, c)
			}
		}
	}
	if err := book.SaveAs(filepath.Join(dir, "stacked.xlsx")); err != nil {
		t.Fatal(err)
	}
	semi := func(s string) string {
		return strings.ReplaceAll(strings.ReplaceAll(s, ",", ";"), ".", ",")
	}
	for _, f := range []string{"orig", "stacked"} {
		b, _ := os.ReadFile(filepath.Join(dir, f+".csv"))
		os.WriteFile(filepath.Join(dir, f+"-semi.csv"), []byte(semi(string(b))), 0o644)
	}
	estimates := func(data string) []float64 {
		t.Helper()
		p, err := imputedPlan(t, dir, data)
		if err != nil {
			t.Fatal(err)
		}
		if p.Data.Delimiter == "semicolon" { // the new rows are written like the data
			b, _ := os.ReadFile(filepath.Join(dir, "new.csv"))
			os.WriteFile(filepath.Join(dir, "new.csv"), []byte(semi(string(b))), 0o644)
		}
		r := runPlan(t, p, 1)
		f := r.Outcomes[0].Find("cumulative/nonparallel/logit")
		if r.Outcomes[0].Imputed == nil || r.Outcomes[0].Imputed.M != 3 || !f.OK() {
			t.Fatalf("%s: imputed run %+v", data, r.Outcomes[0].Imputed)
		}
		// The same sets read elsewhere (a worker reads the file handed over,
		// with the plan's sheet, header row, delimiter and decimal mark).
		ex := &holdingExecutor{gobExecutor: gobExecutor{p.Data.Path}, dir: t.TempDir(), files: map[string]string{}}
		rq, err := Run(p, Options{Workers: 1, Executor: ex})
		if err != nil {
			t.Fatalf("%s through an executor: %v", data, err)
		}
		a, _ := MarshalStable(BuildDecisions(r))
		b, _ := MarshalStable(BuildDecisions(rq))
		if len(ex.jobs) == 0 || string(a) != string(b) {
			t.Errorf("%s: %d jobs; decisions differ through an executor", data, len(ex.jobs))
		}
		return append(f.Result.Estimates, f.Result.StdErrors...)
	}
	want := estimates("{file: orig.csv, imputed: {file: stacked.csv, column: imp}}")
	for _, data := range []string{
		"{file: orig.csv, sheet: sets, header_row: 2, imputed: {file: stacked.xlsx, column: imp}}",
		"{file: orig-semi.csv, delimiter: semicolon, decimal: comma, imputed: {file: stacked-semi.csv, column: imp}}",
	} {
		if got := estimates(data); !slices.Equal(got, want) {
			t.Errorf("%s: estimates and errors %v, want %v", data, got, want)
		}
	}
}

// TestImputedStepwise: stepwise selection on imputed data reads pooled
// tests; with identical sets every step, test and the selected partial set
// are the single-set selection's, and with sets that differ the first
// step's tests are the D1 (Wald) or D3 (likelihood-ratio) tests computed
// directly from each set's own fits (stepOneDirect).
func TestImputedStepwise(t *testing.T) {
	for _, test := range []string{"wald", "lr"} {
		write := func(dir, data string) *plan.Plan {
			src := `version: 1
title: imputed stepwise
data: ` + data + `
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, partial, nonparallel], partial: {select: {method: stepwise, alpha: 0.5, test: ` + test + `}}}
rules:
  - choose: {by: aic}
`
			p := planIn(t, dir, src)
			return p
		}
		dir := imputedFixture(t, 3, true)
		oi := runPlan(t, write(dir, "{file: orig.csv, imputed: {file: stacked.csv, column: imp}}"), 0).Outcomes[0]
		os1 := runPlan(t, write(dir, "{file: complete.csv}"), 0).Outcomes[0]
		if len(oi.Stepwise) != 1 || len(os1.Stepwise) != 1 {
			t.Fatalf("%s: stepwise records %d imputed, %d single", test, len(oi.Stepwise), len(os1.Stepwise))
		}
		si, ss := oi.Stepwise[0].Result, os1.Stepwise[0].Result
		if !si.OK || !slices.Equal(si.FinalNonparallel, ss.FinalNonparallel) || len(si.Steps) != len(ss.Steps) {
			t.Fatalf("%s: imputed %+v\nsingle %+v", test, si, ss)
		}
		want := map[string]string{"wald": "D1", "lr": "D3"}[test]
		for i, st := range si.Steps {
			w := ss.Steps[i]
			if st.Imposed != w.Imposed || math.Abs(st.LogLik-w.LogLik) > 1e-8 || len(st.Tests) != len(w.Tests) {
				t.Errorf("%s step %d: %+v vs %+v", test, i+1, st, w)
				continue
			}
			for j, tt := range st.Tests {
				if tt.Pooled != want || tt.Name != w.Tests[j].Name || math.Abs(tt.Chi2-w.Tests[j].Chi2) > 1e-6*math.Max(1, w.Tests[j].Chi2) || math.Abs(tt.P-identicalSetsP(tt, w.Tests[j])) > 1e-9 {
					t.Errorf("%s step %d test %s: %+v vs %+v", test, i+1, tt.Name, tt, w.Tests[j])
				}
			}
		}
		if !slices.Equal(oi.FreeSets[0].Predictors, os1.FreeSets[0].Predictors) {
			t.Errorf("%s: partial sets %v vs %v", test, oi.FreeSets[0].Predictors, os1.FreeSets[0].Predictors)
		}

		// Sets that differ: the first step's tests are the D1 (Wald) or D3
		// (likelihood-ratio) tests computed here from each set's own fits.
		dir = imputedFixture(t, 4, false)
		od := runPlan(t, write(dir, "{file: orig.csv, imputed: {file: stacked.csv, column: imp}}"), 0).Outcomes[0]
		sd := od.Stepwise[0].Result
		if !sd.OK || len(sd.Steps) == 0 {
			t.Fatalf("%s, differing sets: %+v", test, sd)
		}
		direct := stepOneDirect(t, filepath.Join(dir, "stacked.csv"), 4, test)
		if len(sd.Steps[0].Tests) != len(direct) {
			t.Fatalf("%s, differing sets: %d tests in the first step, want %d", test, len(sd.Steps[0].Tests), len(direct))
		}
		for j, tt := range sd.Steps[0].Tests {
			w := direct[j]
			if !tt.OK || tt.Pooled != want || w.Method != want || tt.DF != w.DF1 ||
				!near(tt.Chi2, w.F*float64(w.DF1), 1e-6) || !near(tt.DF2, w.DF2, 1e-6) || !near(tt.P, w.P, 1e-6) {
				t.Errorf("%s, differing sets, first step, %s: %+v\nwant %+v", test, tt.Name, tt, w)
			}
		}
	}
}

// near reports whether a and b agree within tol relative to the larger.
func near(a, b, tol float64) bool {
	return math.Abs(a-b) <= tol*math.Max(math.Abs(a), math.Abs(b))
}

// stepOneDirect computes the first step of stepwise selection on the m
// imputed sets of the stacked file (columns imp, y, x1, x2; set 0 the
// original) from each set's own fits, without the runner: for x1 and x2 in
// turn, the D1 test (Wald) of its equal slopes in the nonparallel model,
// from Rubin's rules over the sets' estimates and covariances, or the D3
// test (lr) of the model with its slopes parallel against the nonparallel
// model, from each set's deviance difference at its own estimates and at
// the means of the sets' estimates. It checks that the sets' estimates
// differ.
func stepOneDirect(t *testing.T, stacked string, m int, test string) []impute.FTest {
	t.Helper()
	raw, err := os.ReadFile(stacked)
	if err != nil {
		t.Fatal(err)
	}
	sets := make([]*fit.Data, m)
	for k := range sets {
		sets[k] = &fit.Data{J: 3, Predictors: []string{"x1", "x2"}}
	}
	for _, line := range strings.Split(strings.TrimSpace(string(raw)), "\n")[1:] {
		f := strings.Split(line, ",")
		k, _ := strconv.Atoi(f[0])
		if k == 0 {
			continue
		}
		y, _ := strconv.Atoi(f[1])
		x1, _ := strconv.ParseFloat(f[2], 64)
		x2, _ := strconv.ParseFloat(f[3], 64)
		d := sets[k-1]
		d.Y, d.X = append(d.Y, y-1), append(d.X, x1, x2)
	}
	fitAll := func(e1, e2 fit.Effect) []*fit.Result {
		out := make([]*fit.Result, m)
		for k, d := range sets {
			r, err := fit.Fit(d, fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{e1, e2}}, fit.Options{})
			if err != nil || !r.OK() {
				t.Fatalf("set %d: %v %v", k+1, err, r)
			}
			out[k] = r
		}
		return out
	}
	mean := func(rs []*fit.Result) []float64 {
		out := make([]float64, len(rs[0].Estimates))
		for _, r := range rs {
			for i, v := range r.Estimates {
				out[i] += v / float64(len(rs))
			}
		}
		return out
	}
	full := fitAll(fit.Nonparallel, fit.Nonparallel)
	if full[0].Estimates[3] == full[1].Estimates[3] {
		t.Fatal("the imputed sets give the same estimates")
	}
	var out []impute.FTest
	for c, name := range []string{"x1", "x2"} {
		var ft impute.FTest
		switch test {
		case "wald":
			per := make([]impute.Set, m)
			for k, r := range full {
				per[k] = impute.Set{Est: r.Estimates, Cov: r.Cov}
			}
			pl, err := impute.Pool(per, completeDF(full[0].NObs, full[0].NParams, nil))
			if err != nil {
				t.Fatal(err)
			}
			first := slices.Index(full[0].ParamNames, name+"[1]")
			C := make([]float64, len(full[0].Estimates))
			C[first], C[first+1] = 1, -1
			if ft, err = impute.D1(pl, C, nil); err != nil {
				t.Fatal(err)
			}
		case "lr":
			e := []fit.Effect{fit.Nonparallel, fit.Nonparallel}
			e[c] = fit.Parallel
			restricted := fitAll(e[0], e[1])
			thF, thR := mean(full), mean(restricted)
			own, at := make([]float64, m), make([]float64, m)
			for k, d := range sets {
				own[k] = 2 * (full[k].LogLik - restricted[k].LogLik)
				sf, err1 := fit.PartitionSums(d, full[k].Model, thF, 0)
				sr, err2 := fit.PartitionSums(d, restricted[k].Model, thR, 0)
				if err1 != nil || err2 != nil {
					t.Fatal(err1, err2)
				}
				at[k] = 2 * (sf.LogLik - sr.LogLik)
			}
			var err error
			if ft, err = impute.D3(own, at, full[0].NParams-restricted[0].NParams); err != nil {
				t.Fatal(err)
			}
		}
		out = append(out, ft)
	}
	return out
}

// TestImputedSamplingWeightsScale: sampling weights count no units, so
// scaling them all by one constant changes nothing the run reports; in
// particular the complete-data degrees of freedom of the Barnard-Rubin
// adjustment count the rows, not the sum of the weights (with weights of
// 0.05 that sum is 15 for 300 rows: 11 complete-data degrees of freedom
// instead of 296).
func TestImputedSamplingWeightsScale(t *testing.T) {
	dir := imputedFixture(t, 5, false)
	raw, err := os.ReadFile(filepath.Join(dir, "stacked.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(raw), "\n"), "\n")
	run := func(w string) *OutcomeResult {
		var b strings.Builder
		for i, l := range lines {
			if i == 0 {
				b.WriteString(l + ",w\n")
			} else {
				b.WriteString(l + "," + w + "\n")
			}
		}
		name := "stacked-" + w + ".csv"
		if err := os.WriteFile(filepath.Join(dir, name), []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		src := `version: 1
title: imputed, sampling weights
data: {file: orig.csv, imputed: {file: ` + name + `, column: imp}, weights: w, weight_kind: sampling}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [wald]}
rules:
  - reject_if_test_rejects: {test: wald}
  - choose: {by: tic}
`
		// orig.csv needs the weight column too.
		orig, err := os.ReadFile(filepath.Join(dir, "orig.csv"))
		if err != nil {
			t.Fatal(err)
		}
		var o strings.Builder
		for i, l := range strings.Split(strings.TrimSuffix(string(orig), "\n"), "\n") {
			if i == 0 {
				o.WriteString(l + ",w\n")
			} else {
				o.WriteString(l + "," + w + "\n")
			}
		}
		if err := os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(o.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
		p, err := plan.Load(filepath.Join(dir, "p.yaml"))
		if err != nil {
			t.Fatal(err)
		}
		// Restore orig.csv for the next run.
		defer os.WriteFile(filepath.Join(dir, "orig.csv"), orig, 0o644)
		return runPlan(t, p, 0).Outcomes[0]
	}
	one, small := run("1"), run("0.05")
	f1, f2 := one.Find("cumulative/parallel/logit"), small.Find("cumulative/parallel/logit")
	if f1 == nil || f2 == nil || f1.Pooled == nil || f2.Pooled == nil {
		t.Fatalf("no pooled fits: %+v %+v", f1, f2)
	}
	for j := range f1.Pooled.DF {
		a, b := f1.Pooled.DF[j], f2.Pooled.DF[j]
		if math.IsInf(a, 0) || math.Abs(a-b) > 1e-6*a {
			t.Errorf("parameter %d: Barnard-Rubin df %g with weights 1, %g with weights 0.05", j, a, b)
		}
	}
}
