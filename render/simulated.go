package render

import (
	"strings"

	"ordplan/runner"
)

// SimulatedMark opens the title and the first line of every page made
// from simulated data.
const SimulatedMark = "SIMULATED DATA"

// writeSimulated says, first, that the data were simulated.
func writeSimulated(d *doc, r *runner.Result) {
	s := r.Simulated
	if s == nil {
		return
	}
	model := s.Model
	if model == "" {
		model = "cumulative " + s.Link
	}
	d.p("**%s.** No real observation was used: `ordplan %s` drew %d rows (seed %d, `%s`) from the plan's `assumptions` and data dictionary, with a %s model generating each outcome, and ran the whole plan on them. This report shows what the registered analysis will print; its numbers say nothing about the real data.",
		SimulatedMark, s.Command, s.N, s.Seed, s.File, model)
	if s.Kept != nil {
		d.p("The plan's subset (%s) kept %d of the %d simulated rows; the stated category proportions describe all simulated rows, before the subset.", strings.Join(s.Subset, "; "), *s.Kept, s.N)
	}
}
