package runner

import (
	"fmt"
	"strings"
	"testing"
)

// TestSourceEffectsInfiniteDerivative checks the note given instead of the
// average marginal effect of a column whose derivative is infinite at some
// rows (sqrt of a dose of 0): it counts those rows among all the rows used
// (counted here from the data), and the other columns keep their effects.
func TestSourceEffectsInfiniteDerivative(t *testing.T) {
	const plan = `version: 1
title: sqrt at 0
data: {file: trial.csv}
outcomes: [{column: relief, categories: [none, slight, moderate, complete]}]
categorical:
  treat: {levels: [placebo, drug]}
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
inference:
  marginal_effects: [average]
predictors:
  - treat
  - age
  - {name: doses, column: dose, sqrt: true}
`
	or := runPlan(t, writePlan(t, plan, map[string]string{"trial.csv": inventedTrial(300)}), 0).Outcomes[0]
	S, s := len(or.Design.Sources), -1
	for k, src := range or.Design.Sources {
		if src.Name == "dose" {
			s = k
		}
	}
	zeros := 0
	for i := 0; i < or.Data.N; i++ {
		if or.Data.X[i*S+s] == 0 {
			zeros++
		}
	}
	if zeros == 0 {
		t.Fatal("no dose of 0 in the data")
	}
	want := fmt.Sprintf("The effect of dose is not computed: its derivative is infinite at %d of the %d rows", zeros, or.Data.N)
	var notes []string
	got := map[string]bool{}
	for _, set := range or.Marginal {
		if set.Kind != "average" {
			continue
		}
		notes = set.Notes
		for _, me := range set.Effects {
			got[me.Predictor] = true
		}
	}
	if len(notes) != 1 || !strings.HasPrefix(notes[0], want) {
		t.Errorf("notes %q, want one starting %q", notes, want)
	}
	if !got["treat"] || !got["age"] || got["dose"] {
		t.Errorf("effects of %v, want treat and age, not dose", got)
	}
}
