package runner

import (
	"strings"
	"testing"

	"ordplan/runner/data"
	"ordplan/runner/design"
)

// The threshold's edge: a level with FewLevelRows-1 rows is named, one
// with FewLevelRows rows is not; a combination of an interaction is named
// by its own count unless one of its levels is named already; frequency
// weights are summed, sampling weights count rows. Counts by hand from
// the rows built below.
func TestFewRowLevelsEdge(t *testing.T) {
	g := &design.Categorical{Levels: []string{"big", "edge", "few"}}
	h := &design.Categorical{Levels: []string{"lo", "hi"}}
	spec := design.Spec{
		Sources: []design.Source{{Name: "g", Cat: g}, {Name: "h", Cat: h}},
		Terms:   []design.TermSpec{{Name: "g", Source: "g"}, {Name: "h", Source: "h"}, {Name: "g&h", Interact: []string{"g", "h"}}},
	}
	// g: big 40 rows (h hi in 9 of them, lo in 31), edge 10 rows (5 lo,
	// 5 hi), few 9 rows (all lo but one).
	var raw []float64
	add := func(n int, gl, hl float64) {
		for range n {
			raw = append(raw, gl, hl)
		}
	}
	add(31, 0, 0)
	add(9, 0, 1)
	add(5, 1, 0)
	add(5, 1, 1)
	add(8, 2, 0)
	add(1, 2, 1)
	n := len(raw) / 2
	dz, err := design.Build(spec, raw, n, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	ds := &data.Dataset{Predictors: []string{"g", "h"}, K: 2, N: n, X: raw}
	a := &Analysis{Plan: true} // the advice names the plan key
	r := Reading{Design: spec}
	got := a.FewRowLevels(r, dz, ds, nil)
	for _, want := range []string{
		"Few rows at some levels of categorical predictors (fewer than 10 of the 59 rows used): g = few (9 rows), ",
		`g "big" with h "hi" (9 rows, in term "g&h"), g "edge" with h "lo" (5 rows, in term "g&h"), g "edge" with h "hi" (5 rows, in term "g&h"). `,
	} {
		if !strings.Contains(got, want) {
			t.Errorf("want %q in\n%s", want, got)
		}
	}
	for _, not := range []string{"g = edge", "g = big", "h = ", `g "few"`} {
		if strings.Contains(got, not) {
			t.Errorf("%q named in\n%s", not, got)
		}
	}
	// Frequency weights of 2 on the rows of "few": 18 observations, not
	// named; its cell with h hi (weight 2) is. Sampling weights: rows.
	w := make([]float64, n)
	for i := range w {
		w[i] = 1
		if raw[2*i] == 2 {
			w[i] = 2
		}
	}
	ds.Weights = w
	got = a.FewRowLevels(r, dz, ds, nil)
	if strings.Contains(got, "g = few") || !strings.Contains(got, `g "few" with h "hi" (2 observations, in term "g&h")`) || !strings.Contains(got, "fewer than 10 of the 68 observations used") {
		t.Errorf("frequency weights: %s", got)
	}
	ds.Sampling = true
	if got = a.FewRowLevels(r, dz, ds, nil); !strings.Contains(got, "g = few (9 rows)") {
		t.Errorf("sampling weights: %s", got)
	}
	// The reference level named as such, with the key to change it.
	g.Reference = "few"
	ds.Weights, ds.Sampling = nil, false
	if dz, err = design.Build(spec, raw, n, nil, nil); err != nil {
		t.Fatal(err)
	}
	if got = a.FewRowLevels(r, dz, ds, nil); !strings.Contains(got, "g = few (9 rows, the reference level)") || !strings.HasSuffix(got, "make a larger level the reference (categorical.g.reference)") {
		t.Errorf("reference: %s", got)
	}
	g.Reference = ""
	// One more row of "few": 10, not named, nor is any level.
	add(1, 2, 0)
	n = len(raw) / 2
	if dz, err = design.Build(spec, raw, n, nil, nil); err != nil {
		t.Fatal(err)
	}
	ds = &data.Dataset{Predictors: []string{"g", "h"}, K: 2, N: n, X: raw}
	if got = a.FewRowLevels(r, dz, ds, nil); strings.Contains(got, "g = ") {
		t.Errorf("10 rows named: %s", got)
	}
}
