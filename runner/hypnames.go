package runner

import (
	"ordplan/plan"
	"ordplan/runner/design"
)

// hypothesisScope is what an outcome's candidate models are made of once
// its data are read: the design's terms and columns (a level no row has
// may have lost its column) and the boundaries between the categories
// the data have.
func hypothesisScope(outcome string, dz *design.Design, categories []string) plan.ParameterScope {
	s := plan.ParameterScope{Outcome: outcome, Boundaries: max(len(categories)-1, 0)}
	for _, t := range termsOf(dz) {
		s.Terms = append(s.Terms, t.Name)
		s.Columns = append(s.Columns, t.Columns)
	}
	return s
}

// checkHypothesisNames refuses a hypothesis naming a parameter that no
// candidate model of any outcome has with these data (plan.HypothesisErrors;
// the plan's own check knows only the declared levels and categories).
func checkHypothesisNames(p *plan.Plan, scopes []plan.ParameterScope) error {
	if errs := p.HypothesisErrors(scopes); len(errs) > 0 {
		return errs
	}
	return nil
}
