package testsurvey

import (
	"fmt"
	"strings"
)

// Plan is a plan of the simulation tests (`ordplan rehearse`, `ordplan
// power`): one outcome y drawn from the plan's assumptions. YAML writes
// the lines such plans share (version, seed, data file, the outcome,
// models, tests, rules) around the parts that differ.
type Plan struct {
	Seed       int
	Data       string // the data file named (default sim.csv)
	Categories string // y's categories, a YAML list
	// Sections are the plan's lines between the outcome and the models
	// (categorical, predictors, subset, dictionary), each ending in a
	// newline.
	Sections   string
	Approaches string // a YAML list (default [cumulative])
	Effects    string // a YAML list (default [parallel])
	Test       string // the parallel-lines test (default lr)
	// Rules are the rules' list items (default choose by AIC), and
	// Inference the inference section's lines (optional), each line
	// ending in a newline.
	Rules     string
	Inference string
	// Assumptions are the lines of the assumptions section, indented
	// under it.
	Assumptions string
}

// YAML writes the plan.
func (p Plan) YAML() string {
	or := func(s, dflt string) string {
		if s == "" {
			return dflt
		}
		return s
	}
	var b strings.Builder
	fmt.Fprintf(&b, "version: 1\nseed: %d\ndata: {file: %s}\n", p.Seed, or(p.Data, "sim.csv"))
	fmt.Fprintf(&b, "outcomes:\n  - column: y\n    categories: %s\n", p.Categories)
	b.WriteString(p.Sections)
	fmt.Fprintf(&b, "models: {approaches: %s, effects: %s}\n", or(p.Approaches, "[cumulative]"), or(p.Effects, "[parallel]"))
	fmt.Fprintf(&b, "tests: {parallel_lines: [%s]}\n", or(p.Test, "lr"))
	b.WriteString("rules:\n" + or(p.Rules, "  - choose: {by: aic}\n"))
	if p.Inference != "" {
		b.WriteString("inference:\n" + p.Inference)
	}
	b.WriteString("assumptions:\n" + p.Assumptions)
	return b.String()
}
