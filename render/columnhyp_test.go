package render

import (
	"strings"
	"testing"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// A hypothesis restricting one of the terms a data column makes says what
// it asks and points to the column's own test: the row of the tests of
// each term when they were made, else the hypothesis restricting every
// term; said once per hypothesis, though it is tested in several models.
func TestHypothesisPartOfColumn(t *testing.T) {
	pc := []runner.ColumnTerms{{Column: "x", Terms: []string{"x", "x.log"}, Named: []string{"x"}}}
	or := &runner.OutcomeResult{Hypotheses: []runner.HypothesisResult{
		{Text: "x = 0", Line: 11, Model: "a", PartOfColumn: pc},
		{Text: "x = 0", Line: 11, Model: "b", PartOfColumn: pc},
		{Text: "x = 0; x.log = 0", Line: 12, Model: "a"},
	}}
	got := partsOfColumns(or)
	want := "`x = 0` restricts term x, which data column x makes together with x.log: it asks what x adds while x.log is held fixed, which cannot happen as the column changes, and not whether column x is associated with the outcome. For that, write the hypothesis as `x = 0; x.log = 0`."
	if len(got) != 1 || got[0] != want {
		t.Errorf("without term tests:\n%q\nwant\n%q", got, want)
	}
	or.TermTests = []runner.TermTest{{Term: "x"}, {Term: "x.log"}, {Term: runner.ColumnLabel("x"), Wald: fit.Test{}}}
	got = partsOfColumns(or)
	if len(got) != 1 || !strings.HasSuffix(got[0], " For that, read the row \"column x\" of the tests of each term, which tests every term reading the column together, or write the hypothesis as `x = 0; x.log = 0`.") {
		t.Errorf("with term tests: %q", got)
	}
	// Two named of three, names that Markdown would read.
	pc = []runner.ColumnTerms{{Column: "dose_mg", Terms: []string{"dose_mg", "dose_mg.log", "dose_mg.sqrt"}, Named: []string{"dose_mg", "dose_mg.log"}}}
	or = &runner.OutcomeResult{Hypotheses: []runner.HypothesisResult{{Text: "dose_mg = dose_mg.log", PartOfColumn: pc}}}
	if got = partsOfColumns(or); len(got) != 1 || !strings.HasPrefix(got[0], "`dose_mg = dose_mg.log` restricts terms dose_mg and dose_mg.log, which data column dose_mg makes together with dose_mg.sqrt: it asks what dose_mg and dose_mg.log add while dose_mg.sqrt is held fixed") {
		t.Errorf("two of three: %q", got)
	}
	// Part of a spline basis: the straight-line column alone.
	b := []runner.ColumnTerms{{Column: "as", Terms: []string{"as.1", "as.2", "as.3"}, Named: []string{"as.1"}}}
	or = &runner.OutcomeResult{Hypotheses: []runner.HypothesisResult{{Text: "as.1 = 0", PartOfBasis: b}}}
	want = "`as.1 = 0` restricts column as.1 of the spline basis of term as (its columns as.1, as.2 and as.3), holding the others fixed: a basis column's coefficient has no reading of its own (it depends on how the basis is written), so this tests neither whether the term is associated with the outcome nor whether its curve is straight. For the first, write `as = 0`; for the second, `as.2 = 0; as.3 = 0`, every column but the straight line as.1."
	if got = partsOfColumns(or); len(got) != 1 || got[0] != want {
		t.Errorf("spline basis:\n%q\nwant\n%q", got, want)
	}
}
