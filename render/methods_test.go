package render

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// methodsPlan has every part of a model the methods draft must name: a
// renamed column, a transformed and centred one, a categorical column
// with its coding and reference, an interaction, an offset, frequency
// weights with zeros, missing values, a listed partial set and two
// constraint groups.
const methodsPlan = `version: 1
title: methods draft
seed: 1
data:
  file: d.csv
  missing: drop
  weights: w
  offset: off
outcomes:
  - column: y
    categories: [lo, mid, hi]
categorical:
  g: {levels: [a, b, c], reference: b}
predictors:
  - {name: x1, column: x}
  - v
  - t
  - {name: lz, column: z, log: {shift: 1}, centre: mean}
  - g
  - {interact: [x1, g]}
models:
  approaches: [cumulative]
  effects: [parallel, partial, constrained]
  partial:
    free: [x1, v, t]
    groups:
      - {name: g1, predictors: [x1, v]}
      - {name: g2, predictors: [t]}
tests:
  parallel_lines: []
rules:
  - prefer_simpler: {by: bic, margin: 2}
`

// The methods draft says how every term enters the models, in the words
// of the table of terms (terms described alike listed together), the
// offset, which predictors the partial and constrained models free and in
// which groups, and why the rows not used were dropped, with counts.
func TestMethodsNameTheModel(t *testing.T) {
	dir := t.TempDir()
	r := rand.New(rand.NewPCG(5, 6))
	var b strings.Builder
	b.WriteString("y,x,v,t,z,g,w,off\n")
	for i := range 400 {
		x, v, t, z := r.NormFloat64(), float64(r.IntN(2)), r.NormFloat64(), 10*r.Float64()
		g := []string{"a", "b", "c"}[r.IntN(3)]
		s := 0.8*x + 0.5*v - 0.4*t + 0.3*z + map[string]float64{"a": 0.5, "b": 0, "c": -0.5}[g] + r.NormFloat64()*1.5
		y := "mid"
		switch {
		case s < 0.5:
			y = "lo"
		case s > 2.5:
			y = "hi"
		}
		w := 1 + r.IntN(2)
		switch {
		case i%97 == 0:
			w = 0
		}
		xs := fmt.Sprintf("%.4f", x)
		if i%41 == 0 {
			xs = "NA"
		}
		zs := fmt.Sprintf("%.3f", z)
		if i%53 == 0 {
			zs = ""
		}
		fmt.Fprintf(&b, "%s,%s,%g,%.4f,%s,%s,%d,%.3f\n", y, xs, v, t, zs, g, w, 0.1*r.Float64())
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	files := renderSource(t, dir, methodsPlan, 2)
	md := string(files["report.md"])
	i := strings.Index(md, "## Methods (draft)")
	if i < 0 {
		t.Fatal("report.md has no methods draft")
	}
	methods := md[i:strings.Index(md, "References:")]
	hasAll(t, "the methods draft", methods,
		// Counted by hand: x is missing in rows 0, 41, ..., 369 (10), z in
		// rows 53, ..., 371 (7; row 0 is counted under x, the first used
		// column it misses), w is 0 in rows 97, 194, 291, 388 (4; row 0
		// again under x).
		"Of 400 rows, 379 were used; 21 were dropped before any model was fitted: 17 for missing values (each row counted under the first used column it misses: x 10, z 7) and 4 for a weight of 0 in `w`.",
		"Every candidate model held 6 terms: x1, the numeric column x as recorded; v and t, numeric as recorded; lz, log(z + 1) - ",
		", where log is the natural logarithm and ",
		" is the mean of log(z + 1) over the rows used, weighted by w; g, categorical with levels a, b and c in treatment coding, one 0/1 column per level other than the reference level b; and x1&g, the interaction of x1 and g, the products of their columns.",
		"The linear predictor also held the offset `off`, with its coefficient fixed at 1.",
		"partial effects free to differ across category boundaries for x1, v and t [",
		"partial effects constrained to a common factor across boundaries, one for each group of predictors (g1: x1 and v; g2: t) [",
	)
	// The same words as the table of terms.
	hasAll(t, "the table of terms", md, "| x1&g | the interaction of x1 and g, the products of their columns | x1&g.a, x1&g.c |")
}

// The stepwise sentence names only the kinds of model the grid has.
func TestSelectedWordsNameTheGridsKinds(t *testing.T) {
	or := &runner.OutcomeResult{Stepwise: []runner.StepwiseRecord{
		{Approach: fit.Cumulative, Result: &fit.StepwiseResult{OK: true}},
		{Approach: fit.Stage},
	}}
	for _, c := range []struct {
		effects []fit.Structure
		want    string
	}{
		{[]fit.Structure{fit.ParallelEffects, fit.PartialEffects}, "it left no predictor free in the cumulative models (so none of their partial models was fitted); for the stage models it could not be completed, so none of their partial models was fitted"},
		{[]fit.Structure{fit.ParallelEffects, fit.ConstrainedEffects}, "(so none of their constrained models was fitted)"},
		{[]fit.Structure{fit.PartialEffects, fit.ConstrainedEffects}, "(so none of their partial or constrained models was fitted)"},
	} {
		if got := selectedWords(or, plan.Models{Effects: c.effects}); !strings.Contains(got, c.want) {
			t.Errorf("%v: %q lacks %q", c.effects, got, c.want)
		}
	}
}

// With a subset and rows that miss a column its conditions read, the rows
// that met the conditions and were dropped are counted by reason apart
// from the rows that could not be judged: each pattern missing no
// condition's column under its first missing column, and zero weights.
func TestMetDropReasonsCountApart(t *testing.T) {
	p := &plan.Plan{}
	p.Data.Weights = "w"
	p.Subset = []data.Condition{{Column: "x"}}
	ds := &data.Dataset{
		Missing: &data.MissingTable{Columns: []string{"y", "x", "inc", "z", "w"}, Patterns: []data.MissingPattern{
			{Missing: []bool{false, true, false, false, false}, Rows: 15},
			{Missing: []bool{false, false, true, false, false}, Rows: 9},
			{Missing: []bool{false, true, true, false, false}, Rows: 2},
			{Missing: []bool{false, false, true, true, false}, Rows: 1},
			{Missing: []bool{false, false, false, true, false}, Rows: 4},
		}},
		Dropped: []data.DropCount{{Column: "x", Rows: 17}, {Column: "inc", Rows: 10}, {Column: "z", Rows: 4}, {Column: "w = 0", Rows: 18}, {Column: "outside the subset x", Rows: 26, Subset: true}},
	}
	got, ok := metDropReasons(p, ds, 32, false)
	if want := ": 14 for missing values (each row counted under the first used column it misses: inc 10, z 4) and 18 for a weight of 0 in `w`"; !ok || got != want {
		t.Errorf("got %q (%v), want %q", got, ok, want)
	}
	if _, ok := metDropReasons(p, ds, 33, false); ok {
		t.Errorf("counts that do not add up to the rows dropped are given")
	}
	if _, ok := metDropReasons(p, ds, 32, true); ok {
		t.Errorf("counts given on imputed data")
	}
}

// The Methods draft names only the goodness-of-fit checks that were made:
// a Lipsitz test that could not be computed is not said to have checked
// the fit (the table of counts still was), a Pulkstenis-Robinson test only
// when computed, and the D2 pooling only of tests it pooled.
func TestGoodnessOfFitMethodsOnlyChecksMade(t *testing.T) {
	table := &fit.ScoreGroups{Groups: 10}
	notMade := fit.Test{Name: "lipsitz", Reason: "in imputed set 2: the refit did not converge"}
	made := fit.Test{Name: "pulkstenis_robinson_pearson", OK: true, Chi2: 5, DF: 4, P: 0.3, Pooled: "D2"}
	or := &runner.OutcomeResult{
		Lipsitz:      &fit.Lipsitz{Test: notMade, Table: table},
		PatternSplit: &runner.PatternSplitRecord{Predictors: []string{"arm"}, PatternSplit: &fit.PatternSplit{Pearson: made, Deviance: fit.Test{Name: "pulkstenis_robinson_deviance", Reason: "a cell has no expected count"}}},
		GOFPooling:   &runner.GOFPooling{Method: "D2"},
	}
	got := strings.Join(goodnessOfFitMethods(or, &citer{}), " ")
	want := "The fit of the chosen model was checked by comparing observed and expected counts in groups of predicted score (the Lipsitz test could not be computed; the report gives the reason). " +
		"Its fit by covariate pattern of the categorical predictors (arm) was checked with the Pulkstenis-Robinson Pearson test [1]. " +
		"On the imputed data this goodness-of-fit test was computed on each imputed set with that set's fit of the chosen model, and the chi-square statistics were combined by the D2 rule [2], an approximation that is less powerful than the pooled tests of estimates or likelihoods."
	if got != want {
		t.Errorf("methods:\n%s\nwant\n%s", got, want)
	}
	// No test made: no sentence on D2; no table: no sentence at all.
	or.PatternSplit = nil
	if got := strings.Join(goodnessOfFitMethods(or, &citer{}), " "); strings.Contains(got, "D2") || strings.Contains(got, "Lipsitz test [") {
		t.Errorf("no test made: %s", got)
	}
	or.Lipsitz.Table = nil
	if got := goodnessOfFitMethods(or, &citer{}); got != nil {
		t.Errorf("nothing made: %q", got)
	}
}

// TestMethodsCiteCovarianceSources: the Methods draft cites White (1980),
// the heteroskedasticity-consistent covariance, for the sandwich
// estimator of independent rows only; the cluster-robust sandwich cites
// Liang and Zeger (1986), whose estimating-equation sandwich sums the
// scores within clusters, beside the guide to cluster-robust inference for
// its references on G-1 degrees of freedom; the delete-one-cluster
// jackknife cites the guide alone; observed information cites neither.
// Data: termData (seeded), clusters the 7 values of w. Citation numbers
// are read as [n].
func TestMethodsCiteCovarianceSources(t *testing.T) {
	dir := t.TempDir()
	termData(t, dir)
	raw, err := os.ReadFile(filepath.Join(dir, "d.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), withWeights(string(raw), func(i int) float64 { return float64(1 + i%7) }), 0o644); err != nil {
		t.Fatal(err)
	}
	base := strings.NewReplacer("EFFECTS", "parallel", "PARTIAL", "{}").Replace(termPlan)
	clustered := strings.Replace(base, "data: {file: d.csv}", "data: {file: d.csv, cluster: w}", 1) + "covariance: clustered\n"
	const white, liang, mnw = "White, H. (1980). A heteroskedasticity-consistent covariance matrix estimator", "Liang, K.-Y. & Zeger, S.L. (1986). Longitudinal data analysis using generalized linear models. Biometrika 73:13-22.", "MacKinnon, J.G., Nielsen, M.Ø. & Webb, M.D. (2023)"
	for _, c := range []struct {
		name, src, sentence string
		cited, not          []string
	}{
		{"observed", base, "Standard errors came from the observed information.", nil, []string{white, liang, mnw}},
		{"sandwich", base + "covariance: sandwich\n", "Standard errors came from the sandwich estimator with a small-sample factor [n].", []string{white}, []string{liang, mnw}},
		{"sandwich_plain", base + "covariance: sandwich_plain\n", "Standard errors came from the sandwich estimator without a small-sample factor [n].", []string{white}, []string{liang, mnw}},
		{"clustered", clustered, "Standard errors came from the cluster-robust sandwich estimator [n], its single estimates referred to t on G-1 = 6 degrees of freedom and its joint Wald tests of q restrictions as W (G-q)/((G-1) q) to F(q, G-q) (G = 7, the clusters of `w`) [n].", []string{liang, mnw}, []string{white}},
		{"jackknife", clustered + "few_clusters: jackknife\n", "Standard errors came from the delete-one-cluster jackknife, its single estimates referred to t on G-1 = 6 degrees of freedom", []string{mnw}, []string{white, liang}},
	} {
		md := string(renderSource(t, dir, c.src, 1)["report.md"])
		i := strings.Index(md, "## Methods (draft)")
		if i < 0 {
			t.Fatalf("%s: no Methods draft", c.name)
		}
		m := md[i:]
		m = m[:strings.Index(m, "\n## ")+1]
		m = regexp.MustCompile(`\[[0-9]+\] `).ReplaceAllString(m, "") // the list's numbers
		m = regexp.MustCompile(`\[[0-9]+\]`).ReplaceAllString(m, "[n]")
		hasAll(t, "Methods ("+c.name+")", m, append([]string{c.sentence}, c.cited...)...)
		for _, bad := range c.not {
			if strings.Contains(m, bad) {
				t.Errorf("Methods (%s) cites %q", c.name, bad)
			}
		}
	}
}

// TestTICSaysWhatIsComputed: where a rule chooses by TIC, the Methods
// draft says what TIC is (runner.TICWords: -2 log-likelihood + 2 tr(A^-1
// B) with the sandwich's pieces of independent rows) and, for sampling
// weights, frequency weights and imputed sets, how fit.TIC and the pooling
// compute it; under clustered errors the rule's caveat says the clusters
// do not reach it. The decision log's penalty is tr(A^-1 B) of fit.TIC, on
// imputed data the mean over the sets of each set's own (recomputed here
// set by set), and TIC = -2 log-likelihood + 2 penalty with the
// log-likelihood of the models' table (a mean over the sets there).
// Data: termData (seeded, weights 1 to 7 in w) and testsurvey.Report's
// imputed survey (seeded).
func TestTICSaysWhatIsComputed(t *testing.T) {
	dir := t.TempDir()
	termData(t, dir)
	raw, err := os.ReadFile(filepath.Join(dir, "d.csv"))
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), withWeights(string(raw), func(i int) float64 { return float64(1 + i%7) }), 0o644)
	sv := testsurvey.Report.Imputed(rand.New(rand.NewPCG(31, 4)), testsurvey.ImputedOptions{Rows: 240, Sets: 4, Missing: 0.25, Digits: 5})
	os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(sv.Orig), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), []byte(sv.Stacked), 0o644)
	base := strings.NewReplacer("EFFECTS", "parallel, nonparallel", "PARTIAL", "{}", "by: aic", "by: tic").Replace(termPlan)
	const sampling, freq, imputed = "With the sampling weights, rescaled to sum to the rows used, A sums each row's information times its weight and B each row's outer product times its squared weight",
		"With frequency weights each row's information and outer product count its weight",
		"On the imputed data each set's TIC was computed with that set's fit and rows, and the rule compared their means over the sets."
	const clusters = "TIC's penalty is made of each row's scores, as if every observation were independent: the clusters of w that the clustered standard errors allow for do not reach it"
	for _, c := range []struct {
		name, src string
		has, not  []string
	}{
		{"plain", base, nil, []string{sampling, freq, imputed, clusters}},
		{"sampling", strings.Replace(base, "data: {file: d.csv}", "data: {file: d.csv, weights: w, weight_kind: sampling}", 1), []string{sampling}, []string{freq, imputed}},
		{"frequency", strings.Replace(base, "data: {file: d.csv}", "data: {file: d.csv, weights: w}", 1), []string{freq}, []string{sampling, imputed}},
		{"clustered", strings.Replace(base, "data: {file: d.csv}", "data: {file: d.csv, cluster: w}", 1) + "covariance: clustered\n", []string{clusters}, []string{sampling, freq, imputed}},
		{"imputed", "version: 1\ndata: {file: orig.csv, imputed: {file: stacked.csv, column: imp}}\noutcomes: [{column: y}]\npredictors: [x1, x2]\nmodels: {approaches: [cumulative], effects: [parallel, nonparallel]}\ntests: {parallel_lines: [lr]}\nrules:\n  - choose: {by: tic}\n",
			[]string{imputed, "a rule on TIC compares the means over the sets of each set's TIC", "(means over the imputed sets of each set's own)"}, []string{sampling, freq}},
	} {
		path := filepath.Join(dir, c.name+".yaml")
		os.WriteFile(path, []byte(c.src), 0o644)
		res := runPlan(t, path, 1)
		md := string(outputsOf(t, res)["report.md"])
		m := md[strings.Index(md, "## Methods (draft)"):]
		hasAll(t, "Methods ("+c.name+")", m, runner.TICWords+".")
		hasAll(t, "report.md ("+c.name+")", md, c.has...)
		for _, bad := range c.not {
			if strings.Contains(md, bad) {
				t.Errorf("report.md (%s) says %q", c.name, bad)
			}
		}
		// The penalty and TIC of each model in the decision log.
		or := res.Outcomes[0]
		sampled := res.Analysis.Errors.Sampling
		for i, f := range or.Fits {
			if f.Auxiliary || !f.OK() {
				continue
			}
			var pen, ll float64
			if or.Imputed != nil {
				for k, d := range or.Imputed.Sets {
					_, p, err := fit.TIC(d, or.Imputed.Fits[k][i].Result, sampled)
					if err != nil {
						t.Fatal(err)
					}
					pen += p / float64(len(or.Imputed.Sets))
				}
			} else if _, pen, err = fit.TIC(or.FitData, f.Result, sampled); err != nil {
				t.Fatal(err)
			}
			ll = f.Result.LogLik
			want := fmt.Sprintf("TIC %.3f", -2*ll+2*pen)
			wantPen := fmt.Sprintf("penalty tr(A^-1 B) = %.3f for %d parameters", pen, f.Result.NParams)
			line := ""
			for _, l := range strings.Split(md, "\n") {
				if strings.HasPrefix(l, "| "+f.ID+" |") && strings.Contains(l, "penalty tr(A^-1 B)") {
					line = l
				}
			}
			if !strings.Contains(line, want) || !strings.Contains(line, wantPen) {
				t.Errorf("%s, %s: decision log %q, want %q and %q", c.name, f.ID, line, want, wantPen)
			}
		}
	}
}
