package render

import (
	"testing"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// The paragraph above the marginal effects quotes the changes its rows
// name, units from the data dictionary included, so that it reads as the
// rows do: "per unit (years)" where a row says it, not "per unit".
func TestMarginalChangeWords(t *testing.T) {
	set := runner.MarginalSet{Kind: "average", Effects: []fit.MarginalEffect{
		{Predictor: "sex12", Discrete: true, Change: "1 to 2"},
		{Predictor: "female", Discrete: true, Change: "0 to 1"},
		{Predictor: "female", Discrete: true, Change: "0 to 1"},
		{Predictor: "age", Change: "per unit (years)"},
		{Predictor: "dose", Change: "per unit (mg|kg)"},
		{Predictor: "z", Change: "per unit"},
		{Predictor: "old", Discrete: true}, // a record without its change
	}}
	or := &runner.OutcomeResult{}
	if got, want := changeWords(or, set, true), `"1 to 2" or "0 to 1"`; got != want {
		t.Errorf("two values: %s, want %s", got, want)
	}
	if got, want := changeWords(or, set, false), `"per unit (years)", "per unit (mg\|kg)" or "per unit"`; got != want {
		t.Errorf("per unit: %s, want %s", got, want)
	}
	if got, want := changeWords(or, runner.MarginalSet{}, false), `"per unit"`; got != want {
		t.Errorf("no rows: %s, want %s", got, want)
	}
}
