package render

import (
	"encoding/json"
	"strconv"
	"strings"
	"testing"
)

// chartLayout is what a chart's option and its media options set of its
// title and plot.
type chartLayout struct {
	Title struct {
		Text    string `json:"text"`
		Subtext string `json:"subtext"`
	} `json:"title"`
	Grid []struct {
		Top    string `json:"top"`
		Bottom string `json:"bottom"`
	} `json:"grid"`
}

// chartOption is what the tests below read of a chart's option.
type chartOption struct {
	chartLayout
	Legend struct {
		Data []json.RawMessage `json:"data"`
	} `json:"legend"`
	Series []struct {
		Name string `json:"name"`
	} `json:"series"`
	Tooltip []string `json:"ordplanTooltip"`
	Media   []struct {
		Query *struct {
			MaxWidth int `json:"maxWidth"`
		} `json:"query"`
		Option chartLayout `json:"option"`
	} `json:"media"`
}

// TestNarrowChartsWrapTitles: on a phone a chart is narrower than the
// chartNarrow pixels its layout assumes, and a title that fits one line
// there was cut at both sides. A chart whose title or subtitle would
// wrap otherwise at narrowText carries that layout as the library's
// media query below chartNarrow (each line within narrowText, the plot
// moved down by the lines added, the chart's element taller by as much,
// data-narrow), and the usual layout as the default the chart returns to;
// a chart whose text fits both widths has no media option.
func TestNarrowChartsWrapTitles(t *testing.T) {
	xs := make([]float64, chartPoints)
	for i := range xs {
		xs[i] = 18 + 1.8*float64(i)
	}
	long := &chartFrame{id: "chart-1", title: "Predicted probabilities by age (street_type = residential)",
		subtitle: "cumulative/constrained/logit; street_type = residential, other predictors at their means", height: 420, grid: predictionGrid, legend: []string{"low", "mid", "high"}}
	short := &chartFrame{id: "chart-2", title: "By age", height: 420, grid: predictionGrid, legend: []string{"low", "mid", "high"}}
	for _, f := range []*chartFrame{long, short} {
		c := newChart(f, "", newLineChart(f, xs))
		var opt chartOption
		if err := json.Unmarshal([]byte(c.option), &opt); err != nil {
			t.Fatal(err)
		}
		if f == short {
			if len(opt.Media) != 0 || c.narrow != 0 {
				t.Errorf("short title: media %+v, narrow height %d", opt.Media, c.narrow)
			}
			continue
		}
		if len(opt.Media) != 2 || opt.Media[0].Query != nil || opt.Media[1].Query == nil || opt.Media[1].Query.MaxWidth != chartNarrow-1 {
			t.Fatalf("media %+v, want the usual layout and the narrow one below %d pixels", opt.Media, chartNarrow)
		}
		wide, narrow := opt.Media[0].Option, opt.Media[1].Option
		if wide.Title.Text != opt.Title.Text || wide.Title.Subtext != opt.Title.Subtext || wide.Grid[0].Top != opt.Grid[0].Top {
			t.Errorf("the default media %+v is not the chart's layout %+v", wide, opt)
		}
		tl, sl := strings.Split(narrow.Title.Text, "\n"), strings.Split(narrow.Title.Subtext, "\n")
		for _, l := range tl {
			if w := textWidth(l, 1.12*titleSize); w > narrowText {
				t.Errorf("narrow title line %q is %.0f wide", l, w)
			}
		}
		for _, l := range sl {
			if w := textWidth(l, subtitleSize); w > narrowText {
				t.Errorf("narrow subtitle line %q is %.0f wide", l, w)
			}
		}
		if len(tl) != 2 || strings.Contains(opt.Title.Text, "\n") {
			t.Errorf("title %q, narrow %q: want one line and two", opt.Title.Text, narrow.Title.Text)
		}
		added := (len(tl)-1)*titleLine + (len(sl)-len(strings.Split(opt.Title.Subtext, "\n")))*subtitleLine
		top, _ := strconv.Atoi(opt.Grid[0].Top)
		ntop, _ := strconv.Atoi(narrow.Grid[0].Top)
		if ntop-top != added || c.narrow-c.height != added {
			t.Errorf("narrow plot top %d (usual %d), height %d (usual %d): want both %d more", ntop, top, c.narrow, c.height, added)
		}
		d := &doc{}
		d.parts = append(d.parts, part{charts: []*chart{c}})
		h, err := d.html("t")
		if err != nil {
			t.Fatal(err)
		}
		if want := `id="chart-1" style="height:` + strconv.Itoa(c.height) + `px" data-narrow="` + strconv.Itoa(c.narrow) + `"`; !strings.Contains(string(h), want) {
			t.Errorf("report.html has no %s", want)
		}
		if !strings.Contains(string(h), "el.clientWidth<"+strconv.Itoa(chartNarrow)+"?") {
			t.Errorf("the page's script does not take the narrow height below %d pixels", chartNarrow)
		}
	}
}

// TestCumulativeChartTakesNameRoom: the chart of cumulative probabilities
// names its y axis beside the axis, so its plot leaves no room above for
// the name, as the charts naming theirs above do, and takes that room
// itself: it starts yNameRoom higher than the chart of predicted
// probabilities beside it, with the same title, and the two charts are
// equally high, so that their x axes line up.
func TestCumulativeChartTakesNameRoom(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	h := string(files["report.html"])
	prob := map[string]int{} // title: plot top of the prediction chart
	pairs := 0
	for _, c := range drawCall.FindAllStringSubmatch(h, -1) {
		var opt chartOption
		if err := json.Unmarshal([]byte(c[2]), &opt); err != nil {
			t.Fatal(err)
		}
		top, _ := strconv.Atoi(opt.Grid[0].Top)
		height := chartHeight(t, h, c[1])
		rest, ok := strings.CutPrefix(opt.Title.Text, "Predicted probabilities by ")
		if ok {
			prob[rest] = top*10000 + height
			continue
		}
		rest, ok = strings.CutPrefix(opt.Title.Text, "Cumulative probabilities by ")
		if !ok {
			continue
		}
		p, ok := prob[rest]
		if !ok {
			t.Fatalf("%s: no chart of predicted probabilities before it", c[1])
		}
		pairs++
		if top != p/10000-yNameRoom || height != p%10000 {
			t.Errorf("%s: plot top %d, height %d; the predicted probabilities' %d, %d: want %d lower top, same height", c[1], top, height, p/10000, p%10000, yNameRoom)
		}
	}
	if pairs == 0 {
		t.Fatal("no chart of cumulative probabilities in the golden report")
	}
}

// chartHeight is the height in pixels of chart id's element in page h.
func chartHeight(t *testing.T, h, id string) int {
	t.Helper()
	_, rest, ok := strings.Cut(h, `id="`+id+`" style="height:`)
	if !ok {
		t.Fatalf("%s: no element", id)
	}
	n, err := strconv.Atoi(rest[:strings.Index(rest, "px")])
	if err != nil {
		t.Fatal(err)
	}
	return n
}

// TestCalibrationLegendGroupsCategories: the calibration chart's legend
// names each category once (its line and its points carry its name, so
// the entry shows and hides both) and then the marks in grey, the line
// (expected, drawn as a line alone, as the slope charts' interval is) and
// the point (observed): with nine categories eleven entries, not
// eighteen; the axis tooltip still names each series whole. A category
// named as a mark does not take the mark's entry.
func TestCalibrationLegendGroupsCategories(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	found := false
	for _, c := range drawCall.FindAllStringSubmatch(string(files["report.html"]), -1) {
		var opt chartOption
		if err := json.Unmarshal([]byte(c[2]), &opt); err != nil {
			t.Fatal(err)
		}
		if opt.Title.Text != "Observed and expected by group of predicted score" {
			continue
		}
		found = true
		var names []string
		lineOnly := map[string]bool{}
		for _, d := range opt.Legend.Data {
			var item struct {
				Name      string
				ItemStyle struct{ Opacity *float64 }
			}
			if json.Unmarshal(d, &item) != nil {
				json.Unmarshal(d, &item.Name)
			}
			names = append(names, item.Name)
			lineOnly[item.Name] = item.ItemStyle.Opacity != nil && *item.ItemStyle.Opacity == 0
		}
		want := "very_unsafe unsafe neutral safe very_safe expected observed"
		if strings.Join(names, " ") != want || !lineOnly["expected"] || lineOnly["observed"] || lineOnly["safe"] {
			t.Errorf("%s: legend %s, want %s, expected as its line alone", c[1], opt.Legend.Data, want)
		}
		count := map[string]int{}
		for _, s := range opt.Series {
			count[s.Name]++
		}
		if count["neutral"] != 2 || count["expected"] != 1 || count["observed"] != 1 {
			t.Errorf("%s: series %v, want each category's line and points under its name and one series per mark", c[1], count)
		}
		// The axis tooltip names each series whole (the page's script
		// makes its formatter of ordplanTooltip), since a category's two
		// series share its name.
		if len(opt.Tooltip) != len(opt.Series) {
			t.Fatalf("%s: tooltip names %q for %d series", c[1], opt.Tooltip, len(opt.Series))
		}
		for i, s := range opt.Series {
			want := s.Name + " expected"
			if i%2 == 1 {
				want = s.Name + " observed"
			}
			if i >= len(opt.Series)-2 {
				want = s.Name
			}
			if opt.Tooltip[i] != want {
				t.Errorf("%s: series %d (%s) named %q in the tooltip, want %q", c[1], i, s.Name, opt.Tooltip[i], want)
			}
		}
	}
	if !found {
		t.Fatal("no calibration chart in the golden report")
	}
	if e, o := calibrationMarks([]string{"low", "expected"}); e == "expected" || o == "observed" {
		t.Errorf("a category named expected: marks %q, %q", e, o)
	}
}
