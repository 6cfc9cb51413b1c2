package render

import (
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
	d.p("**%s.** No real observation was used: `ordplan %s` drew %d rows (seed %d, `%s`) from the plan's `assumptions` and data dictionary, with a cumulative %s model generating each outcome, and ran the whole plan on them. This report shows what the registered analysis will print; its numbers say nothing about the real data.",
		SimulatedMark, s.Command, s.N, s.Seed, s.File, s.Link)
}
