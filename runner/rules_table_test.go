package runner

// Table tests of each rule kind over hand-made results: no model is fitted.
// The fits carry only the numbers the rules read (status, parameters,
// criteria, condition, starts); tests, predicted probabilities, TIC and
// column values come from tables.

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// handFit is one hand-made candidate.
type handFit struct {
	id       string // approach/effects/link
	status   fit.Status
	nparams  int
	aic, bic float64
	cond     float64
	starts   int // constrained search: starts tried (0: none)
	agree    int // starts reaching the best value
	effects  []fit.Effect
}

// handOutcome builds an outcome result over a data set of the given
// categories (y, one per row) and predictor x.
func handOutcome(fits []handFit, y []int, x []float64) *OutcomeResult {
	categories := []string{"low", "mid", "high"}
	ds := &data.Dataset{Outcome: "y", Categories: categories, Y: y, Predictors: []string{"x"}, X: x, N: len(y), K: 1}
	for i := range y {
		ds.Lines = append(ds.Lines, i+2)
	}
	spec := design.Spec{Sources: []design.Source{{Name: "x"}}, Terms: []design.TermSpec{{Name: "x", Source: "x"}}}
	dz, fd, err := buildDesign(spec, ds)
	if err != nil {
		panic(err)
	}
	or := &OutcomeResult{Outcome: plan.Outcome{Column: "y"}, Data: ds, FitData: fd, Design: dz}
	for _, h := range fits {
		aw, ew, lw, _ := plan.ParseModelID(h.id)
		a, _ := fit.ComparisonWords.Parse(aw)
		e, _ := fit.StructureWords.Parse(ew)
		l, _ := fit.LinkWords.Parse(lw)
		res := &fit.Result{Name: h.id, Status: h.status, NParams: h.nparams, AIC: h.aic, BIC: h.bic, LogLik: -h.aic/2 + float64(h.nparams),
			Condition: h.cond, NRows: len(y), NObs: float64(len(y)), Predictors: []string{"x"}, J: 3, StartsAgreeing: h.agree}
		if h.status == "" {
			res.Status = fit.StatusOK
		}
		if !res.OK() {
			res.LogLik, res.AIC, res.BIC = math.NaN(), math.NaN(), math.NaN()
		}
		res.Model.Effects = h.effects
		for i := 0; i < h.starts; i++ {
			res.Starts = append(res.Starts, fit.StartRecord{})
		}
		or.Fits = append(or.Fits, &FitEntry{ID: h.id, Approach: a, Effects: e, Link: l, Result: res})
	}
	return or
}

// handPlan parses a plan whose rules are given; models lists the effects.
func handPlan(t *testing.T, effects, rules string) *plan.Plan {
	t.Helper()
	src := fmt.Sprintf("version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [x, z]\nmodels:\n  approaches: [cumulative]\n  effects: %s\n  partial: {free: [x]}\nrules:\n%s", effects, rules)
	if !strings.Contains(effects, "partial") && !strings.Contains(effects, "constrained") {
		src = strings.Replace(src, "  partial: {free: [x]}\n", "", 1)
	}
	p, err := plan.Parse([]byte(src), "hand.yaml")
	if err != nil {
		t.Fatalf("%v\n%s", err, src)
	}
	return p
}

// verdicts gives "model: kept|rejected: reason" for every verdict of rule i.
func verdictLines(or *OutcomeResult, i int) []string {
	var out []string
	for _, v := range or.Rules[i].Verdicts {
		k := "rejected"
		if v.Kept {
			k = "kept"
		}
		out = append(out, v.Model+": "+k+": "+v.Reason)
	}
	return out
}

func wantLines(t *testing.T, got, want []string) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("got %d verdicts, want %d:\n%s", len(got), len(want), strings.Join(got, "\n"))
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("verdict %d:\n got  %s\n want %s", i, got[i], want[i])
		}
	}
}

var (
	par = fit.Parallel
	np  = fit.Nonparallel
)

func threeFits() []handFit {
	return []handFit{
		{id: "cumulative/parallel/logit", nparams: 3, aic: 100, bic: 110, cond: 40, effects: []fit.Effect{par, par}},
		{id: "cumulative/partial/logit", nparams: 4, aic: 99, bic: 112, cond: 900, effects: []fit.Effect{np, par}},
		{id: "cumulative/nonparallel/logit", nparams: 5, aic: 97, bic: 113.5, cond: 2e7, effects: []fit.Effect{np, np}},
	}
}

func TestTableTestRule(t *testing.T) {
	// p-values of the hand-made tests, by pair; 0.05 exactly is a tie
	// with alpha: not below it, so the model is kept.
	tests := map[string]fit.Test{
		"parallel|partial":     {Name: "lr", OK: true, Chi2: 1.2, DF: 1, P: 0.27332},
		"parallel|nonparallel": {Name: "lr", OK: true, Chi2: 14.5, DF: 2, P: 0.000710174},
		"partial|nonparallel":  {Name: "lr", OK: true, Chi2: 3.841459, DF: 1, P: 0.05},
	}
	cases := []struct {
		name    string
		against string
		fits    []handFit
		want    []string
		pre     string // rules before the test rule
	}{
		{name: "least constrained", against: "least_constrained", fits: threeFits(), want: []string{
			"cumulative/parallel/logit: rejected: likelihood-ratio test against cumulative/nonparallel/logit: chi2(2) = 14.500, p = 0.0007 < alpha 0.05",
			"cumulative/partial/logit: kept: likelihood-ratio test against cumulative/nonparallel/logit: chi2(1) = 3.841, p = 0.0500 (exactly 0.05) >= alpha 0.05",
			"cumulative/nonparallel/logit: kept: no less constrained model of this approach and link in the grid",
		}},
		{name: "next less constrained", against: "next_less_constrained", fits: threeFits(), want: []string{
			"cumulative/parallel/logit: kept: likelihood-ratio test against cumulative/partial/logit: chi2(1) = 1.200, p = 0.2733 >= alpha 0.05",
			"cumulative/partial/logit: kept: likelihood-ratio test against cumulative/nonparallel/logit: chi2(1) = 3.841, p = 0.0500 (exactly 0.05) >= alpha 0.05",
			"cumulative/nonparallel/logit: kept: no less constrained model of this approach and link in the grid",
		}},
		{name: "each less constrained", against: "each_less_constrained", fits: threeFits(), want: []string{
			"cumulative/parallel/logit: rejected: likelihood-ratio test against cumulative/partial/logit: chi2(1) = 1.200, p = 0.2733 >= alpha 0.05; likelihood-ratio test against cumulative/nonparallel/logit: chi2(2) = 14.500, p = 0.0007 < alpha 0.05",
			"cumulative/partial/logit: kept: likelihood-ratio test against cumulative/nonparallel/logit: chi2(1) = 3.841, p = 0.0500 (exactly 0.05) >= alpha 0.05",
			"cumulative/nonparallel/logit: kept: no less constrained model of this approach and link in the grid",
		}},
		{name: "comparison model without a fit", against: "least_constrained", fits: func() []handFit {
			f := threeFits()
			f[2].status = fit.StatusNoFiniteMaximum
			return f
		}(), want: []string{
			"cumulative/parallel/logit: kept: not tested against cumulative/nonparallel/logit: it has no usable fit (status no_finite_maximum)",
			"cumulative/partial/logit: kept: not tested against cumulative/nonparallel/logit: it has no usable fit (status no_finite_maximum)",
			"cumulative/nonparallel/logit: kept: not judged: status no_finite_maximum, no usable estimates (an earlier reject_unconverged rule would reject it)",
		}},
		// The comparison is the grid's model, whether or not an earlier
		// rule rejected it; the verdict says so.
		{name: "comparison model rejected by an earlier rule", against: "least_constrained", pre: "  - reject_if_sparse: {per_parameter: 0.7}\n", fits: threeFits(), want: []string{
			"cumulative/parallel/logit: rejected: likelihood-ratio test against cumulative/nonparallel/logit: chi2(2) = 14.500, p = 0.0007 < alpha 0.05 (cumulative/nonparallel/logit was itself rejected by rule 1, reject_if_sparse; the test uses its fit all the same)",
			"cumulative/partial/logit: kept: likelihood-ratio test against cumulative/nonparallel/logit: chi2(1) = 3.841, p = 0.0500 (exactly 0.05) >= alpha 0.05 (cumulative/nonparallel/logit was itself rejected by rule 1, reject_if_sparse; the test uses its fit all the same)",
		}},
		// A test that cannot be computed rejects nothing.
		{name: "test not computable", against: "each_less_constrained", fits: func() []handFit {
			f := threeFits()
			f[1].id = "cumulative/constrained/logit"
			return f
		}(), want: []string{
			"cumulative/parallel/logit: rejected: the likelihood-ratio test against cumulative/constrained/logit cannot be computed (a model does not have more parameters than the other); likelihood-ratio test against cumulative/nonparallel/logit: chi2(2) = 14.500, p = 0.0007 < alpha 0.05",
			"cumulative/constrained/logit: kept: the likelihood-ratio test against cumulative/nonparallel/logit cannot be computed (a model does not have more parameters than the other)",
			"cumulative/nonparallel/logit: kept: no less constrained model of this approach and link in the grid",
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := handPlan(t, "[parallel, partial, nonparallel]", c.pre+fmt.Sprintf("  - reject_if_test_rejects: {test: lr, alpha: 0.05, against: %s}\n  - choose: {by: aic}\n", c.against))
			or := handOutcome(c.fits, []int{0, 1, 2}, []float64{0, 1, 2})
			env := newRuleEnv(ResolvePlan(p), or)
			env.test = func(kind fit.TestKind, f, full *FitEntry) fit.Test {
				if t, ok := tests[f.Effects.String()+"|"+full.Effects.String()]; ok {
					return t
				}
				return fit.Test{Name: "lr", Reason: "a model does not have more parameters than the other"}
			}
			env.apply()
			wantLines(t, verdictLines(or, len(or.Rules)-2), c.want)
			// decisions.json carries the same numbers unrounded.
			if c.name == "least constrained" {
				got := or.Rules[0].Verdicts[0].Numbers
				want := map[string]float64{"chi2_against_cumulative_nonparallel_logit": 14.5, "df_against_cumulative_nonparallel_logit": 2,
					"p_against_cumulative_nonparallel_logit": 0.000710174, "alpha": 0.05}
				if len(got) != len(want) {
					t.Errorf("numbers %v", got)
				}
				for k, w := range want {
					if got[k] != w {
						t.Errorf("numbers[%q] = %v, want %v", k, got[k], w)
					}
				}
			}
		})
	}
}

func TestTableChoose(t *testing.T) {
	cases := []struct {
		name, rule string
		fits       []handFit
		pre        string // a rejecting rule before the final one
		chosen     string
		fallback   bool
		want       []string
		choice     string
	}{
		{name: "smallest AIC", rule: "choose: {by: aic}", fits: threeFits(), chosen: "cumulative/nonparallel/logit", want: []string{
			"cumulative/parallel/logit: rejected: AIC 100.000 is 3.000 above the smallest (margin 0)",
			"cumulative/partial/logit: rejected: AIC 99.000 is 2.000 above the smallest (margin 0)",
			"cumulative/nonparallel/logit: kept: chosen: AIC 97.000 (smallest 97.000), 5 parameters",
		}},
		{name: "margin tie: fewer parameters win", rule: "prefer_simpler: {by: aic, margin: 3}", fits: threeFits(), chosen: "cumulative/parallel/logit", want: []string{
			"cumulative/parallel/logit: kept: chosen: AIC 100.000 (smallest 97.000), 3 parameters; 3 models within the margin 3, this one has the fewest parameters",
			"cumulative/partial/logit: rejected: within the margin (AIC 99.000, +2.000) but 4 parameters, more than 3",
			"cumulative/nonparallel/logit: rejected: within the margin (AIC 97.000, +0.000) but 5 parameters, more than 3",
		}},
		{name: "exact tie in criterion and parameters: grid order", rule: "choose: {by: bic}", fits: []handFit{
			{id: "cumulative/parallel/logit", nparams: 3, aic: 100, bic: 110},
			{id: "cumulative/partial/logit", nparams: 3, aic: 100, bic: 110},
		}, chosen: "cumulative/parallel/logit", want: []string{
			"cumulative/parallel/logit: kept: chosen: BIC 110.000 (smallest 110.000), 3 parameters; 2 models within the margin 0, this one has the fewest parameters (as 1 other has) and the same BIC, and comes first in the plan's grid",
			"cumulative/partial/logit: rejected: within the margin (BIC 110.000, +0.000) but 3 parameters and the same BIC as cumulative/parallel/logit, which comes first in the plan's grid",
		}},
		{name: "all rejected: stop", rule: "choose: {by: bic}", pre: "  - reject_unconverged: true\n", fits: []handFit{
			{id: "cumulative/parallel/logit", status: fit.StatusNotConverged, nparams: 3},
			{id: "cumulative/partial/logit", status: fit.StatusNoFiniteMaximum, nparams: 4},
		}, choice: "no model chosen: every candidate was rejected, and the plan says to stop (otherwise: stop)"},
		{name: "all rejected: fallback", rule: "choose: {by: bic, otherwise: cumulative/parallel/logit}", pre: "  - reject_if_unstable: {max_condition: 10}\n",
			fits: threeFits(), chosen: "cumulative/parallel/logit", fallback: true, want: []string{
				"cumulative/parallel/logit: kept: fallback: every candidate was rejected, so the plan's fallback model is reported (3 parameters, log-likelihood -47.000); it was rejected by reject_if_unstable (rule at line 10): information condition 40 > 10",
			}},
		{name: "all rejected: fallback without a fit", rule: "choose: {by: bic, otherwise: cumulative/nonparallel/logit}", pre: "  - reject_unconverged: true\n",
			fits: []handFit{
				{id: "cumulative/parallel/logit", status: fit.StatusNotConverged, nparams: 3},
				{id: "cumulative/nonparallel/logit", status: fit.StatusNoFiniteMaximum, nparams: 5},
			}, choice: "no model chosen: every candidate was rejected, and the plan's fallback cumulative/nonparallel/logit has no usable fit (status no_finite_maximum)"},
		// partial is exactly at the margin (1.5 above the smallest): tied.
		{name: "TIC", rule: "choose: {by: tic, margin: 1.5}", fits: threeFits(), chosen: "cumulative/partial/logit", want: []string{
			"cumulative/parallel/logit: rejected: TIC 101.500 is 2.000 above the smallest (margin 1.5); TIC = -2 log-likelihood + 2 x penalty, penalty tr(A^-1 B) = 3.750 for 3 parameters",
			"cumulative/partial/logit: kept: chosen: TIC 101.000 (smallest 99.500), 4 parameters; 2 models within the margin 1.5, this one has the fewest parameters; TIC = -2 log-likelihood + 2 x penalty, penalty tr(A^-1 B) = 5.000 for 4 parameters",
			"cumulative/nonparallel/logit: rejected: within the margin (TIC 99.500, +0.000) but 5 parameters, more than 4; TIC = -2 log-likelihood + 2 x penalty, penalty tr(A^-1 B) = 6.250 for 5 parameters",
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := handPlan(t, "[parallel, partial, nonparallel]", c.pre+"  - "+c.rule+"\n")
			or := handOutcome(c.fits, []int{0, 1, 2}, []float64{0, 1, 2})
			env := newRuleEnv(ResolvePlan(p), or)
			env.tic = func(f *FitEntry) (float64, float64, error) {
				pen := 1.25 * float64(f.Result.NParams)
				if f.Result.NParams == 3 {
					pen = 3.75
				}
				return -2*f.Result.LogLik + 2*pen, pen, nil
			}
			env.apply()
			last := len(or.Rules) - 1
			if c.want != nil {
				wantLines(t, verdictLines(or, last), c.want)
			}
			switch {
			case c.chosen == "" && or.Chosen != nil:
				t.Errorf("chose %s", or.Chosen.ID)
			case c.chosen != "" && (or.Chosen == nil || or.Chosen.ID != c.chosen):
				t.Errorf("chose %v, want %s (%s)", or.Chosen, c.chosen, or.Choice)
			}
			if or.Fallback != c.fallback {
				t.Errorf("fallback %v", or.Fallback)
			}
			if c.choice != "" && or.Choice != c.choice {
				t.Errorf("choice %q", or.Choice)
			}
			if c.chosen == "" {
				dec := BuildDecisions(&Result{Plan: p, Outcomes: []*OutcomeResult{or}})
				if dec.Outcomes[0].Chosen != nil || !strings.HasPrefix(dec.Outcomes[0].Choice, "no model chosen") {
					t.Errorf("decisions: %+v", dec.Outcomes[0])
				}
			}
		})
	}
}

func TestTableSimplerIsClose(t *testing.T) {
	// Probabilities per model at the three rows (low, mid, high).
	probs := map[string][]float64{
		"parallel":    {0.5, 0.3, 0.2, 0.4, 0.4, 0.2, 0.2, 0.3, 0.5},
		"partial":     {0.51, 0.29, 0.2, 0.4, 0.41, 0.19, 0.2, 0.3, 0.5}, // largest difference 0.01
		"nonparallel": {0.5, 0.3, 0.2, 0.4, 0.4, 0.2, 0.23, 0.3, 0.47},   // 0.03 from parallel, 0.03 from partial
	}
	// A chain: partial within 0.02 of parallel, nonparallel within 0.03 of
	// partial but 0.05 from parallel. At 0.04 partial is rejected, so
	// nonparallel is compared with parallel alone: a simpler model this
	// rule rejects does not make a less constrained one unnecessary (the
	// model left, parallel, differs from it by more than the amount).
	chain := map[string][]float64{
		"parallel":    {0.5, 0.3, 0.2, 0.4, 0.4, 0.2, 0.2, 0.3, 0.5},
		"partial":     {0.52, 0.28, 0.2, 0.4, 0.4, 0.2, 0.2, 0.3, 0.5},
		"nonparallel": {0.55, 0.25, 0.2, 0.4, 0.4, 0.2, 0.2, 0.3, 0.5},
	}
	cases := []struct {
		name, rule string
		want       []string
		probs      map[string][]float64 // nil: probs
		grid       string               // the plan's effects (default parallel, partial, nonparallel)
	}{
		{name: "chain", rule: "{max_difference: 0.04}", probs: chain, want: []string{
			"cumulative/parallel/logit: kept: no simpler model of this approach and link is still kept",
			"cumulative/partial/logit: rejected: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 rows used: 0.02 (category low at the row on line 2 of the data file) < 0.04, the simpler model suffices",
			"cumulative/nonparallel/logit: kept: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 rows used: 0.05 (category low at the row on line 2 of the data file) >= 0.04",
		}},
		// The plan may list the effects in any order: simpler models are
		// still judged first, and the verdicts keep the grid's order.
		{name: "chain, grid listed from the least constrained", rule: "{max_difference: 0.04}", probs: chain, grid: "[nonparallel, partial, parallel]", want: []string{
			"cumulative/nonparallel/logit: kept: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 rows used: 0.05 (category low at the row on line 2 of the data file) >= 0.04",
			"cumulative/partial/logit: rejected: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 rows used: 0.02 (category low at the row on line 2 of the data file) < 0.04, the simpler model suffices",
			"cumulative/parallel/logit: kept: no simpler model of this approach and link is still kept",
		}},
		{name: "rows", rule: "{max_difference: 0.02}", want: []string{
			"cumulative/parallel/logit: kept: no simpler model of this approach and link is still kept",
			"cumulative/partial/logit: rejected: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 rows used: 0.01 (category low at the row on line 2 of the data file) < 0.02, the simpler model suffices",
			"cumulative/nonparallel/logit: kept: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 rows used: 0.03 (category high at the row on line 4 of the data file) >= 0.02",
		}},
		// 0.03 exactly is not below 0.03: the less constrained model stays.
		{name: "tie at the amount", rule: "{max_difference: 0.03}", want: []string{
			"cumulative/parallel/logit: kept: no simpler model of this approach and link is still kept",
			"cumulative/partial/logit: rejected: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 rows used: 0.01 (category low at the row on line 2 of the data file) < 0.03, the simpler model suffices",
			"cumulative/nonparallel/logit: kept: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 rows used: 0.03 (category high at the row on line 4 of the data file) >= 0.03",
		}},
		// partial, rejected by this rule, is not a simpler model that
		// nonparallel is compared with.
		{name: "grid", rule: "{max_difference: 0.05, grid: {x: [0, 1, 2]}}", want: []string{
			"cumulative/parallel/logit: kept: no simpler model of this approach and link is still kept",
			"cumulative/partial/logit: rejected: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 grid points: 0.01 (category low at x = 0) < 0.05, the simpler model suffices",
			"cumulative/nonparallel/logit: rejected: largest difference from cumulative/parallel/logit in a predicted category probability over the 3 grid points: 0.03 (category high at x = 2) < 0.05, the simpler model suffices",
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			grid, pr := "[parallel, partial, nonparallel]", probs
			if c.grid != "" {
				grid = c.grid
			}
			if c.probs != nil {
				pr = c.probs
			}
			p := handPlan(t, grid, "  - reject_if_simpler_is_close: "+c.rule+"\n  - choose: {by: aic}\n")
			fits := threeFits()
			if c.grid != "" {
				slices.Reverse(fits)
			}
			or := handOutcome(fits, []int{0, 1, 2}, []float64{0, 1, 2})
			env := newRuleEnv(ResolvePlan(p), or)
			env.probs = func(f *FitEntry, X, off []float64) ([]float64, error) {
				if len(X) != 3 || X[0] != 0 || X[1] != 1 || X[2] != 2 {
					return nil, fmt.Errorf("unexpected points %v", X)
				}
				return pr[f.Effects.String()], nil
			}
			env.apply()
			wantLines(t, verdictLines(or, 0), c.want)
		})
	}
}

func TestTableSparse(t *testing.T) {
	// 12 rows: low 2, mid 4, high 6; within g: a has (low 2, mid 1, high 3),
	// b has (low 0, mid 3, high 3).
	y := []int{0, 0, 1, 2, 2, 2, 1, 1, 1, 2, 2, 2}
	g := []string{"a", "a", "a", "a", "a", "a", "b", "b", "b", "b", "b", "b"}
	x := make([]float64, 12)
	cases := []struct {
		name, rule string
		want       []string
	}{
		{"per parameter", "{per_parameter: 3}", []string{
			"cumulative/parallel/logit: kept: 12 observations for 3 parameters: 4 per parameter >= 3",
			"cumulative/partial/logit: kept: 12 observations for 4 parameters: 3 per parameter >= 3",
			"cumulative/nonparallel/logit: rejected: 12 observations for 5 parameters: 2.4 per parameter < 3",
		}},
		{"smallest category", "{smallest_category: 3}", []string{
			"cumulative/parallel/logit: rejected: smallest category count 2 (category low) < 3",
			"cumulative/partial/logit: rejected: smallest category count 2 (category low) < 3",
			"cumulative/nonparallel/logit: rejected: smallest category count 2 (category low) < 3",
		}},
		{"within a column", "{smallest_category: 1, within: g}", []string{
			"cumulative/parallel/logit: rejected: smallest category count within the 2 values of g: 0 (category low at g = b) < 1",
			"cumulative/partial/logit: rejected: smallest category count within the 2 values of g: 0 (category low at g = b) < 1",
			"cumulative/nonparallel/logit: rejected: smallest category count within the 2 values of g: 0 (category low at g = b) < 1",
		}},
		{"within a predictor: only varying effects", "{smallest_category: 1, within: x}", []string{
			"cumulative/parallel/logit: kept: the effect of x is the same in every equation of this model, so counts within its values do not limit it",
			"cumulative/partial/logit: rejected: smallest category count within the 2 values of x: 0 (category low at x = b) < 1",
			"cumulative/nonparallel/logit: rejected: smallest category count within the 2 values of x: 0 (category low at x = b) < 1",
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := handPlan(t, "[parallel, partial, nonparallel]", "  - reject_if_sparse: "+c.rule+"\n  - choose: {by: aic, otherwise: cumulative/parallel/logit}\n")
			or := handOutcome(threeFits(), y, x)
			env := newRuleEnv(ResolvePlan(p), or)
			env.labels = func(col string) ([]string, error) { return g, nil }
			env.apply()
			wantLines(t, verdictLines(or, 0), c.want)
		})
	}
}

func TestTableUnstable(t *testing.T) {
	fits := []handFit{
		{id: "cumulative/parallel/logit", nparams: 3, aic: 100, bic: 110, cond: 40},
		{id: "cumulative/constrained/logit", nparams: 4, aic: 99, bic: 112, cond: 1e4, starts: 6, agree: 1},
		{id: "cumulative/nonparallel/logit", nparams: 5, aic: 97, bic: 113.5, cond: 2e7},
	}
	cases := []struct {
		name, rule string
		want       []string
	}{
		{"condition", "{max_condition: 1e6}", []string{
			"cumulative/parallel/logit: kept: information condition 40 <= 1e+06",
			"cumulative/constrained/logit: kept: information condition 10000 <= 1e+06",
			"cumulative/nonparallel/logit: rejected: information condition 2.0000e+07 > 1e+06",
		}},
		{"starts", "{min_starts_agreeing: 2}", []string{
			"cumulative/parallel/logit: kept: one search (no constrained effects), so no starts to agree",
			"cumulative/constrained/logit: rejected: best value reached from 1 of 6 starts < 2",
			"cumulative/nonparallel/logit: kept: one search (no constrained effects), so no starts to agree",
		}},
		{"condition at the bound", "{max_condition: 1e4, min_starts_agreeing: 1}", []string{
			"cumulative/parallel/logit: kept: information condition 40 <= 10000; one search (no constrained effects), so no starts to agree",
			"cumulative/constrained/logit: kept: information condition 10000 <= 10000; best value reached from 1 of 6 starts >= 1",
			"cumulative/nonparallel/logit: rejected: information condition 2.0000e+07 > 10000; one search (no constrained effects), so no starts to agree",
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := handPlan(t, "[parallel, constrained, nonparallel]", "  - reject_if_unstable: "+c.rule+"\n  - choose: {by: aic}\n")
			or := handOutcome(fits, []int{0, 1, 2}, []float64{0, 1, 2})
			newRuleEnv(ResolvePlan(p), or).apply()
			wantLines(t, verdictLines(or, 0), c.want)
		})
	}
}

// A likelihood-ratio statistic clearly below zero rejects nothing and is
// said to have no p-value, in the verdict and in decisions.json (p null,
// negative true), never p = 1.
func TestTableTestRuleNegativeStatistic(t *testing.T) {
	small := &fit.Result{Name: "cumulative/parallel/logit", Status: fit.StatusOK, NParams: 3, LogLik: -50}
	large := &fit.Result{Name: "cumulative/nonparallel/logit", Status: fit.StatusOK, NParams: 5, LogLik: -52.5}
	neg := fit.LRTest(small, large)
	p := handPlan(t, "[parallel, nonparallel]", "  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n  - choose: {by: aic}\n")
	or := handOutcome([]handFit{threeFits()[0], threeFits()[2]}, []int{0, 1, 2}, []float64{0, 1, 2})
	env := newRuleEnv(ResolvePlan(p), or)
	env.test = func(kind fit.TestKind, f, full *FitEntry) fit.Test { return neg }
	env.apply()
	wantLines(t, verdictLines(or, 0), []string{
		"cumulative/parallel/logit: kept: the likelihood-ratio test against cumulative/nonparallel/logit: the statistic is negative (-5): the log-likelihood of cumulative/nonparallel/logit (-52.500000) is below that of cumulative/parallel/logit (-50.000000), which it should nest, by more than the fits' convergence tolerance allows (6.3e-07), so a fit did not reach its maximum or the models are not nested; no p-value",
		"cumulative/nonparallel/logit: kept: no less constrained model of this approach and link in the grid",
	})
	b, err := MarshalStable(neg)
	if err != nil || !strings.Contains(string(b), `"ok": false`) || !strings.Contains(string(b), `"negative": true`) || !strings.Contains(string(b), `"chi2": -5`) || !strings.Contains(string(b), `"p": null`) {
		t.Errorf("decisions.json's test: %v\n%s", err, b)
	}
}
