package render

import (
	"fmt"

	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// oneBoundary is the sentence said of an outcome with two categories,
// for which the parallel-lines assumption has nothing to test.
const oneBoundary = "With two categories there is one boundary, so every predictor has one slope whatever the effect structure: parallel, partial and nonparallel effects give the same model, and the parallel-lines assumption has nothing to test."

// binary reports whether an outcome has two categories.
func binary(or *runner.OutcomeResult) bool { return or.FitData != nil && or.FitData.J == 2 }

func writeTests(d *doc, or *runner.OutcomeResult) {
	d.h(3, "Tests of the parallel-lines assumption")
	if binary(or) {
		d.p("%s The tests the plan asks for were not computed for this outcome.", oneBoundary)
		return
	}
	d.p("Each test compares the model with one slope per predictor against the model with a slope per category boundary. Small p-values speak against parallel lines; in large samples they reject even differences too small to matter.")
	for _, tb := range or.Tests {
		d.h(4, tb.Approach.String()+", "+tb.Link.String())
		var rows [][]string
		for _, t := range tb.Global {
			rows = append(rows, testRow(testLabel(t.Name)+" (all predictors)", t))
		}
		for _, vt := range tb.PerVariable {
			for _, t := range vt.Tests {
				rows = append(rows, testRow(testLabel(t.Name)+": "+vt.Predictor, t))
			}
		}
		if len(rows) > 0 {
			d.captioned(fmt.Sprintf("Parallel-lines tests, %s %s", tb.Approach, tb.Link)).table([]string{"Test", "Chi-square", "df", "p"}, rows)
		}
		rows = nil
		for _, nt := range tb.Nested {
			rows = append(rows, testRow(nt.Restricted+" within "+nt.Full, nt.Test))
		}
		if len(rows) > 0 {
			d.p("Nested likelihood-ratio tests:")
			d.captioned(fmt.Sprintf("Nested likelihood-ratio tests, %s %s", tb.Approach, tb.Link)).table([]string{"Restricted within full", "Chi-square", "df", "p"}, rows)
		}
	}
}

func testRow(label string, t fit.Test) []string {
	if t.Negative { // the statistic shown, with why it has no p-value
		return []string{label, numfmt.Stat(t.Chi2), fmt.Sprint(t.DF), t.Reason}
	}
	if !t.OK {
		return []string{label, "", "", "not computed: " + t.Reason}
	}
	if t.Pooled != "" {
		label += " (pooled, " + t.Pooled + ")"
	}
	return []string{label, numfmt.Stat(t.Chi2), fmt.Sprint(t.DF), numfmt.PValue(t.P)}
}

func testLabel(n string) string {
	switch n {
	case "lr":
		return "Likelihood ratio"
	case "wald":
		return "Wald"
	case "score":
		return "Score"
	case "brant":
		return "Brant"
	case "wolfe_gould":
		return "Wolfe-Gould"
	}
	return n
}
