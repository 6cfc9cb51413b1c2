package runner

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/refdata"
	"ordplan/plan"
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
  levels: [parallel, partial, constrained, nonparallel, stereotype]
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
	path := filepath.Join(dir, "p.yaml")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := plan.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return p
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
				t.Errorf("%s: cut-point %d %.8g, reference %.8g", id, m+1, res.Cutpoints[m], c)
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
		for name, se := range ref.SE {
			ours := name
			if strings.HasPrefix(name, "cut") {
				ours = res.ParamNames[int(name[3]-'1')]
			} else {
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

var _ = fit.Term{}
