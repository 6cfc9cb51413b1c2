package render

import (
	"fmt"
	"html/template"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

// chart is one chart of report.html: its element id, its size, a caption
// and the option object the chart library draws from.
type chart struct {
	number  int // figure number: charts are numbered in page order
	id      string
	mark    string       // the first line of the title (doc.mark), or ""
	height  int          // pixels; the width follows the page
	narrow  []narrowStep // its heights in narrower charts (nil: height at every width)
	wider   []wideStep   // its heights in wider charts (nil: height at every width)
	caption string
	option  string  // JSON
	static  *figure // the same chart as a static image for report.md (nil: none)
}

// with attaches the static version of the chart.
func (c *chart) with(f *figure) *chart {
	c.static = f
	f.mark = c.mark
	return c
}

// echartsChart is what every go-echarts chart type offers.
type echartsChart interface {
	Accept(charts.ConfigurationVisitor)
	Validate()
	JSONNotEscaped() template.HTML
}

// newChart takes the option JSON of a go-echarts chart drawn in frame
// fr. The JSON object's keys come out sorted and the numbers were rounded
// by val, so the same inputs give the same text. "<" is escaped so that
// no label can end the inline script the option is written into.
func newChart(fr *chartFrame, caption string, c echartsChart) *chart {
	c.Accept(fitting{width: fr.legendWidth(), narrow: fr.narrow, tooltip: fr.tooltipNames})
	c.Validate()
	js := strings.TrimSpace(string(c.JSONNotEscaped()))
	js = strings.ReplaceAll(js, "<", `\u003c`)
	var n int
	fmt.Sscanf(fr.id, "chart-%d", &n)
	ch := &chart{number: n, id: fr.id, mark: fr.mark, height: fr.height, caption: caption, option: js}
	if fr.narrow != nil {
		ch.narrow, ch.wider = fr.narrow.steps, fr.narrow.wider
	}
	return ch
}

// chartFrame is what every chart of the report shares: its fixed element
// id (go-echarts draws a random one otherwise), its title and subtitle,
// its height and the plot area's margins, and its legend.
type chartFrame struct {
	id, title, subtitle string
	mark                string // the title's own first line (doc.mark), or ""
	height              int    // pixels: with a one-line title and subtitle and a one-row legend
	grid                opts.Grid
	legend              []string // the legend's entries, at the bottom unless legendRight
	// legendRight: the legend stands right of the plot, one entry per
	// line, listed from the top, in a chart at least chartNarrow wide. In
	// a narrower one it stands below the plot, as the other charts' do, its
	// entries in the reverse order (the stacked layers' from the bottom up,
	// read from the left), and the plot's right margin is rightBelow. The
	// wide chart leaves no room below the plot for a legend (legendStrip).
	legendRight bool
	rightBelow  string
	// lineOnly are the legend entries of series drawn without points: their
	// legend icon is the line alone (dashed if the line is), without the
	// point the library puts on a line's icon. The legend then lists the
	// entries of legend, which must name every series.
	lineOnly map[string]bool
	// yNameBeside: the y axis's name is turned beside the axis, so the
	// plot leaves it no room above (yNameRoom) but takes that room itself:
	// the chart keeps the height of the charts beside it, and its x axis
	// their place.
	yNameBeside bool
	narrow      *narrowLayout // set by opts: the layouts in narrower charts, if others
	// tooltipNames are the names the axis tooltip gives the series, in
	// their order, where series share a name (nil: their own names).
	tooltipNames []string
	// xCategories: the x axis is of categories whose labels the frame
	// lays out at each width (nil: the chart sets its own x axis). The
	// chart's height is then that with upright labels: turned labels make
	// it taller by their extent, so that the plot keeps its size.
	xCategories *categoryAxis
	xNames      []string // set by opts: xCategories' labels at the chart's usual width
}

// categoryAxis is a category x axis laid out by its chart's width
// (layoutCategories): its labels upright while they fit their share of
// the axis, else turned, in the lines of turned if given (a boundary's
// lower and upper category), so that a phone's narrow chart turns
// labels that stand upright in a wider one.
type categoryAxis struct {
	name     string   // the axis's name, below the labels
	names    []string // the labels
	turned   []string // the labels when they turn (nil: names)
	size     float64  // font size
	margin   float64  // pixels of the chart's text width the axis does not take
	maxWidth float64  // the most a turned label takes
	left     string   // the plot's left margin while labels stand upright
	turns    []float64
	// phoneSize and phoneTurns, if given, are the font size and the
	// angles tried in a chart narrower than chartNarrow, where many
	// labels turned as in a wider chart would crowd (the library then
	// thins them out) and reach far to the left of the plot.
	phoneSize  float64
	phoneTurns []float64
}

// at is the axis's labels and their layout in a text width of width
// pixels.
func (a *categoryAxis) at(width float64) ([]string, categoryLabels) {
	size, turns := a.size, a.turns
	if width < chartTextWidth && a.phoneTurns != nil {
		size, turns = a.phoneSize, a.phoneTurns
	}
	l := layoutCategories(a.names, size, width-a.margin, a.maxWidth, turns...)
	if l.rotate != 0 && a.turned != nil {
		return a.turned, layoutCategories(a.turned, size, width-a.margin, a.maxWidth, turns...)
	}
	return a.names, l
}

// narrowXAxis is what a narrow chart changes of its category x axis: every
// field given, so that the usual layout sets each back.
type narrowXAxis struct {
	Data      []string    `json:"data"`
	NameGap   int         `json:"nameGap"`
	AxisLabel narrowLabel `json:"axisLabel"`
}

type narrowLabel struct {
	Rotate   float64 `json:"rotate"`
	FontSize int     `json:"fontSize"`
	Interval any     `json:"interval"` // 0 or "auto"
	Width    int     `json:"width,omitempty"`
	Overflow string  `json:"overflow"`
	Ellipsis string  `json:"ellipsis"`
}

// xAxisOf is the narrow option's x axis for these labels and layout.
func (a *categoryAxis) xAxisOf(names []string, l categoryLabels) *[1]narrowXAxis {
	x := narrowXAxis{Data: names, NameGap: int(l.extent) + 7,
		AxisLabel: narrowLabel{Rotate: l.rotate, FontSize: int(l.size), Interval: "auto", Overflow: "none", Ellipsis: ellipsis}}
	if l.interval == "0" {
		x.AxisLabel.Interval = 0
	}
	if l.width > 0 {
		x.AxisLabel.Width, x.AxisLabel.Overflow = int(l.width), "truncate"
	}
	return &[1]narrowXAxis{x}
}

// narrowLayout is a chart's layouts when it is narrower than chartNarrow
// pixels (on a phone): at each of narrowSteps, the title and subtitle
// wrapped to the step's text width, the plot's top and bottom margins
// moved by the lines and legend rows that makes, and the chart's height,
// so that the plot keeps its size.
// Its layouts when it is wider than chartNarrow (alone in its row) are
// kept with them: at each of wideSteps, the title, subtitle and legend
// laid out in the width the chart has.
type narrowLayout struct {
	wide  narrowOption // the options at the chart's usual width
	steps []narrowStep // from the widest; only those that change the layout
	wider []wideStep   // from the narrowest; only those that change the layout
}

// wideStep is a chart's layout when it is at least from pixels wide (up
// to the next step's width).
type wideStep struct {
	from   int
	height int
	option narrowOption
}

// narrowStep is a chart's layout when it is narrower than below pixels
// (down to the next step's width).
type narrowStep struct {
	below  int
	height int
	option narrowOption
}

// narrowOption is what a narrow chart changes of the chart's option: the
// library's media query (maxWidth, on the chart's own width) applies it.
type narrowOption struct {
	Title struct {
		Text    string `json:"text"`
		Subtext string `json:"subtext"`
	} `json:"title"`
	Grid [1]struct {
		Top    string `json:"top,omitempty"`
		Bottom string `json:"bottom,omitempty"`
		Right  string `json:"right,omitempty"`
		Left   string `json:"left,omitempty"`
	} `json:"grid"`
	Legend *narrowLegend   `json:"legend,omitempty"`
	XAxis  *[1]narrowXAxis `json:"xAxis,omitempty"`
}

// narrowLegend is where a legend that moves (chartFrame.legendRight)
// stands: every side is given, "auto" for the free ones, so that the
// library takes these alone.
type narrowLegend struct {
	Orient string   `json:"orient"`
	Left   string   `json:"left"`
	Right  string   `json:"right"`
	Top    string   `json:"top"`
	Bottom string   `json:"bottom"`
	Data   []string `json:"data"`
}

func newNarrowOption(title, subtitle, top, bottom string) narrowOption {
	var o narrowOption
	o.Title.Text, o.Title.Subtext = title, subtitle
	o.Grid[0].Top, o.Grid[0].Bottom = top, bottom
	return o
}

// media is the library's media option: the usual layout (a media entry
// without a query, which the library goes back to when the chart widens
// or narrows to its usual width again), then each narrower one below its
// width and each wider one from its width. The library applies every
// entry whose query holds, in order, so that the narrowest step a chart
// is narrower than, or the widest it is as wide as, has the last word.
func (n *narrowLayout) media() []any {
	type query struct {
		MaxWidth int `json:"maxWidth,omitempty"`
		MinWidth int `json:"minWidth,omitempty"`
	}
	out := []any{struct {
		Option narrowOption `json:"option"`
	}{n.wide}}
	for _, s := range n.steps {
		out = append(out, struct {
			Query  query        `json:"query"`
			Option narrowOption `json:"option"`
		}{query{MaxWidth: s.below - 1}, s.option})
	}
	for _, s := range n.wider {
		out = append(out, struct {
			Query  query        `json:"query"`
			Option narrowOption `json:"option"`
		}{query{MinWidth: s.from}, s.option})
	}
	return out
}

// wideHeights is the data-wide attribute of the chart's element: each
// wide step's width and height, "WIDTH:HEIGHT", from the narrowest, for
// the page's script (drawScript).
func wideHeights(steps []wideStep) string {
	return widthHeights(len(steps), func(i int) (int, int) { return steps[i].from, steps[i].height })
}

// heights is the data-narrow attribute of the chart's element: each
// step's width and height, "WIDTH:HEIGHT", from the widest, for the
// page's script (drawScript).
func heights(steps []narrowStep) string {
	return widthHeights(len(steps), func(i int) (int, int) { return steps[i].below, steps[i].height })
}

// widthHeights is n pairs "WIDTH:HEIGHT" separated by spaces.
func widthHeights(n int, at func(i int) (w, h int)) string {
	var b strings.Builder
	for i := range n {
		if i > 0 {
			b.WriteByte(' ')
		}
		w, h := at(i)
		fmt.Fprintf(&b, "%d:%d", w, h)
	}
	return b.String()
}

// legendItem is a legend entry whose point is hidden (chartFrame.lineOnly).
type legendItem struct {
	Name      string `json:"name"`
	ItemStyle struct {
		Opacity float64 `json:"opacity"`
	} `json:"itemStyle"`
}

// legendData is the legend's entries when some are lines alone (nil:
// the library takes the series' names).
func (fr *chartFrame) legendData() any {
	if len(fr.lineOnly) == 0 {
		return nil
	}
	var out []any
	seen := map[string]bool{}
	for _, n := range fr.legend {
		if seen[n] {
			continue
		}
		seen[n] = true
		if fr.lineOnly[n] {
			out = append(out, legendItem{Name: n}) // opacity 0: the point is not drawn
		} else {
			out = append(out, n)
		}
	}
	return out
}

// legendWidth is the most a legend entry may take before an ellipsis
// shortens it: less beside the plot, where it narrows the plot.
func (fr *chartFrame) legendWidth() int {
	if fr.legendRight {
		return legendRightMax
	}
	return legendTextMax
}

// opts are the frame's options: no animation (the chart is complete as
// soon as it is drawn), an axis tooltip, the title and subtitle wrapped to
// the chart's width and a legend at the bottom. Lines of the titles and
// rows of the legend beyond the first make the chart taller (fr.height
// grows) so that the plot keeps its size.
func (fr *chartFrame) opts() []charts.GlobalOpts {
	// The layout at a text width, with the legend below the plot or not:
	// the title and subtitle, the pixels added above the plot and below
	// it, and the x axis's labels if the frame lays them out.
	type layout struct {
		title, sub   string
		above, below int
		labels       int // pixels turned labels add below the plot, inside its grid (ContainLabel)
		xNames       []string
		xLabels      categoryLabels
	}
	room := func(width float64, legendBelow bool) layout {
		var l layout
		l.title, l.sub, l.above = chartTitle(fr.mark, fr.title, fr.subtitle, width)
		// The y axis's name stands above the plot, below the subtitle,
		// which may reach over it at phone width: the plot moves down
		// clear of it.
		l.above += yNameRoom
		if legendBelow {
			l.below = (legendRows(fr.legend, width, float64(fr.legendWidth())) - 1) * legendRow
		} else {
			l.below = -legendStrip
		}
		if a := fr.xCategories; a != nil {
			l.xNames, l.xLabels = a.at(width)
			l.labels = int(l.xLabels.extent - l.xLabels.upright(a.size))
		}
		return l
	}
	same := func(a, b layout) bool {
		return a.title == b.title && a.sub == b.sub && a.above == b.above && a.below == b.below && a.labels == b.labels &&
			slices.Equal(a.xNames, b.xNames) && a.xLabels == b.xLabels
	}
	wl := room(chartTextWidth, !fr.legendRight)
	grid := fr.grid
	grid.ContainLabel = opts.Bool(true)
	top, bottom := grid.Top, grid.Bottom
	beside := 0 // the room the y axis's name leaves the plot
	if fr.yNameBeside {
		beside = yNameRoom
	}
	option := func(l layout) narrowOption {
		o := newNarrowOption(l.title, l.sub, addPixels(top, 60, l.above-beside), addPixels(bottom, 60, l.below))
		if a := fr.xCategories; a != nil {
			o.Grid[0].Left = leftFor(l.xLabels, a.left)
			o.XAxis = a.xAxisOf(l.xNames, l.xLabels)
		}
		return o
	}
	wide := option(wl)
	grid.Top, grid.Bottom = wide.Grid[0].Top, wide.Grid[0].Bottom
	if fr.xCategories != nil {
		grid.Left = wide.Grid[0].Left
	}
	height := fr.height
	fr.height += wl.above + wl.below + wl.labels
	var legend *narrowLegend
	if fr.legendRight {
		wide.Grid[0].Right = grid.Right
		wide.Legend = &narrowLegend{Orient: "vertical", Left: "auto", Right: "0", Top: "middle", Bottom: "auto", Data: fr.legend}
		up := slices.Clone(fr.legend)
		slices.Reverse(up)
		legend = &narrowLegend{Orient: "horizontal", Left: "center", Right: "auto", Top: "auto", Bottom: "0", Data: up}
	}
	n := &narrowLayout{wide: wide}
	last := chartNarrow
	ll := wl
	for _, w := range narrowSteps {
		nl := room(float64(w-chartPadding), true)
		if !same(nl, ll) {
			o := option(nl)
			if legend != nil {
				o.Grid[0].Right, o.Legend = fr.rightBelow, legend
			}
			n.steps = append(n.steps, narrowStep{below: last, height: height + nl.above + nl.below + nl.labels, option: o})
			ll = nl
		}
		last = w
	}
	ll = wl
	for _, w := range wideSteps {
		nl := room(float64(w-chartPadding), !fr.legendRight)
		if !same(nl, ll) {
			o := option(nl)
			if fr.legendRight {
				o.Grid[0].Right, o.Legend = wide.Grid[0].Right, wide.Legend
			}
			n.wider = append(n.wider, wideStep{from: w, height: height + nl.above + nl.below + nl.labels, option: o})
			ll = nl
		}
	}
	if len(n.steps) > 0 || len(n.wider) > 0 {
		fr.narrow = n
	}
	fr.xNames = wl.xNames
	out := []charts.GlobalOpts{
		charts.WithInitializationOpts(opts.Initialization{ChartID: fr.id, Width: "100%", Height: strconv.Itoa(fr.height) + "px"}),
		charts.WithAnimation(false),
		charts.WithTitleOpts(opts.Title{Title: wl.title, Subtitle: wl.sub, Left: "center",
			TitleStyle: &opts.TextStyle{FontSize: titleSize, LineHeight: titleLine}, SubtitleStyle: &opts.TextStyle{FontSize: subtitleSize, LineHeight: subtitleLine}}),
		charts.WithTooltipOpts(opts.Tooltip{Show: opts.Bool(true), Trigger: "axis"}),
		charts.WithLegendOpts(opts.Legend{Show: opts.Bool(true), Bottom: "0", Data: fr.legendData()}),
		charts.WithGridOpts(grid),
	}
	if a := fr.xCategories; a != nil {
		out = append(out, charts.WithXAxisOpts(opts.XAxis{Type: "category", Name: a.name, NameLocation: "middle", NameGap: int(wl.xLabels.extent) + 7,
			AxisLabel: wl.xLabels.axisLabel(int(wl.xLabels.size))}))
	}
	return out
}

// addPixels adds px to a margin in pixels ("" stands for def); a margin
// in per cent is a share of the chart and is left as it is.
func addPixels(margin string, def, px int) string {
	if px == 0 {
		return margin
	}
	v := def
	if margin != "" {
		n, err := strconv.Atoi(margin)
		if err != nil {
			return margin
		}
		v = n
	}
	return strconv.Itoa(v + px)
}

// val rounds a number to six significant digits for a chart; a value
// that is not finite becomes the library's mark for a missing point.
func val(x float64) any {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "-"
	}
	v, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 6, 64), 64)
	if v == 0 {
		return 0.0 // no negative zero
	}
	return v
}

// lineData turns values into line points.
func lineData(vs []float64) []opts.LineData {
	out := make([]opts.LineData, len(vs))
	for i, v := range vs {
		out[i] = opts.LineData{Value: val(v)}
	}
	return out
}

// xyData turns x, y pairs into points of a line on a value axis.
func xyData(xs, ys []float64) []opts.LineData {
	out := make([]opts.LineData, len(xs))
	for i := range xs {
		out[i] = opts.LineData{Value: []any{val(xs[i]), val(ys[i])}}
	}
	return out
}

// stackData turns x, y pairs into points [y, x] of a stacked line on a
// value x axis, read through stackEncode: the library stacks the first
// numeric dimension of a point, point by point (by index) when no axis is
// of categories, so y must come first.
func stackData(xs, ys []float64) []opts.LineData {
	out := make([]opts.LineData, len(xs))
	for i := range xs {
		out[i] = opts.LineData{Value: []any{val(ys[i]), val(xs[i])}}
	}
	return out
}

// stackEncode reads the points of stackData: x from the second dimension,
// y from the first.
var stackEncode = charts.WithEncodeOpts(opts.Encode{X: 1, Y: 0})

// lineStyle is a series style: colour, width, dashed or not, symbols or not.
func lineStyle(color string, width float32, dashed, symbols bool) []charts.SeriesOpts {
	kind := "solid"
	if dashed {
		kind = "dashed"
	}
	o := []charts.SeriesOpts{
		charts.WithLineStyleOpts(opts.LineStyle{Color: color, Width: width, Type: kind}),
		charts.WithItemStyleOpts(opts.ItemStyle{Color: color}),
		charts.WithLineChartOpts(opts.LineChart{ShowSymbol: opts.Bool(symbols), Symbol: "circle"}),
	}
	return o
}

// categoryAnchors are a sequential palette, light to dark: the lowest
// category is the lightest and the highest the darkest, so that the order
// of the categories reads from the colours alone; categoryColor spreads
// the categories of an outcome over it. Even the lightest stands out on
// white.
var categoryAnchors = [][3]float64{{0xc9, 0xb2, 0x4a}, {0x8c, 0xb3, 0x5a}, {0x3e, 0x9a, 0x7a}, {0x2a, 0x6f, 0x8e}, {0x2c, 0x2f, 0x6b}}

// categoryColor is the colour of category j of J.
func categoryColor(j, J int) string {
	if J < 2 {
		return "#2471a3"
	}
	t := float64(j) / float64(J-1) * float64(len(categoryAnchors)-1)
	i := min(int(t), len(categoryAnchors)-2)
	f := t - float64(i)
	var rgb [3]int
	for c := range rgb {
		rgb[c] = int(math.Round(categoryAnchors[i][c]*(1-f) + categoryAnchors[i+1][c]*f))
	}
	return fmt.Sprintf("#%02x%02x%02x", rgb[0], rgb[1], rgb[2])
}

// Colours of the series of the boundary charts: blue, salmon and near
// black, which stay apart for readers with red-green or blue-yellow colour
// blindness too (TestBoundaryColoursApartUnderColourBlindness); the chosen
// model's slopes were green, which red-green colour blindness makes the
// parallel line's colour.
const (
	colorEstimate = "#4269d0"
	colorParallel = "#ff725c"
	colorChosen   = "#2b2b2b"
	colorMark     = "#6b6b6b" // legend entries of a mark alone, not of a series
)
