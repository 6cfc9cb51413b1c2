package render

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// figure is a chart drawn as a static SVG image for report.md (report.html
// draws the same content with the chart library). Each chart builder fills
// one beside its interactive option.
type figure struct {
	title, xLabel, yLabel string
	xNames                []string // a category axis (x = 0, 1, ...); nil: a numeric axis
	yMin, yMax            float64  // NaN: from the data
	series                []figSeries
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
}

func newFigure(title, xLabel, yLabel string) *figure {
	return &figure{title: title, xLabel: xLabel, yLabel: yLabel, yMin: math.NaN(), yMax: math.NaN()}
}

func hexColor(s string, alpha float64) color.Color {
	v, _ := strconv.ParseUint(s[1:], 16, 32)
	return color.NRGBA{R: uint8(v >> 16), G: uint8(v >> 8), B: uint8(v), A: uint8(math.Round(255 * alpha))}
}

// svg draws the figure, 16 x 10 cm.
func (f *figure) svg() ([]byte, error) {
	p := plot.New()
	p.Title.Text = f.title
	p.X.Label.Text = f.xLabel
	p.Y.Label.Text = f.yLabel
	p.Legend.Top = true
	p.Legend.Left = false
	p.Add(plotter.NewGrid())
	if f.xNames != nil {
		var ticks []plot.Tick
		for i, n := range f.xNames {
			ticks = append(ticks, plot.Tick{Value: float64(i), Label: n})
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
					return nil, err
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
					return nil, err
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
		if s.ys != nil {
			var pts plotter.XYs
			for i := range xs {
				if finite(s.ys[i]) {
					pts = append(pts, plotter.XY{X: xs[i], Y: s.ys[i]})
				}
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
					return nil, err
				}
				l.Color = col
				l.Width = vg.Points(w)
				if s.dashed {
					l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
				}
				p.Add(l)
				thumbs = append(thumbs, l)
			}
			if s.points {
				sc, err := plotter.NewScatter(pts)
				if err != nil {
					return nil, err
				}
				sc.GlyphStyle.Color = col
				sc.GlyphStyle.Shape = draw.CircleGlyph{}
				sc.GlyphStyle.Radius = vg.Points(2.5)
				p.Add(sc)
				thumbs = append(thumbs, sc)
			}
		}
		if s.legend && len(thumbs) > 0 {
			p.Legend.Add(s.name, thumbs...)
		}
	}
	if finite(f.yMin) {
		p.Y.Min = f.yMin
	}
	if finite(f.yMax) {
		p.Y.Max = f.yMax
	}
	w, err := p.WriterTo(16*vg.Centimeter, 10*vg.Centimeter, "svg")
	if err != nil {
		return nil, err
	}
	var b bytes.Buffer
	if _, err := w.WriteTo(&b); err != nil {
		return nil, fmt.Errorf("drawing a figure: %w", err)
	}
	return b.Bytes(), nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// figureFile is the name of figure n beside the report.
func figureFile(n int) string { return fmt.Sprintf("figure-%d.svg", n) }
