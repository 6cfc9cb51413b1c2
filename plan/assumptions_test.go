package plan

import (
	"bytes"
	"fmt"
	"strings"
	"testing"
)

const effectsPlan = `version: 1
data: {file: d.csv}
outcomes:
  - column: y
    categories: [a, b, c]
categorical:
  g: {levels: [r, s, t], coding: sum}
predictors:
  - {name: xs, column: x, spline: {knots: [-1, 0, 1]}}
  - g
  - z
  - {interact: [z, g]}
models: {approaches: [stage], direction: backward, effects: [parallel]}
tests: {parallel_lines: [lr]}
rules:
  - choose: {by: aic}
assumptions:
  comparison: stage
  correlations:
    - {between: [x, z], r: -0.2}
  outcomes:
    y:
      proportions: [0.3, 0.4, 0.3]
      effects:
        xs: {at: [-1, 0, 1], values: [0, 0.5, 0.2]}
        z&g: {z&g.s: 0.3}
      nonparallel:
        g: [{s: 0.1, t: 0.2}, {t: 0.4}]
`

// Every form of stated effect, the generating comparison (its direction
// taken from models.direction) and a correlation survive the canonical
// form: it parses back to the same bytes. Levels are resolved in the
// declared order, the reference 0.
func TestAssumptionsCanonicalRoundTrip(t *testing.T) {
	p, err := Parse([]byte(effectsPlan), "e.yaml")
	if err != nil {
		t.Fatal(err)
	}
	a := p.Assumptions
	if a.Comparison != "stage" || a.Direction != "backward" || len(a.Correlations) != 1 {
		t.Errorf("generator %q %q, correlations %v", a.Comparison, a.Direction, a.Correlations)
	}
	terms := a.Outcomes[0].Terms
	if len(terms) != 3 || terms[2].Term != "g" || !terms[2].Nonparallel || terms[2].Boundaries[1].Levels[2] != 0.4 || terms[2].Boundaries[0].Levels[0] != 0 {
		t.Errorf("terms %+v", terms)
	}
	c := p.Canonical()
	for _, w := range []string{`"comparison": "stage"`, `"direction": "backward"`, `"at": [`, `"between": [`, `"z&g.s": 0.3`} {
		if !bytes.Contains(c, []byte(w)) {
			t.Errorf("canonical form lacks %s:\n%s", w, c)
		}
	}
	q, err := Parse(c, "again.json")
	if err != nil {
		t.Fatalf("canonical plan does not parse: %v\n%s", err, c)
	}
	if !bytes.Equal(q.Canonical(), c) {
		t.Errorf("canonical plan changed on reparse:\n%s\nvs\n%s", q.Canonical(), c)
	}
	// A nonparallel term needs one effect per boundary.
	_, err = Parse([]byte(strings.Replace(effectsPlan, "[{s: 0.1, t: 0.2}, {t: 0.4}]", "[{s: 0.1}]", 1)), "e.yaml")
	if err == nil || !strings.Contains(err.Error(), "assumptions.outcomes.y.nonparallel.g: want 2 effects, one per boundary between the 3 categories, got 1") {
		t.Errorf("got %v", err)
	}
}

const transformPlan = `version: 1
data: {file: d.csv}
outcomes:
  - column: y
predictors: [{name: xlog, column: x, log: true}, {name: rs, column: r, sqrt: true}, {name: ws, column: w, log: {shift: 2}}]
dictionary:
  x: {}
  r: {}
  w: {range: [-3, 5]}
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: [lr]}
rules:
  - choose: {by: aic}
assumptions:
  predictors: {x: {mean: 12, sd: 8}, r: {mean: 3, sd: 1}, w: {mean: 1, sd: 1}}
  outcomes:
    y:
      proportions: [0.3, 0.4, 0.3]
      effects: {xlog: 0.3, rs: 0.2, ws: 0.1}
`

// TestTransformOfDrawnColumn: a log or sqrt of a column the assumptions
// draw with values where it is undefined (an unbounded normal, or a range
// reaching below the log's shift) is refused when the plan is checked,
// naming the key of the distribution, the term's key and the
// transformation; a range above the bound is accepted.
func TestTransformOfDrawnColumn(t *testing.T) {
	_, err := Parse([]byte(transformPlan), "t.yaml")
	for _, want := range []string{
		`t.yaml:15:19: assumptions.predictors.x: log(x) of predictors[0] (xlog) is undefined for values at or below 0, and a normal distribution (mean 12, sd 8) with no range in the dictionary takes such values: give x a range in the dictionary (dictionary.x.range) with a minimum above 0, or a shift (log: {shift: ...})`,
		`assumptions.predictors.r: sqrt(r) of predictors[1] (rs) is undefined for values below 0, and a normal distribution (mean 3, sd 1) with no range in the dictionary takes such values: give r a range in the dictionary (dictionary.r.range) with a minimum of 0 or more`,
		`dictionary.w.range: log(w + 2) of predictors[2] (ws) is undefined for values at or below -2, and w is drawn over its range [-3, 5] in the dictionary: give it a minimum above -2`,
	} {
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("want %q in\n%v", want, err)
		}
	}
	ok := strings.Replace(transformPlan, "  x: {}\n  r: {}\n  w: {range: [-3, 5]}\n", "  x: {range: [0.5, 100]}\n  r: {range: [0, 10]}\n  w: {range: [-1.5, 5]}\n", 1)
	if _, err := Parse([]byte(ok), "t.yaml"); err != nil {
		t.Errorf("ranges above the bounds: %v", err)
	}
}

// clusteredPlan states 50 clusters and assumptions.n (N) rows.
const clusteredPlan = `version: 1
data: {file: d.csv, cluster: k}
outcomes:
  - column: y
predictors: [a]
models: {approaches: [cumulative], effects: [parallel]}
covariance: clustered
rules:
  - choose: {by: aic}
assumptions:
  n: N
  predictors: {a: {mean: 0, sd: 1}}
  outcomes:
    y: {proportions: [0.3, 0.4, 0.3], effects: {a: 0.2}}
  clusters: {number: 50}
`

// The rows against which the clusters are checked (A27) are those that
// will be simulated: assumptions.n when the plan is read for itself or a
// rehearsal without --n, the sizes of --n (the smallest of them) when a
// command gives them, whatever assumptions.n says.
func TestClusterRowsChecked(t *testing.T) {
	withN := func(n string) []byte { return []byte(strings.Replace(clusteredPlan, "n: N", "n: "+n, 1)) }
	const few = "assumptions.clusters.number: 50 clusters cannot be made of the "
	cases := []struct {
		name string
		src  []byte
		rows *Rows // nil: Parse
		want string
	}{
		{"assumptions.n too small, read for itself", withN("40"), nil, few + "40 rows simulated (n = 40, from assumptions.n)"},
		{"assumptions.n too small, rehearsed without --n", withN("40"), &Rows{}, few + "40 rows simulated (n = 40, from assumptions.n)"},
		{"assumptions.n too small, --n holds them", withN("40"), &Rows{Sizes: []int{100}, Flag: "--n"}, ""},
		{"assumptions.n too small, every size holds them", withN("40"), &Rows{Sizes: []int{400, 50}, Flag: "--n"}, ""},
		{"assumptions.n holds them, --n does not", withN("100"), &Rows{Sizes: []int{30}, Flag: "--n"}, few + "30 rows simulated (n = 30, from --n): each cluster needs a row at least; state at most 30 clusters, or give --n of 50 or more"},
		{"assumptions.n holds them, the smallest size does not", withN("100"), &Rows{Sizes: []int{200, 49, 45}, Flag: "--n"}, few + "45 rows simulated (n = 45, from --n)"},
		{"assumptions.n not given, read for itself", []byte(strings.Replace(clusteredPlan, "  n: N\n", "", 1)), nil, ""},
		{"assumptions.n not given, --n too small", []byte(strings.Replace(clusteredPlan, "  n: N\n", "", 1)), &Rows{Sizes: []int{20}, Flag: "--n"}, few + "20 rows simulated (n = 20, from --n)"},
	}
	for _, c := range cases {
		var err error
		if c.rows == nil {
			_, err = Parse(c.src, "c.yaml")
		} else {
			_, err = ParseSimulation(c.src, "c.yaml", *c.rows)
		}
		// The message is placed at assumptions.clusters.number's line.
		at := fmt.Sprintf("c.yaml:%d:22: ", bytes.Count(c.src[:bytes.Index(c.src, []byte("clusters: {"))], []byte("\n"))+1)
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%s: %v", c.name, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), at+c.want)):
			t.Errorf("%s: got %v, want %q", c.name, err, c.want)
		}
	}
}
