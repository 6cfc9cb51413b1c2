package runner

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// TestUnobservedCategoryOneWording checks that a declared category no row
// has is refused by the same check, with the same sentence, for a plan
// and for the flags of `ordplan fit`; only the names differ.
func TestUnobservedCategoryOneWording(t *testing.T) {
	dir := t.TempDir()
	src := "y,x\n1,0.5\n2,1.5\n1,2.5\n2,0.1\n"
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := plan.Parse([]byte("version: 1\ndata: {file: d.csv}\noutcomes:\n  - column: y\n    categories: [\"1\", \"2\", \"3\"]\n"+
		"predictors: [x]\nmodels: {approaches: [cumulative], links: [logit], effects: [parallel]}\nrules: [{choose: {by: tic}}]\n"), filepath.Join(dir, "p.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	a := ResolvePlan(p)
	_, errPlan := a.Load(a.Outcomes[0])
	_, _, errFlags := FitOne(SingleFit{DataFile: filepath.Join(dir, "d.csv"), Outcome: "y", Categories: []string{"1", "2", "3"},
		Predictors: []string{"x"}, Approach: fit.Cumulative, Link: fit.Logit, Workers: 1})
	tail := `category "3" is declared but never observed in the 4 rows used; remove it from `
	for _, c := range []struct {
		err  error
		want string
	}{
		{errPlan, filepath.Join(dir, "p.yaml") + ": outcomes: y: " + tail + "categories or merge it with a neighbour"},
		{errFlags, filepath.Join(dir, "d.csv") + `: outcome "y": ` + tail + "--categories or merge it with a neighbour"},
	} {
		if c.err == nil || c.err.Error() != c.want {
			t.Errorf("got %v\nwant %s", c.err, c.want)
		}
	}
}

// The methods' phrase for clustered errors names the cluster column and
// the clusters G with G-1, on the sandwich and on the jackknife alike.
func TestClusteredPhraseNamesColumnAndG(t *testing.T) {
	for _, c := range []CovariancePolicy{{Covariance: fit.Clustered}, {Covariance: fit.Clustered, Correction: fit.Jackknife}} {
		s := c.Phrase("`g`", 30)
		for _, want := range []string{"t on G-1 = 29 degrees of freedom", "(G = 30, the clusters of `g`)"} {
			if !strings.Contains(s, want) {
				t.Errorf("%q lacks %q", s, want)
			}
		}
	}
	if s := (CovariancePolicy{Covariance: fit.Sandwich}).Phrase("", 0); strings.Contains(s, "clusters") {
		t.Errorf("sandwich phrase %q names clusters", s)
	}
}

// TestLossKeys: the plan keys a refusal names for the rows dropped are
// the subset's conditions that left rows out, data.missing for rows
// missing a value and data.weights for rows of weight 0, in that order,
// each once; a count of no rows names nothing.
func TestLossKeys(t *testing.T) {
	c0 := data.Condition{Column: "x", Op: ">", Number: 1.5, Key: "subset[0]"}
	c1 := data.Condition{Column: "g", Op: "in", Values: []string{"a"}, Key: "subset[1]"}
	r := Reading{Options: data.Options{Keep: []data.Condition{c0, c1}, Weights: "w"}}
	got := r.lossKeys([]data.DropCount{{Column: "w = 0", Rows: 2}, {Column: "z", Rows: 5}, {Column: "y", Rows: 1},
		{Column: c1.DropColumn(), Rows: 3, Subset: true}, {Column: c0.DropColumn(), Rows: 0, Subset: true}})
	if want := []string{"subset[1]", "data.missing", "data.weights"}; !slices.Equal(got, want) {
		t.Errorf("lossKeys: %q, want %q", got, want)
	}
	if got := r.lossKeys(nil); got != nil {
		t.Errorf("no rows dropped: %q", got)
	}
}
