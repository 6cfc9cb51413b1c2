package runner

import (
	"strings"
	"testing"

	"ordplan/runner/data"
	"ordplan/runner/design"
)

// TestCovariatePatternsCheckCodes: a categorical cell must hold the code
// of a declared level (0 to levels - 1); anything else is an error naming
// the row, the column and the value, never an index past the levels (a
// panic) or a fraction cut to a level.
func TestCovariatePatternsCheckCodes(t *testing.T) {
	ld := func(x ...float64) *Loaded {
		return &Loaded{
			Data: &data.Dataset{N: len(x) / 2, K: 2, X: x},
			Design: &design.Design{Sources: []design.Source{{Name: "age"},
				{Name: "site", Cat: &design.Categorical{Levels: []string{"north", "south", "east"}}}}},
		}
	}
	pattern, labels, err := covariatePatterns(ld(30, 2, 40, 0, 50, 2), []int{1})
	if err != nil || strings.Join(labels, "; ") != "site=north; site=east" || pattern[0] != 1 || pattern[1] != 0 || pattern[2] != 1 {
		t.Errorf("good codes: %v %v %v", pattern, labels, err)
	}
	for _, c := range []struct {
		code float64
		want string
	}{
		{3, `row 2 of the data used holds 3 in column "site", which is not the code of one of its 3 levels (0 to 2)`},
		{-1, `holds -1 in column "site"`},
		{1.5, `holds 1.5 in column "site"`},
	} {
		_, _, err := covariatePatterns(ld(30, 2, 40, c.code), []int{1})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("code %g: %v, want %q", c.code, err, c.want)
		}
	}
}
