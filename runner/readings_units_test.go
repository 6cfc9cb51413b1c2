package runner

import (
	"strconv"
	"strings"
	"testing"
)

// The dictionary's unit of a column is named where a slope is per unit of
// that column in its own units (a plain, centred or scaled column, and a
// product with one), and nowhere a unit of the term is not one of the
// column (log, sqrt, a basis column). A marginal effect is a derivative by
// the raw column, so its change is in the column's unit whatever the term.
func TestReadingsNameTheDictionaryUnit(t *testing.T) {
	const head = `version: 1
title: units
data: {file: trial.csv}
outcomes: [{column: relief, categories: [none, slight, moderate, complete]}]
categorical:
  treat: {levels: [placebo, drug]}
dictionary:
  treat: {label: Treatment}
  age: {unit: years}
  dose: {unit: mg}
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
inference:
  marginal_effects: [average]
predictors:
`
	files := map[string]string{"trial.csv": inventedTrial(300)}
	for _, c := range []struct {
		name, terms string
		want        map[string]string // design column: change
	}{
		{"plain and log", "  - treat\n  - age\n  - {name: dosel, column: dose, log: {shift: 1}}\n  - {interact: [treat, age]}\n",
			map[string]string{"age": "per unit of age (years)", "dosel": "per unit of log(dose + 1)",
				"treat.drug&age": "interaction: treat drug against placebo × per unit of age (years)"}},
		{"centred and sqrt", "  - treat\n  - {name: agec, column: age, centre: mean}\n  - {name: doses, column: dose, sqrt: true}\n",
			map[string]string{"agec": "per unit of age (years)", "doses": "per unit of sqrt(dose)"}},
		{"scaled and basis", "  - treat\n  - {name: agez, column: age, scale: sd}\n  - {name: dosep, column: dose, polynomial: {degree: 2}}\n",
			map[string]string{"agez": "per SD (SD) of age (years)", "dosep.1": "column 1 of the basis in dose"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			or := runPlan(t, writePlan(t, head+c.terms, files), 0).Outcomes[0]
			got := map[string]string{}
			for _, r := range or.ColumnReadings() {
				got[r.Column] = r.Change
			}
			for col, want := range c.want {
				if strings.Contains(want, "(SD)") {
					k := or.Design.Term(col)
					want = strings.Replace(want, "(SD)", "("+strconv.FormatFloat(or.Design.Terms[k].SD, 'g', 6, 64)+")", 1)
				}
				if got[col] != want {
					t.Errorf("%s reads %q, want %q", col, got[col], want)
				}
			}
			want := map[string]string{"age": "per unit (years)", "dose": "per unit (mg)"}
			n := 0
			for _, set := range or.Marginal {
				for _, me := range set.Effects {
					if w, ok := want[me.Predictor]; ok {
						n++
						if me.Change != w {
							t.Errorf("marginal effect of %s: change %q, want %q", me.Predictor, me.Change, w)
						}
					}
				}
			}
			if n == 0 {
				t.Error("no marginal effect of age or dose")
			}
		})
	}
}
