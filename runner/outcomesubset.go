package runner

import (
	"fmt"
	"strings"

	"ordplan/plan"
)

// outcomeSelection says, when a subset condition of the reading compares
// the outcome's own column, that the rows are chosen by the outcome
// ("" when none does): the models then describe the outcome among the
// rows kept only, and choosing rows by the outcome changes in general what
// the effects are (a cumulative model of every category does not hold
// among the rows of some of them: P(Y <= j | Y <= m) is F(tau_j - x'b) /
// F(tau_m - x'b), not F of a line in x). Not refused: a part of the
// outcome's range can be the question, and some models keep their form
// under it (adjacent-category logits among adjacent categories), but the
// estimates are not those of the population the rows were drawn from, and
// the user is told so where the run is checked and in the report.
func (r Reading) outcomeSelection() string {
	conds := r.outcomeConditions()
	if len(conds) == 0 {
		return ""
	}
	return fmt.Sprintf("%s %s rows by the value of the outcome %s itself: the models describe %s only among the rows kept, and choosing rows by the outcome changes in general what the effects are (a cumulative model of every category does not hold among the rows of some of them), so the estimates are not the effects in the population the rows were drawn from. To study a part of that population, choose its rows by another column; to study the outcome among these rows, as meant, read the results as conditional on the selection",
		strings.Join(conds, " and "), map[bool]string{true: "chooses", false: "choose"}[len(conds) == 1], r.Outcome, r.Outcome)
}

// outcomeConditions names the subset conditions that compare the
// outcome's own column, each with its plan key: "subset[0] (y not in
// {r4})".
func (r Reading) outcomeConditions() []string {
	var conds []string
	for _, c := range r.Options.Keep {
		if c.Column == r.Outcome {
			conds = append(conds, fmt.Sprintf("%s (%s)", c.Key, c.String()))
		}
	}
	return conds
}

// OutcomeSubsetWarnings are the warnings check and run print for each
// outcome of the plan whose rows a subset condition chooses by the
// outcome's own value (Reading.outcomeSelection); none otherwise.
func OutcomeSubsetWarnings(p *plan.Plan) []string {
	var out []string
	for i, r := range ResolvePlan(p).Outcomes {
		if w := r.outcomeSelection(); w != "" {
			out = append(out, fmt.Sprintf("outcomes[%d] (%s): %s", i, r.Outcome, w))
		}
	}
	return out
}
