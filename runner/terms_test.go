package runner

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"ordplan/internal/refdata"
	"ordplan/plan"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// housingDummy maps the hand-made dummies of housing.csv to the columns
// the design makes from the categorical predictors of housing_factors.csv.
var housingDummy = map[string]string{
	"inflmed": "infl.medium", "inflhigh": "infl.high",
	"apartment": "type.apartment", "atrium": "type.atrium", "terrace": "type.terrace",
	"conthigh": "cont.high",
}

const housingFactorsPlan = `version: 1
title: housing with categorical predictors
data: {file: %s, weights: freq}
outcomes: [{column: sat, categories: ["1", "2", "3"]}]
categorical:
  infl: {levels: [low, medium, high]}
  type: {levels: [tower, apartment, atrium, terrace], reference: tower}
  cont: {levels: [low, high]}
predictors: [infl, type, cont]
models:
  approaches: [cumulative, stage, adjacent]
  effects: [parallel, partial, constrained, nonparallel, stereotype]
  links: [logit, probit, cloglog]
  partial: {free: [type]}
tests: {parallel_lines: [lr, wald]}
rules:
  - choose: {by: aic}
`

func writePlan(t *testing.T, src string, files map[string]string) *plan.Plan {
	t.Helper()
	dir := t.TempDir()
	for name, body := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return planIn(t, dir, src)
}

// Madsen (1976), Copenhagen housing: housing_factors.csv fitted with infl,
// type and cont declared categorical (treatment coding, references low,
// tower, low) reproduces every record that the dummy-coded housing.csv
// has in testdata/reference (log-likelihood, cut-points, per-equation
// slopes and observed-information standard errors), with the type term
// as the partial set.
func TestHousingFactorsReproduceDummyRecords(t *testing.T) {
	abs, _ := filepath.Abs(refdata.Path("housing_factors.csv"))
	p := writePlan(t, strings.Replace(housingFactorsPlan, "%s", abs, 1), nil)
	r := runPlan(t, p, 0)
	or := r.Outcomes[0]
	if got := strings.Join(or.FitData.Predictors, " "); got != "infl.medium infl.high type.apartment type.atrium type.terrace cont.high" {
		t.Fatalf("design columns %q", got)
	}
	raw, err := os.ReadFile(refdata.Path("housing.models.json"))
	if err != nil {
		t.Fatal(err)
	}
	var refs []struct {
		ID        string               `json:"id"`
		Status    string               `json:"status"`
		LogLik    *float64             `json:"loglik"`
		Cutpoints []float64            `json:"cutpoints"`
		Effects   map[string][]float64 `json:"effects"`
		SE        map[string]float64   `json:"se_oim"`
	}
	if err := json.Unmarshal(raw, &refs); err != nil {
		t.Fatal(err)
	}
	checked := 0
	for _, ref := range refs {
		id := strings.NewReplacer("partial_unconstrained", "partial", "partial_constrained", "constrained").Replace(ref.ID)
		f := or.Find(id)
		if strings.HasPrefix(ref.ID, "multinomial") {
			continue
		}
		if f == nil || !f.OK() {
			t.Errorf("%s: not fitted (%+v)", id, f)
			continue
		}
		res := f.Result
		checked++
		if math.Abs(res.LogLik-*ref.LogLik) > 1e-6 {
			t.Errorf("%s: log-likelihood %.10f, reference %.10f", id, res.LogLik, *ref.LogLik)
		}
		for m, c := range ref.Cutpoints {
			if !closeRel(res.Cutpoints[m], c, 1e-5) {
				t.Errorf("%s: tau[%d] %.8g, reference %.8g", id, m+1, res.Cutpoints[m], c)
			}
		}
		for dummy, slopes := range ref.Effects {
			k := indexOfName(res.Predictors, housingDummy[dummy])
			for m, b := range slopes {
				if !closeRel(res.Effects[m][k], b, 1e-5) {
					t.Errorf("%s: %s slope %d %.8g, reference (%s) %.8g", id, housingDummy[dummy], m+1, res.Effects[m][k], dummy, b)
				}
			}
		}
		for name, se := range refdata.ParamNames(ref.SE) {
			ours := name
			if !strings.HasPrefix(name, "tau[") {
				base, rest, _ := strings.Cut(name, "[")
				if col, ok := housingDummy[base]; ok {
					ours = col
					if rest != "" {
						ours += "[" + rest
					}
				}
			}
			i := indexOfName(res.ParamNames, ours)
			if i < 0 {
				t.Errorf("%s: no parameter %s (reference %s); parameters %v", id, ours, name, res.ParamNames)
				continue
			}
			if !closeRel(res.StdErrors[i], se, 1e-5) {
				t.Errorf("%s: standard error of %s %.8g, reference (%s) %.8g", id, ours, res.StdErrors[i], name, se)
			}
		}
	}
	if checked < 17 {
		t.Errorf("checked %d records, want 17", checked)
	}
	// Venables & Ripley (2002), Modern Applied Statistics with S, 4th ed.,
	// sec. 7.3 (values from memory, as quoted in testdata/reference/README.md):
	// the cumulative logit with parallel effects.
	res := or.Find("cumulative/parallel/logit").Result
	hand := map[string]float64{"infl.medium": 0.5664, "infl.high": 1.2888, "type.apartment": -0.5724,
		"type.atrium": -0.3662, "type.terrace": -1.0910, "cont.high": 0.3603}
	for col, want := range hand {
		// Those values are for the sign convention logit P(Y <= m) = tau_m - x'b,
		// which is the one of docs/models.md.
		if got := res.Effects[0][indexOfName(res.Predictors, col)]; math.Abs(got-want) > 1e-4 {
			t.Errorf("handbook %s: %.4f, want %.4f", col, got, want)
		}
	}
	if math.Abs(res.Cutpoints[0]+0.4961) > 1e-4 || math.Abs(res.Cutpoints[1]-0.6907) > 1e-4 {
		t.Errorf("handbook thresholds: %.4f %.4f, want -0.4961 0.6907", res.Cutpoints[0], res.Cutpoints[1])
	}
	if dev := -2 * res.LogLik; math.Abs(dev-3479.149) > 1e-3 {
		t.Errorf("handbook residual deviance %.3f, want 3479.149", dev)
	}
	// the parallel-lines tests are per term: type has 3 columns, so its
	// Wald test has 3 (J-2) = 3 degrees of freedom
	for _, tb := range or.Tests {
		for _, vt := range tb.PerVariable {
			for _, tt := range vt.Tests {
				want := map[string]int{"infl": 2, "type": 3, "cont": 1}[vt.Predictor]
				if tt.OK && tt.DF != want {
					t.Errorf("%s %s: %s test of term %s has df %d, want %d", tb.Approach, tb.Link, tt.Name, vt.Predictor, tt.DF, want)
				}
			}
		}
	}
	checkPatternSplitSaturated(t, or)
}

// checkPatternSplitSaturated: with categorical predictors only, the
// Pulkstenis-Robinson patterns are not cut, and the deviance statistic is
// the likelihood ratio of the chosen model against the saturated model of
// the pattern table, 2 (LL_sat - LL), LL_sat = sum O log(O / n_pattern)
// computed here from the data; df = I(J - 1) - P.
func checkPatternSplitSaturated(t *testing.T, or *OutcomeResult) {
	t.Helper()
	ps := or.PatternSplit
	if ps == nil || ps.PatternSplit == nil {
		t.Fatalf("Pulkstenis-Robinson tests not computed: %+v", ps)
	}
	if ps.Patterns != 24 || ps.Split != 0 || ps.Groups != 24 || strings.Join(ps.Predictors, " ") != "infl type cont" {
		t.Errorf("patterns %d, split %d, groups %d, predictors %v; want 24, 0, 24", ps.Patterns, ps.Split, ps.Groups, ps.Predictors)
	}
	d, ds := or.FitData, or.Data
	counts := map[string][]float64{}
	for i := 0; i < ds.N; i++ {
		key := fmt.Sprint(ds.X[i*ds.K : (i+1)*ds.K])
		if counts[key] == nil {
			counts[key] = make([]float64, d.J)
		}
		counts[key][d.Y[i]] += d.Weights[i]
	}
	llSat := 0.0
	for _, c := range counts {
		n := 0.0
		for _, v := range c {
			n += v
		}
		for _, v := range c {
			if v > 0 {
				llSat += v * math.Log(v/n)
			}
		}
	}
	res := or.Chosen.Result
	want := 2 * (llSat - res.LogLik)
	if !ps.Deviance.OK || math.Abs(ps.Deviance.Chi2-want) > 1e-6*want || ps.Deviance.DF != 24*2-res.NParams {
		t.Errorf("%s: deviance %+v, want 2 (LL_sat - LL) = %.8f on %d df", or.Chosen.ID, ps.Deviance, want, 24*2-res.NParams)
	}
}

func closeRel(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Max(math.Abs(want), 1e-2)
}

func indexOfName(names []string, n string) int {
	for i, x := range names {
		if x == n {
			return i
		}
	}
	return -1
}

// inventedTrial writes an invented trial (seeded): pain relief none <
// slight < moderate < complete, treatment drug/placebo, clinic site
// north/east/south/west, age, dose (with zeros).
func inventedTrial(n int) string {
	rng := rand.New(rand.NewPCG(15, 2026))
	var b strings.Builder
	b.WriteString("relief,treat,site,age,dose\n")
	cats := []string{"none", "slight", "moderate", "complete"}
	sites := []string{"north", "east", "south", "west"}
	for i := 0; i < n; i++ {
		drug := rng.IntN(2)
		s := rng.IntN(4)
		age := 20 + 50*rng.Float64()
		dose := 0.0
		if rng.Float64() < 0.8 {
			dose = math.Round(100*rng.ExpFloat64()) / 10
		}
		eta := 0.9*float64(drug) + 0.3*float64(s) - 0.02*(age-45) + 0.03*float64(drug)*(age-45) + 0.4*math.Log(dose+1) + 0.0008*(age-45)*(age-45)
		u := rng.Float64()
		z := eta + math.Log(u/(1-u))
		y := 0
		for _, c := range []float64{-0.5, 0.7, 1.9} {
			if z > c {
				y++
			}
		}
		treat := []string{"placebo", "drug"}[drug]
		fmt.Fprintf(&b, "%s,%s,%s,%.2f,%.1f\n", cats[y], treat, sites[s], age, dose)
	}
	return b.String()
}

const trialPlan = `version: 1
title: invented trial
data: {file: trial.csv}
outcomes: [{column: relief, categories: [none, slight, moderate, complete]}]
categorical:
  treat: {levels: [placebo, drug]}
  site: {levels: [north, east, south, west], coding: CODING}
predictors:
  - treat
  - site
  - {name: age, column: age, spline: {quantiles: [0.05, 0.35, 0.65, 0.95]}}
  - {name: dose, column: dose, log: {shift: 1}, centre: mean}
  - {interact: [treat, age]}
models: {approaches: [cumulative], effects: [parallel, partial], partial: {free: [treat]}}
tests: {parallel_lines: [wald, lr]}
rules:
  - choose: {by: aic}
inference:
  marginal_effects: [average, means]
  predict: new.csv
`

const trialNewRows = "treat,site,age,dose\ndrug,west,33.5,0\nplacebo,north,61,12.5\ndrug,east,47.25,3\n"

// A categorical term equals hand-made dummies; sum-to-zero and dummy
// coding give the same log-likelihood and predictions (the same model,
// reparameterized: an exact identity).
func TestCodingsAreOneModel(t *testing.T) {
	files := map[string]string{"trial.csv": inventedTrial(500), "new.csv": trialNewRows}
	var lls []float64
	var preds [][]float64
	for _, coding := range []string{"treatment", "sum"} {
		p := writePlan(t, strings.Replace(trialPlan, "CODING", coding, 1), files)
		r := runPlan(t, p, 0)
		or := r.Outcomes[0]
		f := or.Find("cumulative/partial/logit")
		if !f.OK() {
			t.Fatalf("%s: %+v", coding, f.Result)
		}
		lls = append(lls, f.Result.LogLik)
		nr := or.NewRows
		if nr == nil || nr.Pred == nil {
			t.Fatalf("%s: no predictions for new rows", coding)
		}
		pr, err := f.Result.Predict(nr.Design, nil)
		if err != nil {
			t.Fatal(err)
		}
		preds = append(preds, pr.Prob)
		// the interaction's columns, named term.level&term.k
		if !slices.Contains(f.Result.Predictors, "treat.drug&age.2") {
			t.Errorf("columns %v", f.Result.Predictors)
		}
	}
	if math.Abs(lls[0]-lls[1]) > 1e-8 {
		t.Errorf("log-likelihood: treatment %.10f, sum %.10f", lls[0], lls[1])
	}
	for i := range preds[0] {
		if math.Abs(preds[0][i]-preds[1][i]) > 1e-8 {
			t.Errorf("prediction %d: treatment %.10f, sum %.10f", i, preds[0][i], preds[1][i])
		}
	}
	// hand-made dummies of site and treat give the same fit as the
	// categorical terms (treatment coding)
	var hand strings.Builder
	hand.WriteString("relief,drug,east,south,west,age,dose\n")
	for i, line := range strings.Split(strings.TrimSpace(files["trial.csv"]), "\n") {
		if i == 0 {
			continue
		}
		f := strings.Split(line, ",")
		b := func(c bool) int {
			if c {
				return 1
			}
			return 0
		}
		fmt.Fprintf(&hand, "%s,%d,%d,%d,%d,%s,%s\n", f[0], b(f[1] == "drug"), b(f[2] == "east"), b(f[2] == "south"), b(f[2] == "west"), f[3], f[4])
	}
	handPlan := `version: 1
data: {file: hand.csv}
outcomes: [{column: relief, categories: [none, slight, moderate, complete]}]
predictors: [drug, east, south, west, age]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`
	catPlan := `version: 1
data: {file: trial.csv}
outcomes: [{column: relief, categories: [none, slight, moderate, complete]}]
categorical:
  treat: {levels: [placebo, drug]}
  site: {levels: [north, east, south, west]}
predictors: [treat, site, age]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`
	h := runPlan(t, writePlan(t, handPlan, map[string]string{"hand.csv": hand.String()}), 0).Outcomes[0].Find("cumulative/parallel/logit").Result
	c := runPlan(t, writePlan(t, catPlan, files), 0).Outcomes[0].Find("cumulative/parallel/logit").Result
	if math.Abs(h.LogLik-c.LogLik) > 1e-9 {
		t.Errorf("log-likelihood: dummies %.10f, categorical %.10f", h.LogLik, c.LogLik)
	}
	for i := range h.Estimates {
		if !closeRel(c.Estimates[i], h.Estimates[i], 1e-8) || !closeRel(c.StdErrors[i], h.StdErrors[i], 1e-7) {
			t.Errorf("%s / %s: %g (%g) vs %g (%g)", c.ParamNames[i], h.ParamNames[i], c.Estimates[i], c.StdErrors[i], h.Estimates[i], h.StdErrors[i])
		}
	}
}

// Marginal effects per source variable: the average effect of age (inside
// a spline and an interaction with treat) and of dose (log, centred)
// equals the central difference of the average predicted probabilities
// when the raw variable moves; the effect of site is the average change
// of the predicted probabilities from north to each level. Predictions
// from raw new rows equal those from design rows made by hand.
func TestSourceEffectsAgainstFiniteDifferences(t *testing.T) {
	files := map[string]string{"trial.csv": inventedTrial(500), "new.csv": trialNewRows}
	p := writePlan(t, strings.Replace(trialPlan, "CODING", "treatment", 1), files)
	r := runPlan(t, p, 0)
	or := r.Outcomes[0]
	res := or.Chosen.Result
	dz := or.Design
	S, J := len(dz.Sources), res.J
	avgProb := func(set func(raw []float64)) []float64 {
		out := make([]float64, J)
		raw := make([]float64, S)
		var X []float64
		for i := 0; i < or.Data.N; i++ {
			copy(raw, or.Data.X[i*S:(i+1)*S])
			set(raw)
			row := make([]float64, len(dz.Columns))
			if err := dz.Row(raw, row); err != nil {
				t.Fatal(err)
			}
			X = append(X, row...)
		}
		pr, err := res.Predict(X, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < or.Data.N; i++ {
			for j := 0; j < J; j++ {
				out[j] += pr.Prob[i*J+j] / float64(or.Data.N)
			}
		}
		return out
	}
	var ame []fit.MarginalEffect
	for _, set := range or.Marginal {
		if set.Kind == "average" {
			ame = set.Effects
			if set.Error != "" {
				t.Fatal(set.Error)
			}
		}
	}
	find := func(pred, change string, j int) float64 {
		for _, me := range ame {
			if me.Predictor == pred && me.Change == change && me.Category == res.Categories[j] {
				return me.Effect
			}
		}
		t.Fatalf("no effect %s %s %d in %+v", pred, change, j, ame)
		return 0
	}
	for _, name := range []string{"age", "dose"} {
		s := dz.Source(name)
		h := 1e-4 * dz.SourceScales()[s]
		up := avgProb(func(raw []float64) { raw[s] += h })
		down := avgProb(func(raw []float64) { raw[s] -= h })
		for j := 0; j < J; j++ {
			fd := (up[j] - down[j]) / (2 * h)
			if got := find(name, "per unit", j); math.Abs(got-fd) > 1e-7 {
				t.Errorf("%s, category %s: marginal effect %.10g, central difference %.10g", name, res.Categories[j], got, fd)
			}
		}
	}
	site := dz.Source("site")
	north := avgProb(func(raw []float64) { raw[site] = 0 })
	for l, level := range []string{"east", "south", "west"} {
		at := avgProb(func(raw []float64) { raw[site] = float64(l + 1) })
		for j := 0; j < J; j++ {
			if got := find("site", "north to "+level, j); math.Abs(got-(at[j]-north[j])) > 1e-12 {
				t.Errorf("site north to %s, category %d: %g, want %g", level, j, got, at[j]-north[j])
			}
		}
	}
	// new rows by hand: treat.drug, site dummies, spline basis of age at
	// the frozen knots, log(dose + 1) minus the frozen mean, and the
	// products of treat.drug with the age basis
	var tr, ag, do design.Term
	for _, term := range dz.Terms {
		switch term.Name {
		case "treat":
			tr = term
		case "age":
			ag = term
		case "dose":
			do = term
		}
	}
	_ = tr
	rows := [][]float64{{1, 0, 0, 1, 33.5, 0}, {0, 0, 0, 0, 61, 12.5}, {1, 1, 0, 0, 47.25, 3}}
	var X []float64
	for _, r := range rows {
		basis := naturalSpline(r[4], ag.Knots)
		x := []float64{r[0], r[1], r[2], r[3]}
		x = append(x, basis...)
		x = append(x, math.Log(r[5]+1)-do.Mean)
		for _, b := range basis {
			x = append(x, r[0]*b)
		}
		X = append(X, x...)
	}
	want, err := res.Predict(X, nil)
	if err != nil {
		t.Fatal(err)
	}
	got := or.NewRows.Pred
	for i := range want.Prob {
		if math.Abs(got.Prob[i]-want.Prob[i]) > 1e-12 {
			t.Errorf("new row %d category %d: %g from the raw row, %g from the design by hand", i/J, i%J, got.Prob[i], want.Prob[i])
		}
	}
}

// naturalSpline is the natural cubic spline basis written out from its
// textbook definition (Hastie, Tibshirani & Friedman, The Elements of
// Statistical Learning, 2nd ed., eqs. 5.4-5.5), scaled as the design
// scales it: x, then (d_k(x) - d_{K-1}(x)) / (xi_K - xi_1)^2.
func naturalSpline(x float64, xi []float64) []float64 {
	K := len(xi)
	cube := func(v float64) float64 {
		if v <= 0 {
			return 0
		}
		return v * v * v
	}
	d := func(k int) float64 { return (cube(x-xi[k]) - cube(x-xi[K-1])) / (xi[K-1] - xi[k]) }
	out := []float64{x}
	span := (xi[K-1] - xi[0]) * (xi[K-1] - xi[0])
	for k := 0; k < K-2; k++ {
		out = append(out, (d(k)-d(K-2))/span)
	}
	return out
}

// A subset, an outcome's own predictor list and a hypothesis naming a
// term, on the invented trial: rows outside the subset are counted as
// dropped, the outcome's design has only its own terms, and "site = 0"
// is the joint test of the site columns (the same statistic as the three
// restrictions written out).
func TestSubsetOwnPredictorsTermHypothesis(t *testing.T) {
	csv := inventedTrial(400)
	young := 0
	for _, line := range strings.Split(strings.TrimSpace(csv), "\n")[1:] {
		var age float64
		fmt.Sscanf(strings.Split(line, ",")[3], "%g", &age)
		if age < 30 {
			young++
		}
	}
	src := `version: 1
data: {file: trial.csv}
subset:
  - {column: age, at_least: 30}
  - {column: site, none_of: [nowhere]}
outcomes:
  - column: relief
    categories: [none, slight, moderate, complete]
    predictors: [treat, site]
categorical:
  treat: {levels: [placebo, drug]}
  site: {levels: [north, east, south, west]}
predictors: [treat, site, age]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
inference:
  hypotheses: ["site = 0", "site.east = 0; site.south = 0; site.west = 0"]
`
	p := writePlan(t, src, map[string]string{"trial.csv": csv})
	or := runPlan(t, p, 0).Outcomes[0]
	if or.Data.RowsOutside != young || or.Data.N != 400-young {
		t.Errorf("subset: %d rows outside, %d used; want %d outside", or.Data.RowsOutside, or.Data.N, young)
	}
	if !strings.Contains(or.Data.DropSummary(), fmt.Sprintf("outside the subset age >= 30: %d", young)) {
		t.Errorf("drop summary %q", or.Data.DropSummary())
	}
	if got := strings.Join(or.FitData.Predictors, " "); got != "treat.drug site.east site.south site.west" {
		t.Errorf("the outcome's own terms: columns %q", got)
	}
	var chi []float64
	for _, h := range or.Hypotheses {
		if !h.Test.OK || h.Test.DF != 3 {
			t.Errorf("%s: %+v", h.Text, h.Test)
		}
		chi = append(chi, h.Test.Chi2)
	}
	if len(chi) != 2 || math.Abs(chi[0]-chi[1]) > 1e-9 {
		t.Errorf("term hypothesis %v", chi)
	}
}

// Fits of a plan with categorical, transformed and interaction terms run
// elsewhere (each job rebuilds the design from the data and the plan's
// terms) give the same decisions, byte for byte.
func TestExecutorWithTerms(t *testing.T) {
	files := map[string]string{"trial.csv": inventedTrial(300), "new.csv": trialNewRows}
	p := writePlan(t, strings.Replace(trialPlan, "CODING", "sum", 1), files)
	local, _ := MarshalStable(BuildDecisions(runPlan(t, p, 0)))
	r, err := Run(p, Options{Executor: gobExecutor{p.Data.Path}})
	if err != nil {
		t.Fatal(err)
	}
	remote, _ := MarshalStable(BuildDecisions(r))
	if !bytes.Equal(local, remote) {
		t.Fatal("decisions differ when the fits run through the executor")
	}
}

// The report's description of a categorical term follows a level with
// its column when the column's name does not spell the level as written,
// and says nothing more when every name does; a level holding a space is
// quoted in the list of levels. No level is listed twice, however many
// levels the term has (28 here, some spelled by their columns and some
// not).
func TestDescribeTermsPairsColumnsWithLevels(t *testing.T) {
	var many []string
	for i := range 28 {
		if i%7 == 3 {
			many = append(many, fmt.Sprintf("Town <%02d> north", i))
		} else {
			many = append(many, fmt.Sprintf("town_%02d", i))
		}
	}
	for _, c := range []struct {
		levels []string
		want   string
	}{
		{[]string{"main road", "cul-de-sac", "cul de sac"}, `categorical with levels "main road", cul-de-sac (column g.cul_de_sac) and "cul de sac" (column g.cul_de_sac_3) in treatment coding, one 0/1 column per level other than the reference level "main road"`},
		{[]string{"a", "b", "c"}, `categorical with levels a, b and c in treatment coding, one 0/1 column per level other than the reference level a`},
		{many, ""},
	} {
		spec := design.Spec{Sources: []design.Source{{Name: "g", Cat: &design.Categorical{Levels: c.levels, Coding: design.Treatment}}}, Terms: []design.TermSpec{{Name: "g", Source: "g"}}}
		codes := []float64{0, 1, 2, 1}
		if len(c.levels) == 28 {
			codes = codes[:0]
			for i := range 28 {
				codes = append(codes, float64(i))
			}
		}
		dz, err := design.Build(spec, codes, len(codes), nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		got := describeTerms(dz, "the rows used")[0][1]
		if c.want != "" && got != c.want {
			t.Errorf("got  %s\nwant %s", got, c.want)
		}
		for i, l := range c.levels {
			if len(c.levels) != 28 {
				break
			}
			if n := strings.Count(got, l); i > 0 && n != 1 { // the reference level is named again as such
				t.Errorf("level %q in %d places: %s", l, n, got)
			}
			if i%7 == 3 && !strings.Contains(got, fmt.Sprintf(`"%s" (column g.Town__%02d__north)`, l, i)) {
				t.Errorf("level %q not followed by its column: %s", l, got)
			}
		}
	}
}

// Every kind of term is described in words that let a reader rebuild its
// columns: the transformation as a formula, each constant taken from the
// data with what it is and the rows it came from, the basis, the coding
// and reference level, the levels dropped, the parts of an interaction.
// The constants are those of x = 1, ..., 5 worked by hand: mean 3,
// standard deviation sqrt(10/4) = 1.58114, quantiles at p (n - 1) between
// order statistics: 2, 3, 4 at 0.25, 0.5, 0.75.
func TestDescribeTermsInWords(t *testing.T) {
	cat := func(coding, ref string, levels ...string) *design.Categorical {
		return &design.Categorical{Levels: levels, Coding: coding, Reference: ref, Unobserved: design.UnobservedDrop}
	}
	spec := design.Spec{
		Sources: []design.Source{{Name: "x"}, {Name: "g", Cat: cat(design.Sum, "c", "a", "b", "c")}, {Name: "h", Cat: cat(design.Successive, "lo", "lo", "mid", "hi", "top")}},
		Terms: []design.TermSpec{
			{Name: "x", Source: "x"},
			{Name: "x0", Source: "x"},
			{Name: "lx", Source: "x", Transform: design.Transform{Log: true, Shift: 1}},
			{Name: "ln", Source: "x", Transform: design.Transform{Log: true, Shift: -0.5}},
			{Name: "z", Source: "x", Transform: design.Transform{Centre: "mean", Scale: true}},
			{Name: "c40", Source: "x", Transform: design.Transform{Centre: "value", CentreAt: 4}},
			{Name: "q", Source: "x", Transform: design.Transform{Sqrt: true, Poly: 2, PolyRaw: true}},
			{Name: "o", Source: "x", Transform: design.Transform{Centre: "mean", Poly: 3}},
			{Name: "s", Source: "x", Transform: design.Transform{Quantiles: []float64{0.25, 0.5, 0.75}}},
			{Name: "k", Source: "x", Transform: design.Transform{Knots: []float64{1.5, 3, 4.5}}},
			{Name: "g", Source: "g"},
			{Name: "hh", Source: "h"},
			{Name: "x&g", Interact: []string{"x", "g"}},
		},
	}
	raw := []float64{1, 0, 0, 2, 1, 1, 3, 2, 2, 4, 0, 1, 5, 1, 0} // h never at "top"
	dz, err := design.Build(spec, raw, 5, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{
		"x":   "numeric as recorded",
		"x0":  "the numeric column x as recorded",
		"lx":  "log(x + 1), where log is the natural logarithm",
		"ln":  "log(x - 0.5), where log is the natural logarithm",
		"z":   "(x - 3) / 1.58114, where 3 and 1.58114 are the mean and standard deviation of x over R",
		"c40": "x - 4",
		"q":   "a raw polynomial of degree 2 in sqrt(x) (powers 1 to 2 of sqrt(x), not orthogonalized)",
		"o":   "an orthogonal polynomial of degree 3 in u = x - 3 (columns orthogonal to each other and to a constant over R, each with a sum of squares of 1), where 3 is the mean of x over R",
		"s":   "a natural cubic spline in x with knots at 2, 3 and 4, the 0.25, 0.5 and 0.75 quantiles of x over R, linear beyond the outer two",
		"k":   "a natural cubic spline in x with knots at 1.5, 3 and 4.5, linear beyond the outer two",
		"g":   "categorical with levels a, b and c in sum-to-zero coding, one column per level other than the reference level c, which is -1 in every column",
		"hh":  "categorical column h with levels lo, mid and hi (level top, declared but in no row used, dropped) in successive-difference coding, one column per level after the first (lo), each 1 at its level and above and 0 below",
		"x&g": "the interaction of x and g, the products of their columns",
	}
	got := describeTerms(dz, "R")
	if len(got) != len(want) {
		t.Fatalf("%d descriptions for %d terms", len(got), len(want))
	}
	for _, d := range got {
		if d[1] != want[d[0]] {
			t.Errorf("%s:\n got  %s\n want %s", d[0], d[1], want[d[0]])
		}
	}
}
