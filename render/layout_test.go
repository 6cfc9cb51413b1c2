package render

import (
	"encoding/json"
	"strings"
	"testing"

	"github.com/go-echarts/go-echarts/v2/charts"
	"gonum.org/v1/plot/vg"
)

// TestWrapAndFitWidth: a long name is broken at the best place that
// leaves a line at least a third full, every line fits, and what does
// not fit in the lines allowed ends in an ellipsis; a short one is left
// as it is.
func TestWrapAndFitWidth(t *testing.T) {
	m := widthAt(14)
	name := "has_children_under_twelve_living_in_household&region_of_residence_nuts2.Comunidad_de_Madrid"
	lines := wrap(name, 440, 2, m)
	want := []string{"has_children_under_twelve_living_in_household&", "region_of_residence_nuts2.Comunidad_de_Madrid"}
	if strings.Join(lines, "|") != strings.Join(want, "|") {
		t.Errorf("wrap: %q, want %q", lines, want)
	}
	for _, l := range wrap(strings.Repeat(name, 3), 440, 2, m) {
		if m(l) > 440 {
			t.Errorf("line %q is %g wide", l, m(l))
		}
	}
	if l := wrap(strings.Repeat(name, 3), 440, 2, m); !strings.HasSuffix(l[1], ellipsis) {
		t.Errorf("the rest of a text too long for two lines is not cut with an ellipsis: %q", l)
	}
	if l := wrap("pilot", 440, 2, m); len(l) != 1 || l[0] != "pilot" {
		t.Errorf("short title changed: %q", l)
	}
	if s := fitWidth("very_unsafe", 440, m); s != "very_unsafe" {
		t.Errorf("fitWidth changed a short name: %q", s)
	}
	if s := fitWidth("completely disagree with the proposal as described", 100, m); m(s) > 100 || !strings.HasSuffix(s, ellipsis) || !strings.HasPrefix(s, "completely") {
		t.Errorf("fitWidth: %q", s)
	}
}

// TestCategoryLabelsLayout: labels that fit stay upright and all shown;
// long ones turn, are cut at the width allowed, and push the left margin
// out by the first one's reach; very many are left to the library to thin.
func TestCategoryLabelsLayout(t *testing.T) {
	short := layoutCategories([]string{"very_unsafe/unsafe", "unsafe/neutral", "neutral/safe", "safe/very_safe"}, 10, chartTextWidth-50, 130)
	if short.rotate != 0 || short.width != 0 || short.interval != "0" || leftFor(short, "4%") != "4%" {
		t.Errorf("short labels: %+v", short)
	}
	long := []string{"completely disagree with the proposal as described/mostly disagree", "mostly disagree/slightly disagree", "slightly disagree/slightly agree"}
	l := layoutCategories(long, 10, chartTextWidth-50, 130)
	if l.rotate == 0 || l.width != 130 || l.interval != "0" || leftFor(l, "4%") == "4%" {
		t.Errorf("long labels: %+v", l)
	}
	two := layoutCategories([]string{"completely disagree with the proposal as described/\nmostly disagree", "a/\nb", "b/\nc"}, 10, chartTextWidth-50, 130)
	if two.rotate == 0 || two.extent <= l.extent {
		t.Errorf("two-line labels: %+v, one-line %+v", two, l)
	}
	if w := textWidth("completely disagree with the proposal as described/", 10); two.width != 130 || w < 130 {
		t.Errorf("two-line labels are not cut line by line: %+v", two)
	}
	many := make([]string, 60)
	for i := range many {
		many[i] = "a rather long boundary name"
	}
	if l := layoutCategories(many, 10, chartTextWidth-50, 130); l.interval != "" {
		t.Errorf("60 long labels all forced onto the axis: %+v", l)
	}
}

// TestLongNamesChartOptions: a chart with a long title and a legend of
// long names wraps the title, makes the chart taller by the extra lines
// and legend rows, cuts legend entries with an ellipsis and shows them
// whole in a tooltip, and gives the focus a value axis (the library puts
// its ticks at round values).
func TestLongNamesChartOptions(t *testing.T) {
	cats := []string{"completely disagree with the proposal as described", "mostly disagree", "slightly disagree (but open to discussion)", "slightly agree", "mostly agree", "completely agree with every part of the proposal"}
	fr := &chartFrame{id: "chart-1", title: "Predicted probabilities by respondent_age_in_completed_years_at_interview", subtitle: "short", height: 420, grid: predictionGrid, legend: cats}
	short := &chartFrame{id: "chart-2", title: "Predicted probabilities by age", height: 420, grid: predictionGrid, legend: []string{"low", "mid", "high"}}
	xs := make([]float64, chartPoints)
	for i := range xs {
		xs[i] = 18 + 1.8*float64(i)
	}
	for _, f := range []*chartFrame{fr, short} {
		l := newLineChart(f, xs)
		c := newChart(f, "", l)
		var opt struct {
			Title  struct{ Text string } `json:"title"`
			Legend struct {
				TextStyle struct {
					Width    int
					Overflow string
				} `json:"textStyle"`
				Tooltip struct{ Show bool } `json:"tooltip"`
			} `json:"legend"`
			XAxis []struct {
				Type  string `json:"type"`
				Scale bool   `json:"scale"`
			} `json:"xAxis"`
		}
		if err := json.Unmarshal([]byte(c.option), &opt); err != nil {
			t.Fatal(err)
		}
		if opt.Legend.TextStyle.Width != legendTextMax || opt.Legend.TextStyle.Overflow != "truncate" || !opt.Legend.Tooltip.Show {
			t.Errorf("%s: legend %+v", f.id, opt.Legend)
		}
		if opt.XAxis[0].Type != "value" || !opt.XAxis[0].Scale {
			t.Errorf("%s: x axis %+v, want a value axis from the data's range (ticks at round values)", f.id, opt.XAxis[0])
		}
		if f == fr && (!strings.Contains(opt.Title.Text, "\n") || c.height <= 420+yNameRoom) {
			t.Errorf("long title %q not wrapped or chart not taller (%d)", opt.Title.Text, c.height)
		}
		if f == short && (strings.Contains(opt.Title.Text, "\n") || c.height != 420+yNameRoom) {
			t.Errorf("short title %q wrapped or chart height not the frame's plus the y axis name's room (%d)", opt.Title.Text, c.height)
		}
	}
}

// TestStaticFigureLongNames: a static figure with long category names,
// a long title and long legend entries keeps its title within the image,
// its legend within a bounded width and most of its height for the data.
func TestStaticFigureLongNames(t *testing.T) {
	long := "completely disagree with the proposal as described"
	f := newFigure("has_children_under_twelve_living_in_household&region_of_residence_nuts2.Comunidad_de_Madrid: slope at each boundary", "boundary", "slope")
	f.xNames = []string{long + "/mostly disagree", "mostly disagree/" + long, "a/b", "b/c", "c/d"}
	f.series = []figSeries{{name: long, color: "#336699", ys: []float64{1, 2, 3, 2, 1}, points: true, legend: true}}
	_, lay, err := f.draw()
	if err != nil {
		t.Fatal(err)
	}
	if lay.width > figWidth+figLegendMax+6*legendGap+vg.Centimeter {
		t.Errorf("image %v wide: the legend is not cut", lay.width)
	}
	if h := lay.data.Size().Y; h < figHeight/3 {
		t.Errorf("data area %v high of %v: squeezed by the labels", h, figHeight)
	}
}

// newLineChart is a line chart over xs in frame f with one series per
// legend entry, its axis laid out as the prediction charts lay theirs.
func newLineChart(f *chartFrame, xs []float64) *charts.Line {
	l := charts.NewLine()
	l.SetGlobalOptions(append(f.opts(), charts.WithXAxisOpts(focusAxis("age")))...)
	for _, n := range f.legend {
		l.AddSeries(n, xyData(xs, xs))
	}
	return l
}

// Long category names in a legend of name+suffix entries are cut in
// their middle, leaving the suffix whole and the entries of different
// suffixes and names apart, within the legend's width; short names stay.
func TestSuffixedNamesKeepTheSuffix(t *testing.T) {
	names := []string{"strongly_disagree_with_the_statement", "somewhat_disagree", "somewhat_agree_with_the_statement_as_written", "strongly_agree"}
	got := suffixedNames(names, " expected", " observed")
	seen := map[string]bool{}
	for i, g := range got {
		for _, sf := range []string{" expected", " observed"} {
			if w := textWidth(g+sf, legendSize); w > legendTextMax {
				t.Errorf("%q is %.0f wide, more than %d", g+sf, w, legendTextMax)
			}
		}
		if seen[g] {
			t.Errorf("%q given twice", g)
		}
		seen[g] = true
		if textWidth(names[i]+" expected", legendSize) <= 0.9*legendTextMax {
			if g != names[i] {
				t.Errorf("short name %q changed to %q", names[i], g)
			}
			continue
		}
		if !strings.Contains(g, ellipsis) || !strings.HasPrefix(names[i], strings.Split(g, ellipsis)[0]) || !strings.HasSuffix(names[i], strings.Split(g, ellipsis)[1]) {
			t.Errorf("%q is not %q cut in its middle", g, names[i])
		}
	}
	if got := suffixedNames([]string{"a_very_long_category_name_that_ends_alike_one", "a_very_long_category_name_that_ends_alike_two"}, " expected"); got[0] == got[1] {
		t.Errorf("cut names coincide: %q", got)
	}
}
