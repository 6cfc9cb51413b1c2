package render

import (
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"

	"ordplan/runner"
)

// TestLegendsClearOfData draws every figure of the golden report and a
// figure whose data fill its top right corner (where a legend inside the
// plot would sit), and checks from the drawn layout that the legend box
// lies inside the image, does not overlap the data area, and covers no
// data point or line vertex.
func TestLegendsClearOfData(t *testing.T) {
	res := runPlan(t, goldenPlan, 2)
	figs := map[string]*figure{}
	for _, c := range build(res, runner.BuildDecisions(res), nil).allCharts() {
		if c.static != nil {
			figs[figureFile(c.number)] = c.static
		}
	}
	if len(figs) < 5 {
		t.Fatalf("%d figures in the golden report", len(figs))
	}
	corner := newFigure("data in the top right corner", "x", "y")
	corner.series = []figSeries{
		{name: "first series with a long name", color: "#336699", xs: []float64{0, 1, 2, 3}, ys: []float64{0, 1, 2, 10}, points: true, legend: true},
		{name: "second", color: "#993366", xs: []float64{0, 1, 2, 3}, ys: []float64{10, 9.5, 9.8, 9.9}, legend: true},
	}
	figs["corner"] = corner
	withLegend := 0
	for name, f := range figs {
		_, lay, err := f.draw()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if len(lay.marks) == 0 {
			t.Errorf("%s: no data drawn", name)
		}
		lg := lay.legend
		if lg.Size().X == 0 {
			continue
		}
		withLegend++
		if lg.Min.X < 0 || lg.Min.Y < 0 || lg.Max.X > lay.width || lg.Max.Y > lay.height {
			t.Errorf("%s: legend %v outside the image %v x %v", name, lg, lay.width, lay.height)
		}
		if overlaps(lg, lay.data) {
			t.Errorf("%s: legend %v overlaps the data area %v", name, lg, lay.data)
		}
		for _, m := range lay.marks {
			if m.X >= lg.Min.X && m.X <= lg.Max.X && m.Y >= lg.Min.Y && m.Y <= lg.Max.Y {
				t.Errorf("%s: data at %v under the legend %v", name, m, lg)
				break
			}
		}
	}
	if withLegend < 4 {
		t.Errorf("only %d figures have a legend", withLegend)
	}
}

func overlaps(a, b vg.Rectangle) bool {
	return a.Min.X < b.Max.X && b.Min.X < a.Max.X && a.Min.Y < b.Max.Y && b.Min.Y < a.Max.Y
}

// TestCriteriaMarks: in the chart of the information criteria the chosen
// model is a large diamond and a model a rule rejected a hollow circle,
// in report.html's chart (symbols, and legend entries of the marks) and
// in the static figure (a filled four-cornered path and rings, and the
// same legend entries), as the caption says.
func TestCriteriaMarks(t *testing.T) {
	data, err := filepath.Abs(filepath.Join("testdata", "data", "small.csv"))
	if err != nil {
		t.Fatal(err)
	}
	src := `version: 1
title: marks
data: {file: ` + data + `}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
predictors: [pilot, female, cyclist]
models: {approaches: [cumulative], effects: [parallel, partial, nonparallel], links: [logit], partial: {free: [pilot]}}
tests: {parallel_lines: []}
rules:
  - reject_if_sparse: {per_parameter: 20}
  - choose: {by: bic}
`
	path := filepath.Join(t.TempDir(), "p.yaml")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	res := runPlan(t, path, 1)
	or := res.Outcomes[0]
	verdicts := map[string]string{}
	for _, f := range or.Fits {
		verdicts[f.ID] = f.Verdict
	}
	if verdicts["cumulative/nonparallel/logit"] != "rejected" || or.Chosen == nil {
		t.Fatalf("verdicts %v: the test needs a rejected model and a chosen one", verdicts)
	}
	c := criteriaChart(&doc{}, or, false)
	hasAll(t, "caption", c.caption, "the chosen model is the large diamond.", "Hollow circles are models a decision rule rejected")
	hasAll(t, "chart option", c.option, `"symbol":"diamond"`, `"symbol":"emptyCircle"`, `"name":"chosen model"`, `"name":"rejected by a rule"`,
		`"boundaryGap":["5%","5%"]`) // the y axis widened past the data before its ticks are rounded
	svg, err := c.static.svg()
	if err != nil {
		t.Fatal(err)
	}
	s := string(svg)
	hasAll(t, "figure", s, ">chosen model<", ">rejected by a rule<")
	// The diamond: a filled path of four corners (the gonum canvas writes
	// one M and three L before closing it); rings: stroked circles.
	if !regexp.MustCompile(`<path d="M[-0-9.]+,[-0-9.]+L[-0-9.]+,[-0-9.]+L[-0-9.]+,[-0-9.]+L[-0-9.]+,[-0-9.]+Z" style="fill:#`).MatchString(s) {
		t.Errorf("figure has no filled diamond")
	}
	// Two rings per rejected model drawn (AIC and BIC) and one in the
	// legend: circles stroked, not filled.
	rejected := 0
	for _, v := range verdicts {
		if v == "rejected" {
			rejected++
		}
	}
	rings := 0
	for _, m := range regexp.MustCompile(`<path d="M[^"]*A[^"]*"[^>]*>`).FindAllString(s, -1) {
		if !strings.Contains(m, "fill:#") {
			rings++
		}
	}
	if rings != 2*rejected+1 {
		t.Errorf("figure has %d rings, want %d (%d models rejected)", rings, 2*rejected+1, rejected)
	}
}

// TestFigureRangesPadded: a free end of a static figure's value axis lies
// beyond the data by a margin (no point on the frame) and at a labelled
// tick (no value beyond the last tick); a numeric x axis keeps a small
// margin; an end the figure fixes (probabilities from 0) stays where it
// is.
func TestFigureRangesPadded(t *testing.T) {
	f := newFigure("criteria", "", "criterion")
	f.xNames = []string{"a", "b", "c", "d"}
	ys := []float64{5030.2, 5299.7, 5120, 5064}
	f.series = []figSeries{{name: "AIC", color: "#336699", ys: ys, points: true, noLine: true, legend: true}}
	p, _, err := f.plot()
	if err != nil {
		t.Fatal(err)
	}
	lo, hi := slices.Min(ys), slices.Max(ys)
	margin := 0.04 * (hi - lo)
	if p.Y.Min > lo-margin || p.Y.Max < hi+margin {
		t.Errorf("y axis %g to %g, data %g to %g: no margin", p.Y.Min, p.Y.Max, lo, hi)
	}
	var major []float64
	for _, tk := range p.Y.Tick.Marker.Ticks(p.Y.Min, p.Y.Max) {
		if !tk.IsMinor() {
			major = append(major, tk.Value)
		}
	}
	if len(major) < 2 || major[0] > lo || major[len(major)-1] < hi {
		t.Errorf("labelled ticks %v do not reach the data %g to %g", major, lo, hi)
	}
	g := newFigure("probabilities", "age", "probability")
	g.yMin = 0
	g.series = []figSeries{{name: "p", color: "#336699", xs: []float64{18, 50, 80}, ys: []float64{0.2, 0.4, 0.3}, legend: true}}
	p, _, err = g.plot()
	if err != nil {
		t.Fatal(err)
	}
	if p.Y.Min != 0 || p.Y.Max < 0.4 || p.X.Min >= 18 || p.X.Max <= 80 || p.X.Min < 16 || p.X.Max > 82 {
		t.Errorf("probability figure: x %g to %g, y %g to %g", p.X.Min, p.X.Max, p.Y.Min, p.Y.Max)
	}
}
