package plan

import (
	"slices"

	"gopkg.in/yaml.v3"

	"ordplan/runner/fit"
)

// decodeTests reads the tests section.
func (d *decoder) decodeTests(n *yaml.Node, t *Tests) {
	t.ParallelLines = slices.Clone(defaultParallelLines)
	t.Alpha = 0.05
	m := d.mapping(n, "tests", testsKeys)
	typedWords(m, "parallel_lines", "parallel-lines test", fit.TestWords, parallelTests, true, &t.ParallelLines)
	m.probability("alpha", &t.Alpha)
}

// decodeReport reads the report section; defaults that depend on other
// sections are set in applyDefaults.
func (d *decoder) decodeReport(n *yaml.Node, r *Report) {
	r.ConfidenceLevel = 0.95
	m := d.mapping(n, "report", reportKeys)
	m.text("title", &r.Title)
	m.name("focus_predictor", &r.FocusPredictor)
	m.name("panels_by", &r.PanelsBy)
	m.probability("confidence_level", &r.ConfidenceLevel)
	m.boolean("timestamp", &r.Timestamp)
}
