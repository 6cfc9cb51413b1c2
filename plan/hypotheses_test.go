package plan

import (
	"strings"
	"testing"
)

// A plan like a registered migraine study: a categorical dose of four
// levels, its interaction with a 0/1 column, four categories.
const hypothesisPlan = `version: 1
data: {file: m.csv}
outcomes:
  - column: relief
    categories: [none, slight, moderate, complete]
categorical:
  dose: {levels: [placebo, low, mid, high]}
predictors: [dose, female, {interact: [dose, female]}]
models:
  approaches: [cumulative]
  effects: [parallel, partial]
  partial: {free: [dose]}
rules:
  - choose: {by: aic}
inference:
  multiplicity: holm
  hypotheses:
`

// Each name of a hypothesis is a parameter some candidate model can have,
// or the plan is refused at the hypothesis with the nearest valid names;
// a parameter some candidates have and others not passes.
func TestHypothesisNamesNoModelHas(t *testing.T) {
	good := []string{"dose = 0", "dose&female = 0", "dose.high = dose.mid", "dose.high[3] = dose.high[1]", "tau[3] = 0", "female = 0; dose.low = 0"}
	for _, h := range good {
		if _, err := Parse([]byte(hypothesisPlan+"    - \""+h+"\"\n"), "h.yaml"); err != nil {
			t.Errorf("%q refused: %v", h, err)
		}
	}
	for _, c := range []struct{ h, want string }{
		{"dose.hgh = dose.mid", `h.yaml:18:7: inference.hypotheses[0]: "dose.hgh = dose.mid": "dose.hgh" is a parameter of no candidate model`},
		{"dos = 0", `did you mean "dose"?`},
		{"dose.high[4] = 0", `"dose.high[4]" names boundary 4, and no outcome has that many boundaries (relief has 3 between its 4 categories); nearest valid names: "dose.high[1]", "dose.high[2]", "dose.high[3]"`},
		{"tau[5] = 0", `"tau[5]" names boundary 5`},
		// female is never freed: parallel and partial models give it one slope.
		{"female[2] = 0", `"female[2]" names a parameter of boundary 2, and no candidate model has one parameter per boundary for "female" (models.effects: parallel, partial; models.partial.free: dose): its one parameter is "female"`},
		// the free columns have no single slope in the partial model, and the parallel one has it.
		{"dose = female", `"dose" is a term of 3 columns (dose.low, dose.mid, dose.high), not a parameter: a hypothesis tests it as a whole only as "dose = 0"`},
		{"phi[2] = 1", `no candidate model has "phi"`},
		{"dose.high[0] = 0", `the boundary in brackets is a whole number from 1`},
	} {
		_, err := Parse([]byte(hypothesisPlan+"    - \""+c.h+"\"\n"), "h.yaml")
		if err == nil || !strings.Contains(err.Error(), c.want) || strings.Count(err.Error(), "\n") > 0 {
			t.Errorf("%q: got %v\nwant %s", c.h, err, c.want)
		}
	}
	// Without declared categories the boundaries are the data's: the plan
	// alone accepts any boundary (the data's check judges it).
	open := strings.Replace(hypothesisPlan, "    categories: [none, slight, moderate, complete]\n", "", 1)
	if _, err := Parse([]byte(open+"    - \"tau[9] = 0\"\n"), "h.yaml"); err != nil {
		t.Errorf("boundaries unknown: %v", err)
	}
	// Against scopes with fewer boundaries (the data's), it is refused.
	p, err := Parse([]byte(open+"    - \"tau[9] = 0\"\n    - \"dose = 0\"\n"), "h.yaml")
	if err != nil {
		t.Fatal(err)
	}
	errs := p.HypothesisErrors([]ParameterScope{{Outcome: "relief", Terms: []string{"dose"}, Columns: [][]string{{"dose.low", "dose.mid", "dose.high"}}, Boundaries: 2}})
	if len(errs) != 1 || errs[0].Key != "inference.hypotheses[0]" || !strings.Contains(errs[0].Msg, `"tau[9]" names boundary 9, and no outcome has that many boundaries (relief has 2 between its 3 categories)`) {
		t.Errorf("with the data's scope: %v", errs)
	}
}
