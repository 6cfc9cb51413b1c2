package render

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The paragraph on predictions-OUTCOME.csv names its columns as the file
// spells them: categories 1, 2, 3 are columns prob_c1 to prob_c3 (a name
// may not start with a digit), and a column of the new rows whose name
// holds a space is written with _; the report said prob_CATEGORY, which
// sent a reader looking for prob_1. A single row outside the population
// fitted is said in the singular.
func TestPredictionColumnsNamedAsWritten(t *testing.T) {
	dir, src := levelPairsPlan(t, "  predict: new.csv\n")
	if err := os.WriteFile(filepath.Join(dir, "new.csv"), []byte("row label,site,x\nfirst,north,0.5\nsecond,\"c,d\",1000\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	files := renderSource(t, dir, src, 0)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"the category probabilities (`prob_c1` to `prob_c3`), the cumulative probabilities P(y <= m) (`cumprob_c1` to `cumprob_c2`), the expected category (`expected`, categories scored 1 to 3), the most likely category (`most_likely`), the linear predictors (`linear_1` to `linear_2`)",
		"so it writes category 1 as `c1`, category 2 as `c2`, category 3 as `c3`, column row label of the new rows as `row_label`.")
	head, _, _ := strings.Cut(string(files["predictions-y.csv"]), "\n")
	for _, col := range []string{"row_label", "prob_c1", "prob_c3", "cumprob_c1", "cumprob_c2", "most_likely", "linear_1", "linear_2"} {
		if !strings.Contains(","+head+",", ","+col+",") {
			t.Errorf("predictions-y.csv has no column %s: %s", col, head)
		}
	}
	// One row of two beyond the range of x: the sentence takes the singular.
	hasAll(t, "report.md", md, "**Outside the population fitted:** 1 of the 2 rows lies outside the population the model was fitted to. It is predicted all the same, as asked, but ", "The columns `outside` and `outside_why` of `predictions-y.csv` flag it.")
	if strings.Contains(md, "prob_CATEGORY") {
		t.Error("report.md still names the columns prob_CATEGORY")
	}
}

// Every file named after an outcome takes one part for it: names that a
// file name cannot hold as they are ("satisfaction é" and "satisfaction
// è", "safety.2" and "safety_2") get distinct parts, so the tables of one
// outcome no longer overwrite another's.
func TestOutcomePartsDistinct(t *testing.T) {
	seen := map[string]string{}
	for _, col := range []string{"satisfaction é", "satisfaction è", "safety.2", "safety_2", "y"} {
		p := outcomePart(col)
		if other, dup := seen[p]; dup {
			t.Errorf("%q and %q share the part %q", other, col, p)
		}
		seen[p] = col
		if outcomeFile("predictions", col) != "predictions-"+p+".csv" {
			t.Errorf("%q: predictions file %s, part %s", col, outcomeFile("predictions", col), p)
		}
	}
	if p := outcomePart("safety_2"); p != "safety_2" {
		t.Errorf("a name a file can hold is kept as it is: %s", p)
	}
}
