package design

import (
	"math"
	"testing"
)

// TestZeroAt: at the raw value ZeroAt gives, every column of the term
// (computed by Row, the path of every design row) is 0, for each kind of
// numeric term; where no raw value makes them all 0 ZeroAt says so, and
// Row shows a column that stays away from 0 at the one value the first
// column leaves (a spline whose first knot is below the centre, an
// orthogonal polynomial of degree 2), or no raw value exists (a square
// root of a negative number).
func TestZeroAt(t *testing.T) {
	raw := []float64{1.1, 2, 3.5, 4, 5.2, 6, 7.7, 8, 9.1, 10}
	cases := []struct {
		name string
		tr   Transform
		ok   bool
		want float64 // when ok
	}{
		{"plain", Transform{}, true, 0},
		{"centred value", Transform{Centre: "value", CentreAt: 4}, true, 4},
		{"centred scaled", Transform{Centre: "mean", Scale: true}, true, 5.66},
		{"log shift", Transform{Log: true, Shift: 1, Centre: "value", CentreAt: 1}, true, math.E - 1},
		{"sqrt", Transform{Sqrt: true, Centre: "value", CentreAt: 2}, true, 4},
		{"sqrt below 0", Transform{Sqrt: true, Centre: "value", CentreAt: -1}, false, 0},
		{"raw polynomial", Transform{Poly: 3, PolyRaw: true, Centre: "value", CentreAt: 5}, true, 5},
		{"orthogonal degree 1", Transform{Poly: 1}, true, 5.66},
		{"orthogonal degree 2", Transform{Poly: 2}, false, 0},
		{"spline", Transform{Knots: []float64{3, 6, 9}}, true, 0},
		{"spline quantiles centred", Transform{Quantiles: []float64{0.1, 0.5, 0.9}, Centre: "mean"}, false, 0},
	}
	for _, c := range cases {
		spec := Spec{Sources: []Source{{Name: "x"}}, Terms: []TermSpec{{Name: "t", Source: "x", Transform: c.tr}}}
		d, err := Build(spec, raw, len(raw), nil, nil)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		x, ok := d.Terms[0].ZeroAt()
		if ok != c.ok {
			t.Errorf("%s: ZeroAt %v %v, want ok %v", c.name, x, ok, c.ok)
			continue
		}
		out := make([]float64, len(d.Columns))
		if !ok {
			// At the value where the first column is 0 (by bisection over
			// a wide range), some other column is not.
			if c.tr.Sqrt {
				continue
			}
			lo, hi := -100.0, 100.0
			f := func(v float64) float64 {
				if err := d.Row([]float64{v}, out); err != nil {
					t.Fatal(err)
				}
				return out[0]
			}
			for i := 0; i < 200; i++ {
				m := (lo + hi) / 2
				if (f(lo) < 0) == (f(m) < 0) {
					lo = m
				} else {
					hi = m
				}
			}
			f(lo)
			other := 0.0
			for _, v := range out[1:] {
				other = math.Max(other, math.Abs(v))
			}
			if !(other > 1e-6) {
				t.Errorf("%s: no value said to give all columns 0, but at %v they are %v", c.name, lo, out)
			}
			continue
		}
		if math.Abs(x-c.want) > 1e-12*math.Max(1, math.Abs(c.want)) {
			t.Errorf("%s: ZeroAt %.15g, want %.15g", c.name, x, c.want)
		}
		if err := d.Row([]float64{x}, out); err != nil {
			t.Fatal(err)
		}
		for j, v := range out {
			if math.Abs(v) > 1e-12 {
				t.Errorf("%s: column %s is %v at x = %v", c.name, d.Columns[j], v, x)
			}
		}
	}
}
