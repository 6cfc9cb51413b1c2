package render

import (
	"fmt"
	"strings"

	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// oneBoundary is the sentence said of an outcome with two categories,
// for which the parallel-lines assumption has nothing to test.
const oneBoundary = "With two categories there is one boundary, so every predictor has one slope whatever the effect structure: parallel, partial and nonparallel effects give the same model, and the parallel-lines assumption has nothing to test."

// binary reports whether an outcome has two categories
// (runner.OutcomeResult.OneBoundary).
func binary(or *runner.OutcomeResult) bool { return or.OneBoundary() }

// blockApproach names the approach of a block of tests as its models are
// named (stage_backward under a backward plan), in the report's headings
// and in table-tests' approach column alike.
func blockApproach(backward bool, a fit.Comparison) string {
	return fit.Model{Comparison: a, Backward: backward && a == fit.Stage}.ComparisonName()
}

// backward is the plan's stage direction: the tests of a backward stage
// model are headed by the name its models carry (stage_backward), as in
// every table of models.
func writeTests(d *doc, backward bool, or *runner.OutcomeResult) {
	d.h(3, "Tests of the parallel-lines assumption")
	if binary(or) {
		d.p("%s The tests the plan asks for were not computed for this outcome.", oneBoundary)
		return
	}
	d.p("The tests ask whether a slope is the same at every category boundary (parallel lines), but not all compare the same two models. Small p-values speak against parallel lines; in large samples they reject even differences too small to matter.")
	for _, s := range testsMeaning(or) {
		d.p("%s", s)
	}
	for _, tb := range or.Tests {
		approach := blockApproach(backward, tb.Approach)
		d.h(4, approach+", "+tb.Link.String())
		var rows [][]string
		var warned poolingWarnings
		var fG float64 // G of the tests referred to F on a cluster-robust covariance
		pooled := or.Imputed != nil
		row := func(label string, t fit.Test) []string {
			warned.add(label, t)
			if t.FRef {
				fG = t.DF2 + float64(t.DF)
			}
			return testRow(label, t, pooled)
		}
		for _, t := range tb.Global {
			rows = append(rows, row(testLabel(t.Name)+" (all predictors)", t))
		}
		for _, vt := range tb.PerVariable {
			for _, t := range vt.Tests {
				rows = append(rows, row(testLabel(t.Name)+": "+vt.Predictor, t))
			}
		}
		if len(rows) > 0 {
			d.captioned(fmt.Sprintf("Parallel-lines tests, %s %s", approach, tb.Link)).table(testHead("Test", pooled), rows)
		}
		if fG > 0 {
			d.p("A Wald test on the cluster-robust covariance shows its statistic W (column Chi-square) and its q restrictions (df); its p-value is that of F = W (G-q)/((G-1) q) on F(q, G-q), G = %s clusters, shown beside its name.", numfmt.Num(fG))
			if np := or.Cell(tb.Approach, fit.NonparallelEffects, tb.Link); np != nil && np.Result != nil && np.Result.SingularClustered() != "" {
				d.p("**The Wald tests above are made in %s, whose cluster-robust covariance is singular:** %s. A test shown with a p-value was made from the covariance of its own restrictions, of full rank, and a decision rule reads it as any other; a test of G or more restrictions cannot be made. Each rests on few clusters.", np.ID, np.Result.SingularClustered())
			}
		}
		rows = nil
		for _, nt := range tb.Nested {
			rows = append(rows, row(nt.Restricted+" within "+nt.Full, nt.Test))
		}
		if len(rows) > 0 {
			d.p("Nested likelihood-ratio tests:")
			d.captioned(fmt.Sprintf("Nested likelihood-ratio tests, %s %s", approach, tb.Link)).table(testHead("Restricted within full", pooled), rows)
		}
		warned.write(d)
	}
}

// poolingWarnings are what the pooling rule said of the pooled tests of
// a table (fit.Test.Warning), each with the test's label in the table.
type poolingWarnings [][2]string

func (w *poolingWarnings) add(label string, t fit.Test) {
	if t.OK && t.Warning != "" {
		*w = append(*w, [2]string{label, t.Warning})
	}
}

// write says them below the table, one paragraph each.
func (w poolingWarnings) write(d *doc) {
	for _, x := range w {
		d.p("**Warning**, %s: %s.", mdText(x[0]), mdText(x[1]))
	}
}

// testRow is a test's row of a table of tests (label, statistic cells,
// p); pooled: the table is of tests pooled over imputed sets (testHead).
func testRow(label string, t fit.Test, pooled bool) []string {
	if !t.OK && !t.Negative {
		return append(append([]string{label}, emptyStat(pooled)...), "not computed: "+t.Reason)
	}
	if t.Pooled != "" {
		label += " (pooled, " + t.Pooled + ")"
	}
	if t.Negative { // the statistic shown, with why it has no p-value
		return append(append([]string{label}, statCells(t, pooled)...), t.Reason)
	}
	label += fReference(t)
	return append(append([]string{label}, statCells(t, pooled)...), numfmt.PValue(t.P))
}

// testHead is the header of a table of tests whose first column is
// first: the chi-square statistic and its df, or, for tests pooled over
// imputed sets (F tests on two degrees of freedom, runner.FStatistic),
// the one column Statistic, "F(k, v) = F".
func testHead(first string, pooled bool) []string {
	if pooled {
		return []string{first, "Statistic", "p"}
	}
	return []string{first, "Chi-square", "df", "p"}
}

// statCells are a test's cells under testHead's statistic columns: the
// chi-square and its df, or in a table of pooled tests "F(k, v) = F" (a
// test there that is not pooled: "chi2(k) = x").
func statCells(t fit.Test, pooled bool) []string {
	switch {
	case !pooled:
		return []string{numfmt.Stat(t.Chi2), fmt.Sprint(t.DF)}
	case t.Pooled != "":
		return []string{runner.FStatistic(t)}
	}
	return []string{fmt.Sprintf("chi2(%d) = %s", t.DF, numfmt.Stat(t.Chi2))}
}

// emptyStat are statCells' empty cells, for a test not computed.
func emptyStat(pooled bool) []string {
	if pooled {
		return []string{""}
	}
	return []string{"", ""}
}

// fReference says, after a test's label, that a Wald statistic W made on a
// cluster-robust covariance is referred to F ("" for any other test): the
// tables show W and its df q, the p-value is that of W (G-q)/((G-1) q) on
// F(q, G-q).
func fReference(t fit.Test) string {
	if !t.FRef {
		return ""
	}
	return fmt.Sprintf(" (p of F(%d, %s) = %s)", t.DF, numfmt.Num(t.DF2), numfmt.Stat(t.F))
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

// testsMeaning says, for each kind of test shown for the outcome, which
// two models it compares: overall (all predictors), per term, and the
// nested likelihood-ratio tests.
func testsMeaning(or *runner.OutcomeResult) []string {
	global, per, nested := map[string]bool{}, map[string]bool{}, false
	for _, tb := range or.Tests {
		for _, t := range tb.Global {
			global[t.Name] = true
		}
		for _, vt := range tb.PerVariable {
			for _, t := range vt.Tests {
				per[t.Name] = true
			}
		}
		nested = nested || len(tb.Nested) > 0
	}
	var out []string
	overall := map[string]string{
		"lr":          "the likelihood-ratio test compares the parallel model (one slope per column) with the nonparallel model (a slope per column and boundary)",
		"wald":        "the Wald test fits only the nonparallel model and asks whether every column's slopes are equal across the boundaries",
		"score":       "the score test fits only the parallel model and asks whether giving every column a slope per boundary would improve it",
		"brant":       "the Brant test compares each column's slopes between separate binary logit fits, one per boundary",
		"wolfe_gould": "the Wolfe-Gould test compares binary logit fits of the boundaries with common slopes against separate ones, one per boundary",
	}
	term := map[string]string{
		"lr":    "the likelihood-ratio test of a term compares the model in which that term alone is parallel (every other term with a slope per boundary) with the nonparallel model",
		"wald":  "the Wald test of a term asks, in the nonparallel model (every other term free too), whether that term's slopes are equal across the boundaries",
		"score": "the score test of a term asks, in the parallel model (every other term parallel too), whether giving that term alone a slope per boundary would improve it",
		"brant": "the Brant test of a term compares that term's slopes between the separate binary fits",
	}
	order := []string{"lr", "wald", "score", "brant", "wolfe_gould"}
	var g, t []string
	for _, k := range order {
		if global[k] {
			g = append(g, overall[k])
		}
		if per[k] && term[k] != "" {
			t = append(t, term[k])
		}
	}
	if len(g) > 0 {
		out = append(out, "Overall (all predictors): "+strings.Join(g, "; ")+".")
	}
	if len(t) > 0 {
		out = append(out, "For one term (the rows named by a term): "+strings.Join(t, "; ")+".")
	}
	if nested {
		out = append(out, nestedMeaning(or))
	}
	return out
}

// nestedMeaning says what the nested likelihood-ratio tests compare, with
// the outcome's own parallel-within-partial test as the example when there
// is one, and why it can disagree with a term's likelihood-ratio test.
func nestedMeaning(or *runner.OutcomeResult) string {
	const head = "A nested likelihood-ratio test \"R within F\" compares two candidate models, R a special case of F."
	for _, tb := range or.Tests {
		for _, nt := range tb.Nested {
			r, f := or.Find(nt.Restricted), or.Find(nt.Full)
			if r == nil || f == nil || r.Effects != fit.ParallelEffects || f.Effects != fit.PartialEffects {
				continue
			}
			free := strings.Join(f.Spec.Nonparallel, ", ")
			return fmt.Sprintf("%s %s within %s compares the parallel model with the partial model, which gives the columns of its partial set (%s) a slope per boundary and keeps every other term parallel: it asks about those slopes with every other term parallel in both models. A term's likelihood-ratio test in the table above asks about that term's slopes with every other term free in both models (the nonparallel model against the model in which that term alone is parallel). The two answer different questions and can disagree, one p-value small and the other large, when other terms' slopes differ across boundaries or their columns are correlated with that term's (an interaction with it, for one).", head, nt.Restricted, nt.Full, free)
		}
	}
	return head + " Each asks whether the slopes F frees and R does not are equal across the boundaries, with the other terms as both models have them; a term's likelihood-ratio test in the table above has every other term free in both models, so the two can disagree."
}
