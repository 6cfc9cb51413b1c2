package render

import (
	"encoding/json"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/go-echarts/go-echarts/v2/charts"
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
			MinWidth int `json:"minWidth"`
		} `json:"query"`
		Option chartLayout `json:"option"`
	} `json:"media"`
}

// TestNarrowChartsWrapTitles: on a phone a chart is narrower than the
// chartNarrow pixels its layout assumes, and a title that fits one line
// there was cut at both sides. A chart whose title or subtitle would
// wrap otherwise at narrowText carries that layout as the library's
// media query below the narrowest step it changes at (each line within
// narrowText, the plot moved down by the lines added, the chart's element
// taller by as much, data-narrow), and the usual layout as the default
// the chart returns to; a chart whose text fits every width has no media
// option.
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
			if len(opt.Media) != 0 || c.narrow != nil {
				t.Errorf("short title: media %+v, narrow heights %v", opt.Media, c.narrow)
			}
			continue
		}
		if len(c.narrow) == 0 || len(opt.Media) != 1+len(c.narrow)+len(c.wider) || opt.Media[0].Query != nil || c.narrow[0].below != chartNarrow {
			t.Fatalf("media %+v, steps %+v: want the usual layout and narrow ones from %d pixels down", opt.Media, c.narrow, chartNarrow)
		}
		for i, s := range c.narrow {
			if q := opt.Media[1+i].Query; q == nil || q.MaxWidth != s.below-1 {
				t.Errorf("media %d: query %+v, want below %d", 1+i, q, s.below)
			}
		}
		wide, narrow := opt.Media[0].Option, opt.Media[len(c.narrow)].Option
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
		if h := c.narrow[len(c.narrow)-1].height; ntop-top != added || h-c.height != added {
			t.Errorf("narrow plot top %d (usual %d), height %d (usual %d): want both %d more", ntop, top, h, c.height, added)
		}
		d := &doc{}
		d.parts = append(d.parts, part{charts: []*chart{c}})
		h, err := d.html("t")
		if err != nil {
			t.Fatal(err)
		}
		if want := `id="chart-1" style="height:` + strconv.Itoa(c.height) + `px" data-narrow="` + heights(c.narrow) + `"`; !strings.Contains(string(h), want) {
			t.Errorf("report.html has no %s", want)
		}
		if !strings.Contains(string(h), `if(el.clientWidth<+p[0]){h=p[1]+"px";}`) {
			t.Errorf("the page's script does not take the narrow heights")
		}
	}
}

// TestCumulativeChartTakesNameRoom: the chart of cumulative probabilities
// names its y axis beside the axis, so its plot leaves no room above for
// the name, as the charts naming theirs above do, and takes that room
// itself: it starts yNameRoom higher than the chart of predicted
// probabilities beside it, with the same title, and its plot ends where
// that one's does, so that their x axes line up. Its legend stands beside
// the plot, so it leaves no strip below the plot for one: it is
// legendStrip pixels shorter.
func TestCumulativeChartTakesNameRoom(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	h := string(files["report.html"])
	type layout struct{ top, plotEnd, height int }
	prob := map[string]layout{} // title: layout of the prediction chart
	pairs := 0
	for _, c := range drawCall.FindAllStringSubmatch(h, -1) {
		var opt chartOption
		if err := json.Unmarshal([]byte(c[2]), &opt); err != nil {
			t.Fatal(err)
		}
		top, _ := strconv.Atoi(opt.Grid[0].Top)
		bottom, _ := strconv.Atoi(opt.Grid[0].Bottom)
		height := chartHeight(t, h, c[1])
		l := layout{top, height - bottom, height}
		rest, ok := strings.CutPrefix(opt.Title.Text, "Predicted probabilities by ")
		if ok {
			prob[rest] = l
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
		if want := (layout{p.top - yNameRoom, p.plotEnd, p.height - legendStrip}); l != want {
			t.Errorf("%s: plot top, end and chart height %v; the predicted probabilities' %v: want %v", c[1], l, p, want)
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
	// The static figure has the same key: after the categories, the grey
	// line (expected) and the grey point (observed), entries alone.
	found = false
	for name, b := range files {
		s := string(b)
		if !strings.HasSuffix(name, ".svg") || !strings.Contains(s, ">Observed and expected by group of predicted score<") {
			continue
		}
		found = true
		key := regexp.MustCompile(`<path d="M[-0-9.,L]+" style="fill:none;stroke:#6B6B6B;[^"]*" />\s*<text[^>]*>expected</text>\s*<path d="M[-0-9.,]+A[^"]*Z" style="fill:#6B6B6B" />\s*<text[^>]*>observed</text>`)
		if !key.MatchString(s) || strings.Index(s, ">very_safe<") > strings.Index(s, ">expected<") {
			t.Errorf("%s: no grey key (a line, expected; a point, observed) after the categories in the static figure", name)
		}
	}
	if !found {
		t.Fatal("no static calibration figure in the golden report")
	}
	if e, o := calibrationMarks([]string{"low", "expected"}); e == "expected" || o == "observed" {
		t.Errorf("a category named expected: marks %q, %q", e, o)
	}
}

// stepAt is the narrow layout a chart w pixels wide takes: the last step
// it is narrower than, as the library applies the media queries in order
// and the page's script picks the height (nil: the usual layout).
func stepAt(steps []narrowStep, w int) *narrowStep {
	var at *narrowStep
	for i := range steps {
		if w < steps[i].below {
			at = &steps[i]
		}
	}
	return at
}

// TestNarrowLegendRowsFollowWidth: a legend at the bottom takes the rows
// its entries make at the width the chart has, not at the narrowest a
// phone gives it: on a screen of 400 pixels (a chart of 350) the entries
// of the calibration chart make two rows where a chart of 310 (a screen
// of 360) needs three, and the plot's bottom margin and the chart's
// height leave room for two there, three at 310 and at 270 (a screen of
// 320), so that the x axis's name does not stand a row's height above
// the legend, nor a legend is cut at 360.
func TestNarrowLegendRowsFollowWidth(t *testing.T) {
	legend := []string{"very_unsafe", "unsafe", "neutral", "safe", "very_safe", "expected", "observed"}
	at := func(chart int) int { return legendRows(legend, float64(chart-chartPadding), legendTextMax) }
	if at(350) != 2 || at(310) != 3 {
		t.Fatalf("the entries make %d rows at 350 pixels and %d at 310, want 2 and 3", at(350), at(310))
	}
	f := &chartFrame{id: "chart-1", title: "Observed and expected", height: 420, grid: predictionGrid, legend: legend}
	xs := []float64{1, 2, 3}
	c := newChart(f, "", newLineChart(f, xs))
	var opt chartOption
	if err := json.Unmarshal([]byte(c.option), &opt); err != nil {
		t.Fatal(err)
	}
	base, _ := strconv.Atoi(predictionGrid.Bottom)
	usual := f.height - (at(chartTextWidth+chartPadding)-1)*legendRow // the height with a one-row legend
	// The chart widths tried, each with the narrowest width of its step.
	for _, w := range [][2]int{{479, 400}, {400, 400}, {399, 350}, {350, 350}, {349, 310}, {310, 310}, {309, 270}, {270, 270}} {
		bottom, height := opt.Grid[0].Bottom, c.height
		if s := stepAt(c.narrow, w[0]); s != nil {
			bottom, height = s.option.Grid[0].Bottom, s.height
		}
		rows := at(w[1])
		if want := strconv.Itoa(base + (rows-1)*legendRow); bottom != want || height != usual+(rows-1)*legendRow {
			t.Errorf("%d px: plot bottom %s, height %d; want %d rows: bottom %s, height %d", w[0], bottom, height, rows, want, usual+(rows-1)*legendRow)
		}
		if rows < at(w[0]) {
			t.Errorf("%d px: %d rows, fewer than the legend takes", w[0], rows)
		}
	}
	// The media option lists the usual layout and each step in order.
	if len(opt.Media) != 1+len(c.narrow)+len(c.wider) {
		t.Fatalf("%d media entries for %d steps and %d wide ones", len(opt.Media), len(c.narrow), len(c.wider))
	}
	for i, s := range c.narrow {
		if q := opt.Media[1+i].Query; q == nil || q.MaxWidth != s.below-1 || opt.Media[1+i].Option.Grid[0].Bottom != s.option.Grid[0].Bottom {
			t.Errorf("media %d: %+v, want below %d with bottom %s", 1+i, opt.Media[1+i], s.below, s.option.Grid[0].Bottom)
		}
	}
	for i, s := range c.wider {
		m := opt.Media[1+len(c.narrow)+i]
		if q := m.Query; q == nil || q.MinWidth != s.from || q.MaxWidth != 0 || m.Option.Grid[0].Bottom != s.option.Grid[0].Bottom {
			t.Errorf("media %d: %+v, want from %d with bottom %s", 1+len(c.narrow)+i, m, s.from, s.option.Grid[0].Bottom)
		}
	}
}

// wideAt is the wide layout a chart w pixels wide takes: the last step
// it is as wide as (nil: the usual layout).
func wideAt(steps []wideStep, w int) *wideStep {
	var at *wideStep
	for i := range steps {
		if w >= steps[i].from {
			at = &steps[i]
		}
	}
	return at
}

// TestWideChartsTakeFewerRows: a chart alone in its row (the calibration
// chart, 1082 pixels wide on a screen of 1400) is laid out again at its
// width, not only at the 440 pixels of text a chart beside another has:
// its legend takes the one row it needs there instead of two, so the x
// axis's name does not stand some 40 pixels above the legend. The plot's
// bottom margin and the chart's height lose the row (a data-wide height
// the page's script takes), the plot keeps its size, and the library's
// media query applies the layout from the step's width up.
func TestWideChartsTakeFewerRows(t *testing.T) {
	legend := []string{"very_unsafe", "unsafe", "neutral", "safe", "very_safe", "expected", "observed"}
	at := func(chart int) int { return legendRows(legend, float64(chart-chartPadding), legendTextMax) }
	if at(chartTextWidth+chartPadding) != 2 || at(wideSteps[0]) != 1 {
		t.Fatalf("the entries make %d rows at the usual width and %d at %d pixels, want 2 and 1", at(chartTextWidth+chartPadding), at(wideSteps[0]), wideSteps[0])
	}
	f := &chartFrame{id: "chart-1", title: "Observed and expected by group of predicted score", subtitle: "cumulative/constrained/logit",
		height: 420, grid: predictionGrid, legend: legend}
	c := newChart(f, "", newLineChart(f, []float64{1, 2, 3}))
	var opt chartOption
	if err := json.Unmarshal([]byte(c.option), &opt); err != nil {
		t.Fatal(err)
	}
	base, _ := strconv.Atoi(predictionGrid.Bottom)
	usual := f.height - (at(chartTextWidth+chartPadding)-1)*legendRow // the height with a one-row legend
	for _, w := range []int{chartNarrow, wideSteps[0] - 1, wideSteps[0], 1082} {
		bottom, height := opt.Grid[0].Bottom, c.height
		if s := wideAt(c.wider, w); s != nil {
			bottom, height = s.option.Grid[0].Bottom, s.height
		}
		rows := at(chartTextWidth + chartPadding)
		if w >= wideSteps[0] {
			rows = at(w)
		}
		if want := strconv.Itoa(base + (rows-1)*legendRow); bottom != want || height != usual+(rows-1)*legendRow {
			t.Errorf("%d px: plot bottom %s, height %d; want %d rows: bottom %s, height %d", w, bottom, height, rows, want, usual+(rows-1)*legendRow)
		}
	}
	if len(opt.Media) != 1+len(c.narrow)+len(c.wider) || len(c.wider) == 0 {
		t.Fatalf("%d media entries for %d steps and %d wide ones", len(opt.Media), len(c.narrow), len(c.wider))
	}
	d := &doc{}
	d.parts = append(d.parts, part{charts: []*chart{c}})
	h, err := d.html("t")
	if err != nil {
		t.Fatal(err)
	}
	if want := `data-wide="` + wideHeights(c.wider) + `"`; !strings.Contains(string(h), want) {
		t.Errorf("report.html has no %s", want)
	}
	if !strings.Contains(string(h), `if(el.clientWidth>=+p[0]){h=p[1]+"px";}`) {
		t.Errorf("the page's script does not take the wide heights")
	}
}

// TestCumulativeLegendBelowWhenNarrow: the chart of cumulative
// probabilities has its legend beside the plot at its usual width, and
// below it in a chart narrower than chartNarrow, as the chart of predicted
// probabilities beside it does: one horizontal row from the left, the
// lowest category first, the plot's right margin that chart's, and the
// chart as high as that one at each width, so that their plots keep the
// same size. The usual layout, which the library returns to as the chart
// widens, puts the legend back beside the plot.
func TestCumulativeLegendBelowWhenNarrow(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	h := string(files["report.html"])
	type legend struct {
		Orient, Left, Right, Top, Bottom string
		Data                             []string
	}
	type layout struct {
		Grid []struct {
			Bottom, Right string
		}
		Legend *legend
	}
	var cum struct {
		layout
		Media []struct {
			Query *struct {
				MaxWidth int `json:"maxWidth"`
				MinWidth int `json:"minWidth"`
			}
			Option layout
		}
	}
	heightsOf := func(id string) string {
		_, rest, _ := strings.Cut(h, `id="`+id+`" `)
		_, rest, _ = strings.Cut(rest, `data-narrow="`)
		return rest[:strings.Index(rest, `"`)]
	}
	prev, pairs := "", 0
	for _, c := range drawCall.FindAllStringSubmatch(h, -1) {
		if !strings.Contains(c[2], `"text":"Cumulative probabilities by `) {
			prev = c[1]
			continue
		}
		pairs++
		if err := json.Unmarshal([]byte(c[2]), &cum); err != nil {
			t.Fatal(err)
		}
		if got, want := heightsOf(c[1]), heightsOf(prev); got != want {
			t.Errorf("%s: narrow heights %q, the predicted probabilities' (%s) %q", c[1], got, prev, want)
		}
		if len(cum.Media) < 2 || cum.Media[0].Option.Legend == nil || cum.Media[0].Option.Legend.Orient != "vertical" || cum.Media[0].Option.Legend.Right != "0" ||
			cum.Media[0].Option.Grid[0].Right != cum.Grid[0].Right || cum.Media[0].Option.Grid[0].Bottom != cum.Grid[0].Bottom {
			t.Fatalf("%s: the usual layout %+v does not put the legend back beside the plot (%+v)", c[1], cum.Media, cum.layout)
		}
		wide := cum.Media[0].Option.Legend.Data
		for _, m := range cum.Media[1:] {
			l := m.Option.Legend
			if m.Query.MinWidth > 0 { // wider than usual: beside the plot
				if l == nil || l.Orient != "vertical" || l.Right != "0" || m.Option.Grid[0].Right != cum.Grid[0].Right {
					t.Errorf("%s from %d: legend %+v, right margin %s, want beside the plot", c[1], m.Query.MinWidth, l, m.Option.Grid[0].Right)
				}
				continue
			}
			if l == nil || l.Orient != "horizontal" || l.Bottom != "0" || l.Left != "center" || l.Right != "auto" || l.Top != "auto" {
				t.Errorf("%s below %d: legend %+v, want below the plot", c[1], m.Query.MaxWidth+1, l)
				continue
			}
			if m.Option.Grid[0].Right != predictionGrid.Right {
				t.Errorf("%s below %d: plot's right margin %s, want %s", c[1], m.Query.MaxWidth+1, m.Option.Grid[0].Right, predictionGrid.Right)
			}
			for i, n := range l.Data {
				if n != wide[len(wide)-1-i] {
					t.Errorf("%s below %d: legend %v, want the lowest category first (beside the plot: %v)", c[1], m.Query.MaxWidth+1, l.Data, wide)
					break
				}
			}
		}
	}
	if pairs == 0 {
		t.Fatal("no chart of cumulative probabilities in the golden report")
	}
}

// TestNarrowBoundaryLabelsKeepApart: the boundary charts' x axis labels
// stand upright in one line at the usual width, and on a phone, where the
// chart is narrower, they are laid out again at each step: in two lines
// (lower and upper category), upright while they fit their share of the
// axis, turned where they do not, every label shown and none touching the
// next at the narrowest width the step serves (they overlapped at 270
// pixels, laid out for 440). The chart grows by as much as the labels
// reach further down (their name moves by as much), so the plot keeps
// its size.
func TestNarrowBoundaryLabelsKeepApart(t *testing.T) {
	cats := []string{"very_unsafe", "unsafe", "neutral", "safe", "very_safe"}
	q := len(cats) - 1
	bounds, turned := make([]string, q), make([]string, q)
	for m := range bounds {
		bounds[m] = cats[m] + "/" + cats[m+1]
		turned[m] = cats[m] + "/\n" + cats[m+1]
	}
	f := &chartFrame{id: "chart-1", title: "female", subtitle: "slope at each boundary", height: 340, grid: predictionGrid,
		legend:      []string{"nonparallel", "95% interval", "parallel"},
		xCategories: &categoryAxis{name: "boundary", names: bounds, turned: turned, size: 10, margin: 50, maxWidth: 130, left: "4%", turns: []float64{30, 45}}}
	l := charts.NewLine()
	l.SetGlobalOptions(f.opts()...)
	l.SetXAxis(f.xNames)
	c := newChart(f, "", l)
	type axis struct {
		Data      []string
		NameGap   int
		AxisLabel struct {
			Rotate   float64
			Interval any
		}
	}
	var opt struct {
		XAxis []axis
		Media []struct {
			Query  *struct{ MaxWidth int }
			Option struct{ XAxis []axis }
		}
	}
	if err := json.Unmarshal([]byte(c.option), &opt); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(opt.XAxis[0].Data, bounds) || opt.XAxis[0].AxisLabel.Rotate != 0 {
		t.Fatalf("usual width: labels %q turned %v, want %q upright", opt.XAxis[0].Data, opt.XAxis[0].AxisLabel.Rotate, bounds)
	}
	if len(c.narrow) == 0 || len(opt.Media) != 1+len(c.narrow) {
		t.Fatalf("%d media entries for narrow steps %+v", len(opt.Media), c.narrow)
	}
	if x := opt.Media[0].Option.XAxis; len(x) != 1 || !slices.Equal(x[0].Data, bounds) || x[0].NameGap != opt.XAxis[0].NameGap || x[0].AxisLabel.Rotate != 0 {
		t.Errorf("the usual layout %+v does not set the labels back (%+v)", x, opt.XAxis)
	}
	turns := 0
	for i, s := range c.narrow {
		// The narrowest chart this step serves: the next step's width.
		w := narrowSteps[len(narrowSteps)-1]
		if i+1 < len(c.narrow) {
			w = c.narrow[i+1].below
		}
		x := opt.Media[1+i].Option.XAxis[0]
		if !slices.Equal(x.Data, turned) || x.AxisLabel.Interval != 0.0 {
			t.Errorf("below %d: labels %q, interval %v: want every one in two lines", s.below, x.Data, x.AxisLabel.Interval)
		}
		slot := float64(w-chartPadding-50) / float64(q)
		lines := 2.0
		if r := x.AxisLabel.Rotate; r == 0 {
			for _, n := range x.Data {
				for _, line := range strings.Split(n, "\n") {
					if textWidth(line, 10) > slot-2 {
						t.Errorf("below %d: upright label line %q wider than its share of the axis (%.0f) at %d px", s.below, line, slot, w)
					}
				}
			}
		} else {
			turns++
			if slot*math.Sin(r*math.Pi/180) < 1.3*10*lines+2 {
				t.Errorf("below %d: labels turned %v degrees touch at %d px", s.below, r, w)
			}
		}
		// The plot keeps its size: the chart grows by the legend's rows
		// and the labels' reach, which moves the axis's name.
		rows := legendRows(f.legend, float64(w-chartPadding), legendTextMax) - legendRows(f.legend, chartTextWidth, legendTextMax)
		if got, want := s.height-c.height, rows*legendRow+x.NameGap-opt.XAxis[0].NameGap; got != want {
			t.Errorf("below %d: %d px taller, want %d (legend rows %d, name gap %d -> %d)", s.below, got, want, rows, opt.XAxis[0].NameGap, x.NameGap)
		}
	}
	if turns == 0 {
		t.Errorf("the labels never turn, even at %d px", narrowSteps[len(narrowSteps)-1])
	}
}

// TestNarrowCriteriaNamesEveryModel: the chart of information criteria
// names each of its models on a phone too (the golden plan's 8; the
// example plan's 13). Laid out once for 440
// pixels (names turned 30 degrees), a chart of 270 to 400 pixels had the
// library thin the names out, some models without one, and the first
// name reached so far left that the plot lost some 60 pixels. At each
// narrow step every name is shown, turned upright in its own slot at the
// narrowest width the step serves, the left margin the least (30), and
// the chart taller by the names' reach, so that the plot keeps its size.
func TestNarrowCriteriaNamesEveryModel(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	h := string(files["report.html"])
	type axis struct {
		Data      []string
		NameGap   int
		AxisLabel struct {
			Rotate   float64
			FontSize float64
			Interval any
		}
	}
	type layout struct {
		Grid  []struct{ Left, Bottom string }
		XAxis []axis
	}
	found := false
	for _, c := range drawCall.FindAllStringSubmatch(h, -1) {
		if !strings.Contains(c[2], `"text":"Information criteria of the candidate models"`) {
			continue
		}
		found = true
		var opt struct {
			layout
			Media []struct {
				Query  *struct{ MaxWidth, MinWidth int }
				Option layout
			}
		}
		if err := json.Unmarshal([]byte(c[2]), &opt); err != nil {
			t.Fatal(err)
		}
		usual := chartHeight(t, h, c[1])
		var steps []narrowStep
		_, rest, _ := strings.Cut(h, `id="`+c[1]+`" `)
		_, rest, _ = strings.Cut(rest, `data-narrow="`)
		for _, p := range strings.Fields(rest[:strings.Index(rest, `"`)]) {
			b, ht, _ := strings.Cut(p, ":")
			w, _ := strconv.Atoi(b)
			n, _ := strconv.Atoi(ht)
			steps = append(steps, narrowStep{below: w, height: n})
		}
		narrow := 0
		for i, m := range opt.Media {
			if m.Query == nil || m.Query.MaxWidth == 0 {
				continue
			}
			narrow++
			below := m.Query.MaxWidth + 1
			// The narrowest chart this step serves: the next step's width.
			w := narrowSteps[len(narrowSteps)-1]
			if i+1 < len(opt.Media) && opt.Media[i+1].Query != nil && opt.Media[i+1].Query.MaxWidth > 0 {
				w = opt.Media[i+1].Query.MaxWidth + 1
			}
			if len(m.Option.XAxis) != 1 {
				t.Fatalf("below %d: no layout of the model names", below)
			}
			x := m.Option.XAxis[0]
			if len(x.Data) != len(opt.XAxis[0].Data) || x.AxisLabel.Interval != 0.0 || x.AxisLabel.Rotate != 90 {
				t.Errorf("below %d: %d names, interval %v, turned %v: want %d, every one, upright", below, len(x.Data), x.AxisLabel.Interval, x.AxisLabel.Rotate, len(opt.XAxis[0].Data))
			}
			slot := float64(w-chartPadding-60) / float64(len(x.Data))
			if slot < 1.3*x.AxisLabel.FontSize+2 {
				t.Errorf("below %d: names of %v px in slots of %.1f at %d px touch", below, x.AxisLabel.FontSize, slot, w)
			}
			if m.Option.Grid[0].Left != "30" {
				t.Errorf("below %d: left margin %s, want 30", below, m.Option.Grid[0].Left)
			}
			s := stepAt(steps, below-1)
			if s == nil || s.height-usual < x.NameGap-opt.XAxis[0].NameGap {
				t.Errorf("below %d: chart height %v (usual %d) does not grow by the names' reach (name gap %d -> %d)", below, s, usual, opt.XAxis[0].NameGap, x.NameGap)
			}
		}
		if narrow == 0 {
			t.Errorf("%s: no narrow layout", c[1])
		}
	}
	if !found {
		t.Fatal("no information criteria chart in the golden report")
	}
}
