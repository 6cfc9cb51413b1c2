package data

import "testing"

// A subset condition names its values so that a value holding a comma or a
// space reads as one value: `site in {north, "so,uth"}`, not `site in
// {north, so,uth}`, which reads as three.
func TestConditionTextQuotesLevels(t *testing.T) {
	for _, c := range []struct {
		cond Condition
		want string
	}{
		{Condition{Column: "site", Op: "in", Values: []string{"north", "so,uth"}}, `site in {north, "so,uth"}`},
		{Condition{Column: "site", Op: "not_in", Values: []string{"east side"}}, `site not in {"east side"}`},
		{Condition{Column: "site", Op: "in", Values: []string{"north", "01"}}, `site in {north, 01}`},
		{Condition{Column: "age", Op: ">=", Number: 18}, `age >= 18`},
	} {
		if got := c.cond.String(); got != c.want {
			t.Errorf("%+v: %s, want %s", c.cond, got, c.want)
		}
	}
}
