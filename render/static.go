package render

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// figure is a chart drawn as a static SVG image for report.md (report.html
// draws the same content with the chart library). Each chart builder fills
// one beside its interactive option.
type figure struct {
	title, xLabel, yLabel string
	mark                  string    // the title's own first line (doc.mark), or ""
	xNames                []string  // a category axis (x = 0, 1, ...); nil: a numeric axis
	xNameMax              vg.Length // the most an x name may take (0: figTickMax)
	yMin, yMax            float64   // NaN: from the data
	series                []figSeries
	// legendUp lists the legend from the last series to the first, as
	// the layers of a stacked chart are seen from top to bottom.
	legendUp bool
}

// figSeries is one series: a line and/or points, or a filled band between
// lo and hi (an interval, or one layer of a stacked area).
type figSeries struct {
	name   string
	color  string // #rrggbb
	xs, ys []float64
	lo, hi []float64 // a band when set
	alpha  float64   // band opacity (0: 0.25)
	dashed bool
	points bool
	noLine bool
	width  float64 // points; 0: 1.5
	legend bool    // list in the legend
	bars   bool    // the band as bars (one per x) instead of an area
	// shape of the points: "" a filled circle, "diamond" a larger filled
	// diamond, "ring" a hollow circle.
	shape string
	// legendOnly: an entry of the legend alone (its mark, or line), no data.
	legendOnly bool
}

func newFigure(title, xLabel, yLabel string) *figure {
	return &figure{title: title, xLabel: xLabel, yLabel: yLabel, yMin: math.NaN(), yMax: math.NaN()}
}

func hexColor(s string, alpha float64) color.Color {
	v, _ := strconv.ParseUint(s[1:], 16, 32)
	return color.NRGBA{R: uint8(v >> 16), G: uint8(v >> 8), B: uint8(v), A: uint8(math.Round(255 * alpha))}
}

// Size of a figure's plot (axes and data); the legend, when there is one,
// is placed to its right, outside the data, and widens the image.
const (
	figWidth  = 16 * vg.Centimeter
	figHeight = 10 * vg.Centimeter
	legendGap = 8 // points between the data area and the legend
	// The most a tick label of a category axis and a legend entry may
	// take before an ellipsis shortens them.
	figTickMax   = 4 * vg.Centimeter
	figLegendMax = 5 * vg.Centimeter
)

// tickLabel is the label of a category as drawn: each line cut to the
// width allowed.
func (f *figure) tickLabel(p *plot.Plot, name string) string {
	lines := strings.Split(name, "\n")
	for i, l := range lines {
		lines[i] = fitWidth(l, float64(f.tickMax()), measured(p.X.Tick.Label.Width))
	}
	return strings.Join(lines, "\n")
}

func (f *figure) tickMax() vg.Length {
	if f.xNameMax > 0 {
		return f.xNameMax
	}
	return figTickMax
}

// measured is a font's measure of texts as the layout functions take it.
func measured(width func(string) vg.Length) func(string) float64 {
	return func(s string) float64 { return float64(width(s)) }
}

// figLayout is where a drawn figure put its parts, in the image's
// coordinates (points from the lower left corner).
type figLayout struct {
	width, height vg.Length
	data          vg.Rectangle // the data area inside the axes
	legend        vg.Rectangle // the legend's box (empty without a legend)
	marks         []vg.Point   // every data point and line vertex drawn
}

// svg draws the figure.
func (f *figure) svg() ([]byte, error) {
	b, _, err := f.draw()
	return b, err
}

// draw draws the figure as SVG, the plot at figWidth x figHeight and the
// legend in a column to its right, top-aligned with the data area, so that
// it never covers the data.
func (f *figure) draw() ([]byte, *figLayout, error) {
	p, leg, err := f.plot()
	if err != nil {
		return nil, nil, err
	}
	lw := vg.Length(0)
	if n := leg.Rectangle(draw.Canvas{}).Size().X; n > 0 {
		lw = n + 2*legendGap
	}
	lay := &figLayout{width: figWidth + lw, height: figHeight}
	c := vgsvg.New(lay.width, lay.height)
	dc := draw.New(c)
	plotC := draw.Crop(dc, 0, -lw, 0, 0)
	plotC = draw.Crop(plotC, f.tickOverhang(p, plotC), 0, 0, 0)
	p.Draw(plotC)
	data := p.DataCanvas(plotC)
	lay.data = data.Rectangle
	if lw > 0 {
		legC := draw.Canvas{Canvas: c, Rectangle: vg.Rectangle{
			Min: vg.Point{X: data.Max.X + legendGap, Y: data.Min.Y},
			Max: vg.Point{X: lay.width - legendGap, Y: data.Max.Y}}}
		leg.Draw(legC)
		r := leg.Rectangle(legC)
		// Rectangle measures from the side opposite to Left; the legend
		// is drawn from the canvas's left edge.
		w := r.Size().X
		lay.legend = vg.Rectangle{Min: vg.Point{X: legC.Min.X, Y: r.Min.Y}, Max: vg.Point{X: legC.Min.X + w, Y: r.Max.Y}}
	}
	for _, s := range f.series {
		for _, ys := range [][]float64{s.ys, s.lo, s.hi} {
			for i, y := range ys {
				x := float64(i)
				if s.xs != nil {
					x = s.xs[i]
				}
				if finite(y) && finite(x) {
					lay.marks = append(lay.marks, vg.Point{X: data.X(p.X.Norm(x)), Y: data.Y(p.Y.Norm(y))})
				}
			}
		}
	}
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, nil, fmt.Errorf("drawing a figure: %w", err)
	}
	return b.Bytes(), lay, nil
}

// tickOverhang is how far the first slanted tick label of a category
// axis would reach left of the image: the room to leave for it.
func (f *figure) tickOverhang(p *plot.Plot, c draw.Canvas) vg.Length {
	if f.xNames == nil || p.X.Tick.Label.Rotation == 0 {
		return 0
	}
	// The label's box turned by the rotation, with a tenth more width for
	// viewers whose font runs wider than the one measured here.
	size := p.X.Tick.Label.Rectangle(f.tickLabel(p, f.xNames[0])).Size()
	th := p.X.Tick.Label.Rotation
	reach := 1.1*size.X*vg.Length(math.Cos(th)) + size.Y*vg.Length(math.Sin(th)) + legendGap
	data := p.DataCanvas(c)
	tick := data.X(p.X.Norm(0)) - c.Min.X
	return max(0, reach-tick)
}

// plot builds the figure's plot and, separately, its legend.
func (f *figure) plot() (*plot.Plot, *plot.Legend, error) {
	p := plot.New()
	// Long names are wrapped (the title) or shortened with an ellipsis
	// (the rest) to the figure's width; the caption and the tables give
	// them whole.
	tl := wrap(f.title, float64(figWidth-legendGap), titleLines, measured(p.Title.TextStyle.Width))
	if f.mark != "" {
		tl = append([]string{f.mark}, tl...)
	}
	p.Title.Text = strings.Join(tl, "\n")
	p.X.Label.Text = fitWidth(f.xLabel, float64(figWidth*0.8), measured(p.X.Label.TextStyle.Width))
	p.Y.Label.Text = fitWidth(f.yLabel, float64(figHeight*0.7), measured(p.Y.Label.TextStyle.Width))
	leg := plot.NewLegend()
	leg.Top, leg.Left = true, true
	leg.Padding = vg.Points(2)
	type entry struct {
		name   string
		thumbs []plot.Thumbnailer
	}
	var entries []entry
	p.Add(plotter.NewGrid())
	if f.xNames != nil {
		var ticks []plot.Tick
		for i, n := range f.xNames {
			ticks = append(ticks, plot.Tick{Value: float64(i), Label: f.tickLabel(p, n)})
		}
		p.X.Tick.Marker = plot.ConstantTicks(ticks)
		p.X.Min, p.X.Max = -0.5, float64(len(f.xNames))-0.5
		if n := len(strings.Join(f.xNames, "")); n > 60 {
			p.X.Tick.Label.Rotation = math.Pi / 5
			p.X.Tick.Label.XAlign = draw.XRight
			p.X.Tick.Label.YAlign = draw.YCenter
		}
	}
	for _, s := range f.series {
		xs := s.xs
		if xs == nil {
			xs = make([]float64, max(len(s.ys), len(s.lo)))
			for i := range xs {
				xs[i] = float64(i)
			}
		}
		var thumbs []plot.Thumbnailer
		if s.lo != nil && s.bars {
			a := s.alpha
			if a == 0 {
				a = 1
			}
			for i := range xs {
				ring := plotter.XYs{{X: xs[i] - 0.2, Y: s.lo[i]}, {X: xs[i] + 0.2, Y: s.lo[i]}, {X: xs[i] + 0.2, Y: s.hi[i]}, {X: xs[i] - 0.2, Y: s.hi[i]}}
				poly, err := plotter.NewPolygon(ring)
				if err != nil {
					return nil, nil, err
				}
				poly.Color = hexColor(s.color, a)
				poly.LineStyle.Width = 0
				p.Add(poly)
				if i == 0 {
					thumbs = append(thumbs, poly)
				}
			}
		} else if s.lo != nil {
			var ring plotter.XYs
			for i := range xs {
				if finite(s.lo[i]) && finite(s.hi[i]) {
					ring = append(ring, plotter.XY{X: xs[i], Y: s.hi[i]})
				}
			}
			for i := len(xs) - 1; i >= 0; i-- {
				if finite(s.lo[i]) && finite(s.hi[i]) {
					ring = append(ring, plotter.XY{X: xs[i], Y: s.lo[i]})
				}
			}
			if len(ring) >= 3 {
				poly, err := plotter.NewPolygon(ring)
				if err != nil {
					return nil, nil, err
				}
				a := s.alpha
				if a == 0 {
					a = 0.25
				}
				poly.Color = hexColor(s.color, a)
				poly.LineStyle.Width = 0
				p.Add(poly)
				thumbs = append(thumbs, poly)
			}
		}
		if s.ys != nil || s.legendOnly {
			var pts plotter.XYs
			for i := range s.ys {
				if finite(s.ys[i]) {
					pts = append(pts, plotter.XY{X: xs[i], Y: s.ys[i]})
				}
			}
			if s.legendOnly {
				pts = plotter.XYs{{}} // a thumbnail's mark, not drawn
			}
			if len(pts) == 0 {
				continue
			}
			col := hexColor(s.color, 1)
			w := s.width
			if w == 0 {
				w = 1.5
			}
			if !s.noLine {
				l, err := plotter.NewLine(pts)
				if err != nil {
					return nil, nil, err
				}
				l.Color = col
				l.Width = vg.Points(w)
				if s.dashed {
					l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
				}
				if !s.legendOnly {
					p.Add(l)
				}
				thumbs = append(thumbs, l)
			}
			if s.points {
				sc, err := plotter.NewScatter(pts)
				if err != nil {
					return nil, nil, err
				}
				sc.GlyphStyle.Color = col
				sc.GlyphStyle.Shape = draw.CircleGlyph{}
				sc.GlyphStyle.Radius = vg.Points(2.5)
				switch s.shape {
				case "diamond":
					sc.GlyphStyle.Shape = diamondGlyph{}
					sc.GlyphStyle.Radius = vg.Points(5)
				case "ring":
					sc.GlyphStyle.Shape = draw.RingGlyph{}
				}
				if !s.legendOnly {
					p.Add(sc)
				}
				thumbs = append(thumbs, sc)
			}
		}
		if s.legend && len(thumbs) > 0 {
			entries = append(entries, entry{s.name, thumbs})
		}
	}
	padAxis(&p.Y, f.yMin, f.yMax, true)
	if f.xNames == nil {
		padAxis(&p.X, math.NaN(), math.NaN(), false)
	}
	if f.legendUp {
		slices.Reverse(entries)
	}
	for _, e := range entries {
		leg.Add(fitWidth(e.name, float64(figLegendMax), measured(leg.TextStyle.Width)), e.thumbs...)
	}
	return p, &leg, nil
}

// diamondGlyph is a filled diamond, a square turned 45 degrees, its
// corners at the glyph's radius from the point.
type diamondGlyph struct{}

func (diamondGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	c.FillPolygon(sty.Color, []vg.Point{{X: pt.X, Y: pt.Y + r}, {X: pt.X + r, Y: pt.Y}, {X: pt.X, Y: pt.Y - r}, {X: pt.X - r, Y: pt.Y}})
}

// padAxis sets an axis's ends: lo and hi where given (not NaN); a free end
// is moved out by 5% of the data's range (2% without toTicks), so that no
// point sits on the frame, and with toTicks then out to the next labelled
// tick, so that no value lies beyond the last tick (a value axis; an x
// axis over a predictor's range keeps to that range).
func padAxis(a *plot.Axis, lo, hi float64, toTicks bool) {
	span := a.Max - a.Min
	if span <= 0 || !finite(span) {
		span = math.Max(math.Abs(a.Max), 1)
	}
	share := 0.05
	if !toTicks {
		share = 0.02
	}
	if !finite(lo) {
		a.Min -= share * span
	}
	if !finite(hi) {
		a.Max += share * span
	}
	for i := 0; toTicks && i < 3; i++ { // the ticks change with the range: a few rounds settle it
		var major []float64
		for _, t := range a.Tick.Marker.Ticks(a.Min, a.Max) {
			if !t.IsMinor() {
				major = append(major, t.Value)
			}
		}
		if len(major) < 2 {
			break
		}
		step := major[1] - major[0]
		moved := false
		if !finite(lo) && major[0] > a.Min+1e-9*step {
			a.Min, moved = major[0]-step, true
		}
		if !finite(hi) && major[len(major)-1] < a.Max-1e-9*step {
			a.Max, moved = major[len(major)-1]+step, true
		}
		if !moved {
			break
		}
	}
	if finite(lo) {
		a.Min = lo
	}
	if finite(hi) {
		a.Max = hi
	}
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// figureFile is the name of figure n beside the report.
func figureFile(n int) string { return fmt.Sprintf("figure-%d.svg", n) }
