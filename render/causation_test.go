package render

import (
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/design"
)

// The limits read causes only where the plan says a predictor was assigned
// by chance (dictionary: assigned_by_chance): without one, association for
// every predictor; with one, a causal reading of its comparison under the
// trial's conditions, association for the others, and an interaction with
// it read as for whom, not as what the other predictor causes.
func TestCausationSentence(t *testing.T) {
	p := &plan.Plan{Terms: []design.TermSpec{{Name: "arm", Source: "arm"}, {Name: "age", Source: "age"}}}
	if s := causationSentence(p); !strings.Contains(s, "They do not show that a predictor causes a change in the outcome") {
		t.Errorf("no predictor assigned by chance: %s", s)
	}
	p.Dictionary = []plan.Entry{{Column: "arm", ByChance: true}, {Column: "age"}}
	s := causationSentence(p)
	for _, want := range []string{
		"`arm` was assigned to the units by chance",
		"has a causal reading under the conditions of the trial",
		"The other predictors (`age`) were not assigned by chance",
	} {
		if !strings.Contains(s, want) {
			t.Errorf("lacks %q: %s", want, s)
		}
	}
	if strings.Contains(s, "interaction") {
		t.Errorf("an interaction named without one: %s", s)
	}
	p.Terms = append(p.Terms, design.TermSpec{Name: "arm&age", Interact: []string{"arm", "age"}})
	if s := causationSentence(p); !strings.Contains(s, "(an interaction), that describes for whom the assignment changed the outcome more or less, not what the other predictor causes") {
		t.Errorf("interaction with the arm: %s", s)
	}
	// Every predictor assigned by chance: no sentence on other predictors.
	p.Dictionary[1].ByChance = true
	if s := causationSentence(p); !strings.Contains(s, "`arm` and `age` were assigned to the units by chance") || strings.Contains(s, "other predictors") {
		t.Errorf("every predictor by chance: %s", s)
	}
}
