package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
)

func verdictOf(ro *RuleOutcome, id string) *Verdict {
	for i := range ro.Verdicts {
		if ro.Verdicts[i].Model == id {
			return &ro.Verdicts[i]
		}
	}
	return nil
}

// Wine bitterness (Randall 1989): models without a finite maximum are
// rejected by reject_unconverged, with the separation named; the score
// rule and the AIC choice run on the rest.
func TestRuleRejectUnconverged(t *testing.T) {
	r := runPlan(t, loadPlan(t, "wine_rules.yaml"), 0)
	or := r.Outcomes[0]
	ro := or.Rules[0]
	for _, id := range []string{"cumulative/nonparallel/logit", "adjacent/nonparallel/logit"} {
		v := verdictOf(ro, id)
		if v == nil || v.Kept || !strings.Contains(v.Reason, "no_finite_maximum") || !strings.Contains(v.Reason, "temp") {
			t.Errorf("%s: %+v", id, v)
		}
	}
	if v := verdictOf(ro, "cumulative/parallel/logit"); v == nil || !v.Kept {
		t.Errorf("parallel should be kept: %+v", v)
	}
	// decisions.json carries the numbers the verdict read, as its text.
	if v, f := verdictOf(ro, "cumulative/parallel/logit"), or.Find("cumulative/parallel/logit"); v == nil || v.Numbers["iterations"] != float64(f.Result.Iterations) || v.Numbers["max_abs_score"] != f.Result.MaxAbsScore || f.Result.Iterations == 0 {
		t.Errorf("numbers of a converged fit: %+v", v)
	}
	// The score rule tests parallel against the next less constrained
	// model, partial; partial's is nonparallel, which has no finite
	// maximum: the score test needs only partial's own fit, so partial is
	// tested too, and the log says the nonparallel model has no fit.
	for _, v := range or.Rules[1].Verdicts {
		if !strings.Contains(v.Reason, "chi2(") {
			t.Errorf("score rule verdict without numbers: %+v", v)
		}
	}
	if v := verdictOf(or.Rules[1], "cumulative/partial/logit"); v == nil || !strings.Contains(v.Reason, "score test against cumulative/nonparallel/logit: chi2(") || !strings.Contains(v.Reason, "itself has no usable fit, status no_finite_maximum") {
		t.Errorf("partial against nonparallel: %+v", v)
	}
	if v := verdictOf(or.Rules[1], "cumulative/parallel/logit"); v == nil || !strings.Contains(v.Reason, "score test against cumulative/partial/logit: chi2(") {
		t.Errorf("parallel against partial: %+v", v)
	}
	// The per-predictor likelihood-ratio test of contact compares the
	// auxiliary model with contact alone parallel, which has no finite
	// maximum (Randall's data: rating 1 occurs only with temp = 0), with the
	// nonparallel model: the reason names those fits by their ids, not the
	// candidate cumulative/partial/logit, whose fit is usable.
	for _, tb := range or.Tests {
		if tb.Approach != fit.Cumulative {
			continue
		}
		for _, vt := range tb.PerVariable {
			for _, tt := range vt.Tests {
				if tt.Name == "lr" && vt.Predictor == "contact" && (tt.OK || !strings.Contains(tt.Reason, "cumulative/only-contact-parallel/logit: no_finite_maximum") || strings.Contains(tt.Reason, "partial")) {
					t.Errorf("LR test of contact: %+v", tt)
				}
			}
		}
	}
	if or.Chosen == nil {
		t.Fatalf("nothing chosen: %s", or.Choice)
	}
	// choose by AIC, margin 0: the smallest AIC among the survivors.
	best := math.Inf(1)
	for _, v := range or.Rules[2].Verdicts {
		f := or.Find(v.Model)
		best = math.Min(best, f.Result.AIC)
	}
	if or.Chosen.Result.AIC != best {
		t.Errorf("chosen AIC %v, best %v", or.Chosen.Result.AIC, best)
	}
}

// On the General Social Survey extract (Long 1997), the LR rule with
// against: next_less_constrained follows the chain parallel -> constrained
// -> partial -> nonparallel: the constrained model is rejected against the
// partial one (chi2(2) = 32.14), the parallel one kept against the
// constrained one (p = .108). Tested against the least constrained model
// (the default), the parallel model is rejected: chi2(12) = 49.20 against
// the nonparallel one.
func TestRuleRejectIfTestRejects(t *testing.T) {
	p := loadPlan(t, "gss_grid.yaml")
	r := runPlan(t, p, 0)
	or := r.Outcomes[0]
	ro := or.Rules[2]
	if v := verdictOf(ro, "cumulative/constrained/logit"); v == nil || v.Kept || !strings.Contains(v.Reason, "chi2(2) = 32.140") {
		t.Errorf("constrained: %+v", v)
	}
	if v := verdictOf(ro, "cumulative/parallel/logit"); v == nil || !v.Kept || !strings.Contains(v.Reason, "p = 0.108") {
		t.Errorf("parallel: %+v", v)
	}
	if !strings.Contains(ro.Description, "the next less constrained model") {
		t.Errorf("description: %s", ro.Description)
	}
	// The same plan against the least constrained model. The rules run
	// again over the same fits.
	p.Rules[2].Against = plan.AgainstLeast
	least := &OutcomeResult{Outcome: or.Outcome, Data: or.Data, FitData: or.FitData, Fits: or.Fits}
	applyRules(ResolvePlan(p), least)
	lr := least.Rules[2]
	if v := verdictOf(lr, "cumulative/parallel/logit"); v == nil || v.Kept || !strings.Contains(v.Reason, "likelihood-ratio test against cumulative/nonparallel/logit: chi2(12) = 49.203") {
		t.Errorf("parallel against the least constrained: %+v", v)
	}
	if !strings.Contains(lr.Description, "the least constrained model of its approach and link") {
		t.Errorf("description: %s", lr.Description)
	}
	if least.Chosen == nil || least.Chosen.Effects == fit.ParallelEffects {
		t.Errorf("chosen %v", least.Chosen)
	}
	if v := verdictOf(ro, "cumulative/nonparallel/logit"); v == nil || !v.Kept {
		t.Errorf("nonparallel: %+v", v)
	}
	// prefer_simpler: the chosen model has the fewest parameters among the
	// survivors within 2 BIC of the best.
	final := or.Rules[3]
	best := math.Inf(1)
	for _, v := range final.Verdicts {
		best = math.Min(best, or.Find(v.Model).Result.BIC)
	}
	for _, v := range final.Verdicts {
		f := or.Find(v.Model)
		if f.Result.BIC <= best+2 && f.Result.NParams < or.Chosen.Result.NParams {
			t.Errorf("%s is within the margin with fewer parameters than the chosen %s", f.ID, or.Chosen.ID)
		}
	}
}

// A data set whose category boundaries nearly cross makes the cumulative
// nonparallel fit predict negative probabilities; the rule rejects it.
func TestRuleRejectNegativeProbabilities(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(3, 3))
	var b strings.Builder
	b.WriteString("y,x\n")
	logistic := func(z float64) float64 { return 1 / (1 + math.Exp(-z)) }
	for i := 0; i < 600; i++ {
		x := -3 + 6*rng.Float64()
		p1 := logistic(0.2 + 2.5*x)
		p2 := math.Max(p1+0.02*(1-p1), logistic(0.6+0.3*x))
		u := rng.Float64()
		y := 3
		if u < p1 {
			y = 1
		} else if u < p2 {
			y = 2
		}
		b.WriteString(strconv.Itoa(y) + "," + strconv.FormatFloat(x, 'f', 4, 64) + "\n")
	}
	os.WriteFile(filepath.Join(dir, "cross.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: crossing
data: {file: cross.csv}
outcomes: [{column: y}]
predictors: [x]
models: {approaches: [cumulative, stage], effects: [parallel, nonparallel]}
tests: {parallel_lines: []}
rules:
  - reject_negative_probabilities: true
  - choose: {by: bic}
`
	p := planIn(t, dir, src)
	r := runPlan(t, p, 0)
	or := r.Outcomes[0]
	f := or.Find("cumulative/nonparallel/logit")
	if f.Result.NegativeRows == 0 {
		t.Fatalf("expected negative probabilities; status %s", f.Result.Status)
	}
	v := verdictOf(or.Rules[0], f.ID)
	if v == nil || v.Kept || !strings.Contains(v.Reason, "negative predicted category probability") {
		t.Errorf("verdict %+v", v)
	}
	// decisions.json carries the count the verdict's text gives.
	if v.Numbers["rows_negative_probability"] != float64(f.Result.NegativeRows) || v.Numbers["rows"] != 600 || !strings.HasPrefix(v.Reason, fmt.Sprintf("%d of 600 rows", f.Result.NegativeRows)) {
		t.Errorf("numbers %v, reason %q", v.Numbers, v.Reason)
	}
	if v := verdictOf(or.Rules[0], "cumulative/parallel/logit"); v == nil || !v.Kept || len(v.Numbers) != 2 || v.Numbers["rows_negative_probability"] != 0 {
		t.Errorf("parallel model: %+v", v)
	}
	if v := verdictOf(or.Rules[0], "stage/nonparallel/logit"); v == nil || !v.Kept || v.Numbers != nil {
		t.Errorf("stage model must be kept, with no count (its probabilities are never negative): %+v", v)
	}
}

// reject_if_sparse within a categorical predictor and within a column no
// predictor reads, on a small invented data set (fixed seed): counts are
// taken per level, the model where the categorical term is parallel is
// not limited by them, and a column outside the model is read from the
// file for the rows used.
func TestRuleSparseWithinColumns(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(5, 5))
	var b strings.Builder
	b.WriteString("y,x,g,site\n")
	for i := 0; i < 300; i++ {
		x := rng.NormFloat64()
		g := []string{"a", "b", "c"}[i%3]
		z := x + rng.NormFloat64()
		y := 1
		switch {
		case z > 0.8:
			y = 3
		case z > -0.8:
			y = 2
		}
		if g == "c" && y == 1 && rng.IntN(4) > 0 {
			y = 2 // few low outcomes at level c
		}
		site := []string{"north", "south"}[i%2]
		if i == 7 {
			site = "" // missing: its own label
		}
		fmt.Fprintf(&b, "%d,%.4f,%s,%s\n", y, x, g, site)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: sparse
data: {file: d.csv}
outcomes: [{column: y}]
categorical:
  g: {levels: [a, b, c]}
predictors: [x, g]
models: {approaches: [cumulative], effects: [parallel, partial], partial: {free: [g]}}
tests: {parallel_lines: []}
rules:
  - reject_if_sparse: {smallest_category: 12, within: g}
  - reject_if_sparse: {smallest_category: 30, within: site}
  - choose: {by: aic, otherwise: cumulative/parallel/logit}
`
	p := planIn(t, dir, src)
	or := runPlan(t, p, 0).Outcomes[0]
	// Count by hand.
	counts := map[string][]int{}
	site := map[string][]int{}
	for i, l := range strings.Split(strings.TrimSpace(b.String()), "\n")[1:] {
		f := strings.Split(l, ",")
		y, _ := strconv.Atoi(f[0])
		if counts[f[2]] == nil {
			counts[f[2]] = make([]int, 3)
		}
		counts[f[2]][y-1]++
		s := f[3]
		if s == "" {
			s = "(missing)"
		}
		if site[s] == nil {
			site[s] = make([]int, 3)
		}
		site[s][y-1]++
		_ = i
	}
	minOf := func(m map[string][]int) (string, int, int) {
		bestK, bestJ, best := "", 0, 1<<30
		keys := make([]string, 0, len(m))
		for k := range m {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			for j, c := range m[k] {
				if c < best {
					bestK, bestJ, best = k, j, c
				}
			}
		}
		return bestK, bestJ, best
	}
	gk, gj, gc := minOf(counts)
	if gk != "c" || gj != 0 || gc >= 12 {
		t.Fatalf("test data: smallest count %d at g = %s, category %d", gc, gk, gj+1)
	}
	v := verdictOf(or.Rules[0], "cumulative/partial/logit")
	want := fmt.Sprintf("smallest category count within the 3 values of g: %d (category 1 at g = c) < 12", gc)
	if v == nil || v.Kept || v.Reason != want {
		t.Errorf("partial: %+v, want %q", v, want)
	}
	if v := verdictOf(or.Rules[0], "cumulative/parallel/logit"); v == nil || !v.Kept || !strings.Contains(v.Reason, "the effect of g is the same in every equation") {
		t.Errorf("parallel: %+v", v)
	}
	sk, sj, sc := minOf(site)
	v = verdictOf(or.Rules[1], "cumulative/parallel/logit")
	want = fmt.Sprintf("smallest category count within the 3 values of site: %d (category %d at site = %s)", sc, sj+1, sk)
	if v == nil || !strings.HasPrefix(v.Reason, want) {
		t.Errorf("site: %+v, want %q", v, want)
	}
	// Every candidate rejected: the fallback is reported.
	if or.Chosen == nil || !or.Fallback || or.Chosen.ID != "cumulative/parallel/logit" {
		t.Errorf("chosen %v, fallback %v: %s", or.Chosen, or.Fallback, or.Choice)
	}
}

// The score test of a model against a less constrained one is made at the
// model's own fit, with only the other model's structure: a rule that
// names it tests the parallel model although the nonparallel one has no
// finite maximum. On the wine bitterness data (Randall 1989), whose
// nonparallel cumulative logit model has none, the reference value of
// testdata/reference/wine.tests.json (cumulative.global.score) is
// chi2(6) = 2.64359, p = 0.852065; the rule's verdict reads it, keeps the
// parallel model at alpha 0.05 and rejects it at alpha 0.9. Before, the
// model was kept untested at any alpha.
func TestScoreRuleWithoutFullFit(t *testing.T) {
	ref, err := filepath.Abs(filepath.Join("..", "testdata", "reference", "wine.csv"))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		alpha float64
		kept  bool
	}{{0.05, true}, {0.9, false}} {
		src := fmt.Sprintf(`version: 1
data: {file: %q}
outcomes: [{column: rating}]
predictors: [temp, contact]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [score]}
rules:
  - reject_unconverged: true
  - reject_if_test_rejects: {test: score, alpha: %g}
  - choose: {by: aic, otherwise: cumulative/parallel/logit}
`, ref, tc.alpha)
		r := runPlan(t, planIn(t, t.TempDir(), src), 0)
		or := r.Outcomes[0]
		if np := or.Find("cumulative/nonparallel/logit"); np == nil || np.OK() {
			t.Fatalf("the nonparallel model should have no finite maximum: %+v", np)
		}
		ro := or.Rules[1]
		v := verdictOf(ro, "cumulative/parallel/logit")
		if v == nil {
			t.Fatalf("alpha %g: no verdict on the parallel model", tc.alpha)
		}
		const want = 2.64358671337185
		if got := v.Numbers["chi2_against_cumulative_nonparallel_logit"]; math.Abs(got-want) > 1e-4*want || v.Numbers["df_against_cumulative_nonparallel_logit"] != 6 {
			t.Errorf("alpha %g: chi2 %v df %v, want %v on 6 (%s)", tc.alpha, got, v.Numbers["df_against_cumulative_nonparallel_logit"], want, v.Reason)
		}
		if p := v.Numbers["p_against_cumulative_nonparallel_logit"]; math.Abs(p-0.852064618231402) > 1e-4 {
			t.Errorf("alpha %g: p %v", tc.alpha, p)
		}
		if v.Kept != tc.kept {
			t.Errorf("alpha %g: kept %v, want %v: %s", tc.alpha, v.Kept, tc.kept, v.Reason)
		}
		if !strings.Contains(v.Reason, "cumulative/nonparallel/logit itself has no usable fit, status no_finite_maximum; the score test does not need it") {
			t.Errorf("alpha %g: the verdict should say the comparison model has no fit: %s", tc.alpha, v.Reason)
		}
		if !strings.Contains(ro.Description, "made also where the comparison model has no usable fit") || strings.Contains(ro.Description, "kept, untested") {
			t.Errorf("description: %s", ro.Description)
		}
	}
}
