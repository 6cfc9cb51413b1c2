package fit

import (
	"math"
	"testing"
)

// TestOddsRatioOfFiniteDifferences checks the odds ratio of a change of
// several columns (OddsRatioOf) in a model with constrained and parallel
// columns (the General Social Survey extract of gssConstrained): its log is
// sum_k d_k b_mk at the estimates, and the standard error of the log is
// sqrt(g' V g) with g the gradient of that function of the parameters by
// central differences (the analytic gradient is the sum of the slopes'
// gradients, bilinear for constrained columns); a change of one column is
// the odds ratio of OddsRatios, to the last bit.
func TestOddsRatioOfFiniteDifferences(t *testing.T) {
	d, m := gssConstrained(t)
	r, err := Fit(d, m, Options{})
	if err != nil || !r.OK() {
		t.Fatal(err, r)
	}
	pr, err := r.problem()
	if err != nil {
		t.Fatal(err)
	}
	K, q := len(r.Predictors), r.J-1
	ors, err := r.OddsRatios(0.9)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name   string
		d      []float64
		bounds int
	}{
		{"one constrained column", []float64{1, 0, 0, 0, 0, 0}, q},
		{"one parallel column", []float64{0, 0, 1, 0, 0, 0}, 1},
		{"two constrained columns", []float64{1, -1, 0, 0, 0, 0}, q},
		{"constrained and parallel columns", []float64{0.5, 0, -2, 0, 1, 0}, q},
		{"parallel columns", []float64{0, 0, 1, -1, 0, 0}, 1},
	} {
		got, err := r.OddsRatioOf(c.name, c.d, 0.9)
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != c.bounds {
			t.Fatalf("%s: %d odds ratios, want %d", c.name, len(got), c.bounds)
		}
		for i, o := range got {
			m := i
			f := func(theta []float64) []float64 {
				B := pr.ly.effects(theta, r.Model.Effects)
				s := 0.0
				for k := 0; k < K; k++ {
					s += c.d[k] * B[m*K+k]
				}
				return []float64{s}
			}
			want := f(r.Estimates)[0]
			se := math.Sqrt(quadForm(centralJacobian(f, r.Estimates), r.Cov))
			if math.Abs(o.Log-want) > 1e-12*math.Max(1, math.Abs(want)) || math.Abs(o.LogSE-se) > 1e-7*se {
				t.Errorf("%s at %d: log %.12g (se %.12g), by central differences %.12g (se %.12g)", c.name, o.Boundary, o.Log, o.LogSE, want, se)
			}
			if o.P < 0 || o.P > 1 || math.Abs(o.Z-o.Log/o.LogSE) > 1e-12*math.Abs(o.Z) {
				t.Errorf("%s: z %g, p %g", c.name, o.Z, o.P)
			}
		}
		one, moved := -1, 0
		for k, v := range c.d {
			if v != 0 {
				moved++
				if v == 1 {
					one = k
				}
			}
		}
		if moved != 1 {
			one = -1
		}
		if one < 0 {
			continue
		}
		n := 0
		for _, x := range ors {
			if x.Predictor == r.Predictors[one] {
				o := got[n].OddsRatio
				o.Predictor = x.Predictor
				if o != x {
					t.Errorf("%s: %+v, OddsRatios %+v", c.name, o, x)
				}
				n++
			}
		}
		if n != c.bounds {
			t.Errorf("%s: %d rows of OddsRatios, want %d", c.name, n, c.bounds)
		}
	}
	if _, err := r.OddsRatioOf("short", []float64{1}, 0.9); err == nil {
		t.Error("a change of one column in a fit of six is accepted")
	}
}
