package render

import (
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
