package render

import (
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

// Text in the charts: the interactive charts of report.html cannot measure
// their text before the page draws them, so their layout (margins, label
// angles, lines of a title) is computed from an estimate of each text's
// width at the narrowest width a chart takes on the page; the static
// figures measure their font. Long names are wrapped or shortened with an
// ellipsis; the full name stays in the tooltip, the caption or the table.

// chartTextWidth is the width, in pixels, that a chart's title, subtitle
// and legend may take: a chart of report.html is at least chartNarrow
// pixels wide (the chart-figure style) less its padding, except on a
// narrow screen (a phone), where the chart takes the screen's width. A
// chart narrower than chartNarrow is laid out again at each of
// narrowSteps, the widths it may take on a phone, each layout serving
// from its width up to the next wider step (narrowLayout): the text of a
// chart of w pixels gets w-chartPadding (the padding the library leaves
// at each side of the title and legend). A screen of 400 makes a chart
// of 350, one of 360 a chart of 310; the narrowest, narrowText, is a
// chart 270 pixels wide on a screen of 320, the narrowest phones'. A
// chart wider than the chartNarrow it is laid out for (alone in its row,
// as a group's only chart is, or on a screen where a group's charts stand
// one under another) is laid out again at each of wideSteps, each layout
// serving from its width up (a chart alone on a wide screen is about 1080
// pixels wide), so that its title and legend take the fewer lines that
// width gives them instead of leaving those of a narrower chart empty.
const (
	chartTextWidth = 440
	chartNarrow    = 480
	chartPadding   = 10
	narrowText     = 270 - chartPadding
)

var narrowSteps = [...]int{400, 350, 310, narrowText + chartPadding}

var wideSteps = [...]int{640, 800, 1000}

// ellipsis ends a shortened text.
const ellipsis = "…"

// textWidth estimates the width in pixels of s in a sans-serif font of
// size px: generous for capitals and wide letters, so that a text it
// says fits does fit.
func textWidth(s string, px float64) float64 {
	w := 0.0
	for _, r := range s {
		switch {
		case unicode.Is(unicode.Han, r) || unicode.Is(unicode.Hangul, r) || unicode.Is(unicode.Hiragana, r) || unicode.Is(unicode.Katakana, r):
			w += 1
		case strings.ContainsRune("mwMW@%", r):
			w += 0.9
		case unicode.IsUpper(r):
			w += 0.68
		case strings.ContainsRune("ijlftr.,:;|!' ()[]/", r):
			w += 0.3
		default: // digits, the underscore, most lower-case letters
			w += 0.53
		}
	}
	return w * px
}

// widthAt is textWidth at one font size, as a measure of texts.
func widthAt(px float64) func(string) float64 {
	return func(s string) float64 { return textWidth(s, px) }
}

// fitWidth shortens s at its end, with an ellipsis, to at most w wide by
// measure m; a text that fits is returned as it is.
func fitWidth(s string, w float64, m func(string) float64) string {
	if m(s) <= w {
		return s
	}
	rs := []rune(s)
	for n := len(rs) - 1; n > 0; n-- {
		t := strings.TrimRight(string(rs[:n]), " _-/&.,") + ellipsis
		if m(t) <= w {
			return t
		}
	}
	return ellipsis
}

// fitMiddle shortens s to at most w wide by measure m, cutting its middle
// with an ellipsis so that both its ends show (the end is where names of
// one kind often differ).
func fitMiddle(s string, w float64, m func(string) float64) string {
	if m(s) <= w {
		return s
	}
	rs := []rune(s)
	for n := len(rs) - 1; n > 1; n-- {
		h := (n + 1) / 2
		t := strings.TrimRight(string(rs[:h]), " _-/&.,") + ellipsis + strings.TrimLeft(string(rs[len(rs)-(n-h):]), " _-/&.,")
		if m(t) <= w {
			return t
		}
	}
	return ellipsis
}

// suffixedNames gives each of names as the legend entries name+suffix
// (one entry per suffix) show it, each entry within legendTextMax: a
// name too long is cut in its middle (fitMiddle) so that the suffix,
// which tells one name's entries apart, stays whole, instead of the
// library cutting the entry's end, suffix included. Without suffixes,
// names that differ at their ends (the calibration chart's categories)
// keep their ends apart so. The names stay whole if cut names would
// coincide (the library then cuts them).
func suffixedNames(names []string, suffixes ...string) []string {
	m := widthAt(legendSize)
	out := make([]string, len(names))
	seen := map[string]bool{}
	for i, n := range names {
		// A tenth kept free: textWidth's estimate falls short of some
		// names of lower-case letters and underscores.
		room := 0.9 * legendTextMax
		for _, sf := range suffixes {
			room = min(room, 0.9*legendTextMax-m(sf))
		}
		out[i] = fitMiddle(n, room, m)
		if seen[out[i]] {
			return slices.Clone(names)
		}
		seen[out[i]] = true
	}
	return out
}

// breakAfter ranks the characters a line may break after: a space or an
// ampersand first, then a slash, a full stop or a comma, then an
// underscore or a hyphen (0: no break).
func breakAfter(r rune) int {
	switch r {
	case ' ', '&':
		return 3
	case '/', '.', ',', ';':
		return 2
	case '_', '-':
		return 1
	}
	return 0
}

// wrap breaks s into at most n lines, each at most w wide by measure m,
// after the best-ranked break that leaves the line at least half full;
// what does not fit in n lines is clipped on the last. Lines lose the
// spaces they break at.
func wrap(s string, w float64, n int, m func(string) float64) []string {
	var lines []string
	rest := strings.TrimSpace(s)
	for len(lines) < n-1 && m(rest) > w {
		cut, rank := -1, 0
		for i, r := range rest {
			end := i + utf8.RuneLen(r)
			if m(strings.TrimSpace(rest[:end])) > w {
				break
			}
			k := breakAfter(r)
			if k == 0 || end == len(rest) {
				continue
			}
			if m(rest[:end]) < w/3 {
				k = min(k, 1) // a break this early only if nothing better comes
			}
			if k >= rank {
				cut, rank = end, k
			}
		}
		if cut < 0 {
			break // no break fits: clip the rest
		}
		lines = append(lines, strings.TrimSpace(rest[:cut]))
		rest = strings.TrimSpace(rest[cut:])
	}
	return append(lines, fitWidth(rest, w, m))
}

// Title and subtitle of the interactive charts, and the room they take.
const (
	titleSize      = 14
	titleLine      = 18 // pixels per line of the title
	subtitleSize   = 12
	subtitleLine   = 15
	titleLines     = 2 // at most
	subtitleLines  = 2
	legendSize     = 12
	legendRow      = 22          // pixels per row of a legend at the bottom
	legendTextMax  = 200         // pixels an entry of a legend at the bottom may take
	legendRightMax = 120         // pixels an entry of a legend beside the plot may take
	legendIconRoom = 25 + 5 + 10 // the icon, its gap to the text, the gap to the next entry
	yNameRoom      = 20          // pixels between the subtitle and the plot for the y axis's name
	legendStrip    = 26          // pixels a one-row legend at the bottom takes below the x axis's name (predictionGrid)
)

// chartTitle wraps a chart's title and subtitle to a text width of
// width pixels; extra is how many pixels more than one line each they
// take.
func chartTitle(mark, title, subtitle string, width float64) (t, s string, extra int) {
	tl := wrap(title, width, titleLines, widthAt(1.12*titleSize)) // bold
	if mark != "" {
		tl = append([]string{mark}, tl...)
	}
	extra = (len(tl) - 1) * titleLine
	if subtitle != "" {
		sl := wrap(subtitle, width, subtitleLines, widthAt(subtitleSize))
		extra += (len(sl) - 1) * subtitleLine
		s = strings.Join(sl, "\n")
	}
	return strings.Join(tl, "\n"), s, extra
}

// legendRows is how many rows a legend at the bottom of a chart takes for
// these entries (each shown at most most pixels wide) in a text width of
// width pixels.
func legendRows(names []string, width, most float64) int {
	rows, x := 1, 0.0
	seen := map[string]bool{}
	for _, n := range names {
		if seen[n] {
			continue
		}
		seen[n] = true
		w := min(textWidth(n, legendSize), most) + legendIconRoom
		if x > 0 && x+w > width {
			rows++
			x = 0
		}
		x += w
	}
	return rows
}

// categoryLabels is the layout of the labels of a category axis: upright
// when every label fits its share of the axis, else turned by the first
// of turns (degrees; none given: 30) at which they keep apart, and
// shortened to at most maxWidth (the tooltip still gives the whole name),
// with every label shown while they keep apart and the library thinning
// them out, at the last angle, beyond that.
type categoryLabels struct {
	rotate   float64 // degrees
	width    float64 // pixels a label may take (0: all of it)
	interval string  // "0": every label; "": the library's choice
	extent   float64 // pixels from the axis line to the labels' far edge
	overhang float64 // pixels the first label reaches left of its tick
	size     float64 // the labels' font size
}

func layoutCategories(names []string, size, axisWidth, maxWidth float64, turns ...float64) categoryLabels {
	if len(turns) == 0 {
		turns = []float64{30}
	}
	// A label may have several lines; the library cuts each at the width.
	lineWidth := func(n string) float64 {
		w := 0.0
		for _, l := range strings.Split(n, "\n") {
			w = max(w, textWidth(l, size))
		}
		return w
	}
	widest, lines := 0.0, 1
	for _, n := range names {
		widest = max(widest, lineWidth(n))
		lines = max(lines, strings.Count(n, "\n")+1)
	}
	slot := axisWidth / float64(max(len(names), 1))
	lineH := 1.3 * size * float64(lines)
	if widest <= slot-2 {
		return categoryLabels{interval: "0", extent: lineH + 8, overhang: lineWidth(names[0]) / 2, size: size}
	}
	w := min(widest, maxWidth)
	first := min(lineWidth(names[0]), maxWidth)
	var l categoryLabels
	for _, deg := range turns {
		th := deg * math.Pi / 180
		l = categoryLabels{rotate: deg, width: maxWidth, interval: "0",
			extent:   8 + w*math.Sin(th) + lineH*math.Cos(th),
			overhang: first*math.Cos(th) + lineH*math.Sin(th)/2, size: size}
		if slot*math.Sin(th) >= lineH+2 {
			break
		}
		l.interval = ""
	}
	if widest <= maxWidth {
		l.width = 0
	}
	return l
}

// axisLabel is the library's option for these labels.
func (l categoryLabels) axisLabel(size int) *opts.AxisLabel {
	a := &opts.AxisLabel{Rotate: l.rotate, Interval: l.interval, FontSize: size}
	if l.width > 0 {
		a.Width = int(l.width)
		a.Overflow = "truncate"
		a.Ellipsis = ellipsis
	}
	return a
}

// fitting is the chart visitor that adds what go-echarts has no field
// for: a legend whose entries longer than width pixels are shortened with
// an ellipsis and shown whole in a tooltip, a margin beyond the data on
// y axes whose extent comes from the data (scale: the library widens it
// by a share at each end before rounding it to its ticks, so that no
// point sits on the frame), and the style of a y axis's name.
type fitting struct {
	charts.BaseConfigurationVisitor
	width   int
	narrow  *narrowLayout // the layout of a narrow chart, if another (chartFrame.narrow)
	tooltip []string      // chartFrame.tooltipNames
}

// Visit adds the layout of a narrow chart as the library's media option,
// and the series' names in the axis tooltip as ordplanTooltip, which the
// page's script (drawScript) takes out of the option and makes the
// tooltip's formatter of.
func (f fitting) Visit(obj map[string]any) {
	if f.narrow != nil {
		obj["media"] = f.narrow.media()
	}
	if f.tooltip != nil {
		obj["ordplanTooltip"] = f.tooltip
	}
}

// nameStyle is the style of a y axis's name above the plot: it starts at
// the axis and runs right over the plot, so that a long name is not cut
// at the chart's left edge (centred on the axis, half of it would be).
type nameStyle struct {
	Align string `json:"align"`
}

func (f fitting) VisitYAxis(axes []opts.YAxis) any {
	out := make([]any, len(axes))
	for i, a := range axes {
		var y struct {
			opts.YAxis
			BoundaryGap   *[2]string `json:"boundaryGap,omitempty"`
			NameTextStyle *nameStyle `json:"nameTextStyle,omitempty"`
		}
		y.YAxis = a
		if a.Scale != nil && bool(*a.Scale) {
			y.BoundaryGap = &[2]string{"5%", "5%"}
		}
		if a.Name != "" && (a.NameLocation == "" || a.NameLocation == "end") {
			y.NameTextStyle = &nameStyle{Align: "left"}
		}
		out[i] = y
	}
	return out
}

type legendText struct {
	FontSize int    `json:"fontSize"`
	Width    int    `json:"width"`
	Overflow string `json:"overflow"`
	Ellipsis string `json:"ellipsis"`
}

type fittedLegend struct {
	opts.Legend
	TextStyle *legendText   `json:"textStyle"`
	Tooltip   *opts.Tooltip `json:"tooltip"`
}

func (f fitting) VisitLegendOpt(l opts.Legend) any {
	return fittedLegend{Legend: l,
		TextStyle: &legendText{FontSize: legendSize, Width: f.width, Overflow: "truncate", Ellipsis: ellipsis},
		Tooltip:   &opts.Tooltip{Show: opts.Bool(true)}}
}

// upright is the extent of upright labels of this size.
func (categoryLabels) upright(size float64) float64 { return 1.3*size + 8 }

// leftFor is the left margin of a plot whose x axis has these labels:
// def unless turned labels reach further left than the y axis's labels
// (taken as 20 pixels wide) leave room for.
func leftFor(l categoryLabels, def string) string {
	if l.rotate == 0 {
		return def
	}
	return strconv.Itoa(max(30, int(math.Ceil(l.overhang))-20))
}
