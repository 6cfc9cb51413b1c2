package design

import (
	"strings"
	"testing"
)

// The checks that need no data name the option at fault, for the plan and
// the command line alike.
func TestChecksNameTheOption(t *testing.T) {
	cat := func(ref, coding string, levels ...string) *Categorical {
		return &Categorical{Levels: levels, Reference: ref, Coding: coding}
	}
	for _, c := range []struct {
		key, want string
		got       func() (string, error)
	}{
		{"levels", "at least 2 levels, got 1", cat("", Treatment, "a").Check},
		{"reference", `reference level "z" is not among the levels (a, b)`, cat("z", Treatment, "a", "b").Check},
		{"reference", `the reference is the first level ("a")`, cat("b", Successive, "a", "b").Check},
		{"", "", cat("b", Sum, "a", "b").Check},
		{"sqrt", "give log or sqrt, not both", Transform{Log: true, Sqrt: true}.Conflict},
		{"spline", "give polynomial or spline, not both", Transform{Poly: 2, Quantiles: []float64{0.1, 0.5, 0.9}}.Conflict},
		{"", "", Transform{Log: true, Knots: []float64{1, 2, 3}}.Conflict},
	} {
		key, err := c.got()
		if key != c.key || (err == nil) != (c.want == "") || err != nil && !strings.Contains(err.Error(), c.want) {
			t.Errorf("got %q, %v; want %q, %q", key, err, c.key, c.want)
		}
	}
	for _, c := range []struct {
		xs   []float64
		q    bool
		at   int
		want string
	}{
		{[]float64{1, 2}, false, -1, "at least 3 knots (2 boundary knots and 1 inside), got 2"},
		{[]float64{1, 3, 2}, false, 2, "strictly increasing (2 follows 3)"},
		{[]float64{0.1, 0.5, 1.5}, true, 2, "1.5 is not a probability"},
		{[]float64{0.1, 0.5, 0.9}, true, 0, ""},
	} {
		at, err := CheckKnots(c.xs, c.q)
		if at != c.at || (err == nil) != (c.want == "") || err != nil && !strings.Contains(err.Error(), c.want) {
			t.Errorf("CheckKnots(%v): %d, %v; want %d, %q", c.xs, at, err, c.at, c.want)
		}
	}
	if err := CheckDegree(11); err == nil || CheckDegree(10) != nil {
		t.Error("degree range not 1 to 10")
	}
	if got := BadNameChars("a b(c) d"); got != `" ", "(", ")"` {
		t.Errorf("BadNameChars: %s", got)
	}
}

// An interaction naming the column of a renamed term is told the term.
func TestColumnNotTerm(t *testing.T) {
	earlier := []TermSpec{{Name: "w", Source: "w"}, {Name: "lz", Source: "z", Transform: Transform{Centre: "mean"}}, {Name: "z2", Source: "z", Transform: Transform{Poly: 2}}}
	if got, want := ColumnNotTerm("z", earlier), `"z" is a column; interactions name terms, and the term reading it is "lz" or "z2"`; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
	if got := ColumnNotTerm("q", earlier); got != "" {
		t.Errorf("a name no term reads: %q", got)
	}
}
