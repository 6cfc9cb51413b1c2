package design

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// Natural cubic spline: the defining properties (a cubic between knots,
// continuous second derivative at every knot, linear beyond the boundary
// knots; Hastie, Tibshirani & Friedman, The Elements of Statistical
// Learning, 2nd ed., sec. 5.2.1), checked numerically on the basis.
func TestSplineBasisProperties(t *testing.T) {
	knots := []float64{-1, 0.3, 1.2, 2, 4.5}
	K := len(knots)
	val := func(u float64) []float64 {
		out := make([]float64, K-1)
		splineEval(u, knots, out, nil)
		return out
	}
	second := func(u, h float64) []float64 {
		a, b, c := val(u-h), val(u), val(u+h)
		out := make([]float64, len(a))
		for j := range a {
			out[j] = (a[j] - 2*b[j] + c[j]) / (h * h)
		}
		return out
	}
	// linear beyond the boundary knots: second differences vanish
	for _, u := range []float64{-10, -3, -1.0001, 4.5001, 7, 30} {
		for j, s := range second(u, 1e-3) {
			if math.Abs(s) > 1e-5*math.Max(1, math.Abs(val(u)[j])) {
				t.Errorf("column %d at u = %g: second derivative %g beyond the boundary knots, want 0", j, u, s)
			}
		}
	}
	// continuous second derivative at each knot: one-sided second
	// derivatives just left and right agree
	for _, xi := range knots {
		h := 1e-4
		left, right := second(xi-3*h, h), second(xi+3*h, h)
		for j := range left {
			if math.Abs(left[j]-right[j]) > 1e-2 {
				t.Errorf("column %d: second derivative jumps at knot %g: %g vs %g", j, xi, left[j], right[j])
			}
		}
	}
	// and a third derivative that does jump at an interior knot (the basis
	// is a genuine spline, not a global cubic)
	third := func(u float64) float64 {
		h := 1e-3
		return (val(u + 2*h)[2] - 2*val(u + h)[2] + 2*val(u - h)[2] - val(u - 2*h)[2]) / (2 * h * h * h)
	}
	if math.Abs(third(knots[1]-0.05)-third(knots[1]+0.05)) < 1e-3 {
		t.Error("third derivative of column 2 does not change at its knot (knot 2)")
	}
	// analytic first derivative against central differences
	for _, u := range []float64{-2, -0.5, 0.3, 1, 2.2, 5} {
		out, der := make([]float64, K-1), make([]float64, K-1)
		splineEval(u, knots, out, der)
		h := 1e-6
		p, m := val(u+h), val(u-h)
		for j := range der {
			if fd := (p[j] - m[j]) / (2 * h); math.Abs(fd-der[j]) > 1e-6*math.Max(1, math.Abs(der[j])) {
				t.Errorf("column %d at %g: derivative %g, central difference %g", j, u, der[j], fd)
			}
		}
	}
}

// Orthogonal polynomials: the columns are orthonormal in the weighted
// sample and span the same space as the raw powers (exact identities).
func TestOrthogonalPolynomials(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	n := 50
	u := make([]float64, n)
	w := make([]float64, n)
	for i := range u {
		u[i] = rng.Float64()*10 + 20
		w[i] = float64(1 + rng.IntN(3))
	}
	deg := 3
	alpha, norm2 := orthoPoly(u, w, deg)
	cols := make([][]float64, n)
	for i := range u {
		cols[i] = make([]float64, deg)
		orthoEval(u[i], alpha, norm2, cols[i], nil)
	}
	for a := 0; a < deg; a++ {
		s := 0.0
		for i := range u {
			s += w[i] * cols[i][a]
		}
		if math.Abs(s) > 1e-9 {
			t.Errorf("column %d: weighted sum %g, want 0 (orthogonal to the constant)", a+1, s)
		}
		for b := 0; b < deg; b++ {
			s := 0.0
			for i := range u {
				s += w[i] * cols[i][a] * cols[i][b]
			}
			want := 0.0
			if a == b {
				want = 1
			}
			if math.Abs(s-want) > 1e-9 {
				t.Errorf("columns %d,%d: weighted inner product %g, want %g", a+1, b+1, s, want)
			}
		}
	}
	// column k is a polynomial of degree k: its (k+1)-th divided
	// difference on equally spaced points vanishes
	for k := 1; k <= deg; k++ {
		f := func(x float64) float64 {
			o := make([]float64, deg)
			orthoEval(x, alpha, norm2, o, nil)
			return o[k-1]
		}
		// finite difference of order k+1 with step 1
		s := 0.0
		for j := 0; j <= k+1; j++ {
			s += math.Pow(-1, float64(j)) * binom(k+1, j) * f(20+float64(j))
		}
		if math.Abs(s) > 1e-6 {
			t.Errorf("column %d: difference of order %d is %g, want 0", k, k+1, s)
		}
	}
}

func binom(n, k int) float64 {
	r := 1.0
	for i := 1; i <= k; i++ {
		r = r * float64(n-k+i) / float64(i)
	}
	return r
}

// The derivative of the design row in a raw column, through a
// transformation, a spline and interactions, equals central differences
// of the design row.
func TestDerivativeThroughTerms(t *testing.T) {
	spec := Spec{
		Sources: []Source{{Name: "age"}, {Name: "site", Cat: &Categorical{Levels: []string{"n", "e", "s"}}}, {Name: "dose"}},
		Terms: []TermSpec{
			{Name: "site", Source: "site"},
			{Name: "age.s", Source: "age", Transform: Transform{Centre: "mean", Scale: true, Knots: []float64{-1.5, -0.2, 0.4, 1.5}}},
			{Name: "dose.log", Source: "dose", Transform: Transform{Log: true, Shift: 1}},
			{Name: "age.p", Source: "age", Transform: Transform{Poly: 2}},
			{Name: "site&age.s", Interact: []string{"site", "age.s"}},
			{Name: "age.p&dose.log", Interact: []string{"age.p", "dose.log"}},
		},
	}
	rng := rand.New(rand.NewPCG(3, 4))
	n := 40
	raw := make([]float64, n*3)
	for i := 0; i < n; i++ {
		raw[i*3] = 20 + 50*rng.Float64()
		raw[i*3+1] = float64(rng.IntN(3))
		raw[i*3+2] = float64(rng.IntN(5))
	}
	d, err := Build(spec, raw, n, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	K := len(d.Columns)
	if want := 2 + 3 + 1 + 2 + 6 + 2; K != want {
		t.Fatalf("%d columns %v, want %d", K, d.Columns, want)
	}
	if !strings.Contains(strings.Join(d.Columns, " "), "site.e&age.s.2") {
		t.Errorf("columns %v lack site.e&age.s.2", d.Columns)
	}
	// The names known without data are the names Build gives.
	names, err := Names(spec)
	if err != nil {
		t.Fatal(err)
	}
	for k, tm := range d.Terms {
		if strings.Join(names[k], " ") != strings.Join(tm.Columns, " ") {
			t.Errorf("term %s: Names %v, Build %v", tm.Name, names[k], tm.Columns)
		}
	}
	for _, s := range []int{0, 2} {
		for i := 0; i < 5; i++ {
			r := append([]float64(nil), raw[i*3:i*3+3]...)
			out, der := make([]float64, K), make([]float64, K)
			if err := d.Derivative(r, s, out, der); err != nil {
				t.Fatal(err)
			}
			h := 1e-5 * d.SourceScales()[s]
			rp, rm := append([]float64(nil), r...), append([]float64(nil), r...)
			rp[s] += h
			rm[s] -= h
			op, om := make([]float64, K), make([]float64, K)
			d.Row(rp, op)
			d.Row(rm, om)
			for k := range der {
				fd := (op[k] - om[k]) / (2 * h)
				if math.Abs(fd-der[k]) > 1e-6*math.Max(1, math.Abs(der[k])) {
					t.Errorf("source %d row %d column %s: derivative %g, central difference %g", s, i, d.Columns[k], der[k], fd)
				}
			}
		}
	}
}

// Treatment, sum-to-zero and successive-difference coding of the same
// factor span the same columns with the constant (checked by the coding
// rows), and name the columns term.level.
func TestCodings(t *testing.T) {
	levels := []string{"low", "mid", "high"}
	raw := []float64{0, 1, 2, 1, 0, 2}
	for _, tc := range []struct {
		coding string
		want   [][]float64
		names  string
	}{
		{Treatment, [][]float64{{0, 0}, {1, 0}, {0, 1}}, "f.mid f.high"},
		{Sum, [][]float64{{-1, -1}, {1, 0}, {0, 1}}, "f.mid f.high"},
		{Successive, [][]float64{{0, 0}, {1, 0}, {1, 1}}, "f.mid f.high"},
	} {
		spec := Spec{Sources: []Source{{Name: "f", Cat: &Categorical{Levels: levels, Coding: tc.coding, Ordered: true}}}, Terms: []TermSpec{{Name: "f", Source: "f"}}}
		d, err := Build(spec, raw, len(raw), nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		if got := strings.Join(d.Columns, " "); got != tc.names {
			t.Errorf("%s: columns %q, want %q", tc.coding, got, tc.names)
		}
		for l, want := range tc.want {
			out := make([]float64, 2)
			d.Row([]float64{float64(l)}, out)
			if out[0] != want[0] || out[1] != want[1] {
				t.Errorf("%s: level %s coded %v, want %v", tc.coding, levels[l], out, want)
			}
		}
	}
}

// Bad inputs name the term and the data line.
func TestBuildErrors(t *testing.T) {
	num := []Source{{Name: "x"}}
	_, err := Build(Spec{Sources: num, Terms: []TermSpec{{Name: "x.log", Source: "x", Key: "predictors[0]", Transform: Transform{Log: true}}}},
		[]float64{1, 2, -3}, 3, nil, []int{2, 3, 4})
	if err == nil || !strings.Contains(err.Error(), "predictors[0]: data line 4: column \"x\": log(-3) is undefined") {
		t.Errorf("log of a negative value: %v", err)
	}
	_, err = Build(Spec{Sources: num, Terms: []TermSpec{{Name: "x.log", Source: "x", Key: "predictors[0]", Transform: Transform{Log: true}}}},
		[]float64{1, 0, 2, -5, 0}, 5, nil, []int{2, 3, 4, 5, 6})
	if want := `predictors[0]: data line 3: column "x": log(0) is undefined: the value is not positive (state a shift for zeros: log: {shift: 1}); 2 more rows used have such values`; err == nil || err.Error() != want {
		t.Errorf("log of zeros and a negative value: %v, want %s", err, want)
	}
	cat := []Source{{Name: "f", Cat: &Categorical{Levels: []string{"a", "b", "c"}}}}
	_, err = Build(Spec{Sources: cat, Terms: []TermSpec{{Name: "f", Source: "f", Key: "predictors[1]"}}}, []float64{0, 1, 0}, 3, nil, nil)
	if err == nil || !strings.Contains(err.Error(), `level "c" is declared but occurs in no row used`) {
		t.Errorf("unobserved level: %v", err)
	}
	cat[0].Cat.Unobserved = UnobservedDrop
	d, err := Build(Spec{Sources: cat, Terms: []TermSpec{{Name: "f", Source: "f", Key: "predictors[1]"}}}, []float64{0, 1, 0}, 3, nil, nil)
	if err != nil || len(d.Columns) != 1 || len(d.Notes) != 1 {
		t.Errorf("dropped level: %v %v %v", err, d.Columns, d.Notes)
	}
	// A row at the dropped level (a new row to predict, a profile) has no
	// design row: the message says why, not merely that it is not coded.
	err = d.Row([]float64{2}, make([]float64, 1))
	if want := `column "f": level "c" occurs in no row the model was fitted to (its column was dropped: unobserved: drop), so the model has no effect of it`; err == nil || err.Error() != want {
		t.Errorf("a row at the dropped level: %v, want %s", err, want)
	}
	_, err = Build(Spec{Sources: num, Terms: []TermSpec{{Name: "x", Source: "x"}, {Name: "i", Interact: []string{"x", "z"}, Key: "predictors[2]"}}}, []float64{1, 2}, 2, nil, nil)
	if err == nil || !strings.Contains(err.Error(), `"z" is not a term listed before this interaction`) {
		t.Errorf("interaction with an unknown term: %v", err)
	}
}

// Spline knots given as values must lie within the range of the rows used
// (on the values the knots apply to, after a log or centring); at the
// range's ends they pass, and quantile knots lie inside by construction.
func TestSplineKnotsOutsideTheData(t *testing.T) {
	num := []Source{{Name: "x"}}
	x := []float64{18, 30, 45, 60, 86}
	spline := func(tr Transform) error {
		_, err := Build(Spec{Sources: num, Terms: []TermSpec{{Name: "xs", Source: "x", Key: "predictors[0]", Transform: tr}}}, x, len(x), nil, nil)
		return err
	}
	err := spline(Transform{Knots: []float64{100, 110, 120}})
	if want := `predictors[0]: column "x": the knots [100, 110, 120] of spline term "xs" are not all within the range of the rows used, 18 to 86: knots 100, 110, 120 lie outside it:`; err == nil || !strings.HasPrefix(err.Error(), want) {
		t.Errorf("knots above the data: %v, want %s", err, want)
	}
	err = spline(Transform{Knots: []float64{10, 40, 70}})
	if want := `the knots [10, 40, 70] of spline term "xs" are not all within the range of the rows used, 18 to 86: knot 10 lies outside it`; err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("a knot below the data: %v, want %s", err, want)
	}
	if err := spline(Transform{Knots: []float64{18, 45, 86}}); err != nil {
		t.Errorf("knots at the data's ends: %v", err)
	}
	if err := spline(Transform{Quantiles: []float64{0, 0.5, 1}}); err != nil {
		t.Errorf("quantile knots: %v", err)
	}
	// On the transformed values: log(18) = 2.89037..., log(86) = 4.45434...,
	// the range printed rounded inwards to 6 digits.
	err = spline(Transform{Log: true, Knots: []float64{3, 4, 5}})
	if want := `not all within the range of the rows used, 2.89038 to 4.45434 (on the transformed values, where the knots apply): knot 5 lies outside it`; err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("knots on the log scale: %v, want %s", err, want)
	}
	if err := spline(Transform{Centre: "value", CentreAt: 45, Knots: []float64{-27, 0, 41}}); err != nil {
		t.Errorf("knots on the centred values at the ends: %v", err)
	}
}

// Quantile knots of the weighted sample equal those of the sample with
// each row repeated weight times.
func TestWeightedQuantile(t *testing.T) {
	u := []float64{3, 1, 2, 5}
	w := []float64{2, 1, 3, 1}
	exp := []float64{1, 2, 2, 2, 3, 3, 5}
	for _, p := range []float64{0, 0.1, 0.25, 0.5, 0.9, 1} {
		got, want := quantile(u, w, p), quantile(exp, nil, p)
		if got != want {
			t.Errorf("p = %g: weighted %g, expanded %g", p, got, want)
		}
	}
	if q := quantile([]float64{1, 2, 3, 4}, nil, 0.5); q != 2.5 {
		t.Errorf("median of 1..4 = %g, want 2.5", q)
	}
}

// The scales of the numeric sources are the SDs meanSD gives each column on
// its own (one path, bit for bit), 1 for a categorical or constant column;
// frequency weights give the SD of the rows repeated. Value: the sample SD
// of 2, 4, 4, 4, 5, 5, 7, 9 is sqrt(32/7) (sum of squares 32 around the
// mean 5, divisor n-1).
func TestSourceScalesAreMeanSD(t *testing.T) {
	srcs := []Source{{Name: "a"}, {Name: "b"}, {Name: "c", Cat: &Categorical{}}, {Name: "d"}}
	cols := [][]float64{{2, 4, 5, 7, 9}, {1.5, -3, 0.25, 8, 2}, {0, 1, 0, 1, 1}, {3, 3, 3, 3, 3}}
	w := []float64{1, 3, 2, 1, 1}
	n, S := len(w), len(srcs)
	raw := make([]float64, n*S)
	for s, c := range cols {
		for i, x := range c {
			raw[i*S+s] = x
		}
	}
	scale := make([]float64, S)
	sourceScales(scale, srcs, raw, n, w)
	for s, c := range cols {
		_, sd := meanSD(c, w)
		want := sd
		if srcs[s].Cat != nil || sd == 0 {
			want = 1
		}
		if scale[s] != want {
			t.Errorf("source %s: scale %v, meanSD %v", srcs[s].Name, scale[s], want)
		}
	}
	if want := math.Sqrt(32.0 / 7); math.Abs(scale[0]-want) > 1e-14 {
		t.Errorf("weighted SD of 2,4x3,5x2,7,9 = %.17g, want sqrt(32/7) = %.17g", scale[0], want)
	}
	one := make([]float64, S)
	sourceScales(one, srcs, raw[:S], 1, nil)
	for s, v := range one {
		if v != 1 {
			t.Errorf("one row: scale of %s is %v, want 1", srcs[s].Name, v)
		}
	}
}

// Levels that differ only in characters a column name cannot hold (a
// hyphen against a space, words in another script) get distinct column
// names, the same with and without data, and a level dropped for having
// no row changes no other level's name.
func TestLevelNamesAreDistinct(t *testing.T) {
	levels := []string{"main road", "cul-de-sac", "cul de sac", "北部", "南部", "cul_de_sac_3", "x"}
	raw := []float64{0, 1, 2, 3, 4, 5, 6, 0, 1}
	spec := Spec{Sources: []Source{{Name: "s", Cat: &Categorical{Levels: levels}}}, Terms: []TermSpec{{Name: "s", Source: "s"}, {Name: "v", Source: "v"}}}
	spec.Sources = append(spec.Sources, Source{Name: "v"})
	rows := make([]float64, 0, 2*len(raw))
	for i, x := range raw {
		rows = append(rows, x, float64(i))
	}
	d, err := Build(spec, rows, len(raw), nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := "s.cul_de_sac s.cul_de_sac_3_2 s.__ s.___5 s.cul_de_sac_3 s.x"
	if got := strings.Join(d.Columns[:6], " "); got != want {
		t.Errorf("columns %q, want %q", got, want)
	}
	names, err := Names(spec)
	if err != nil || strings.Join(names[0], " ") != want {
		t.Errorf("names without data %v (%v), want %q", names, err, want)
	}
	// "cul de sac" has no row and is dropped: the others keep their names
	spec.Sources[0].Cat.Unobserved = UnobservedDrop
	for i := range raw {
		if raw[i] == 2 {
			rows[2*i] = 1
		}
	}
	d, err = Build(spec, rows, len(raw), nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := strings.Join(d.Columns[:5], " "), "s.cul_de_sac s.__ s.___5 s.cul_de_sac_3 s.x"; got != want {
		t.Errorf("with a level dropped: columns %q, want %q", got, want)
	}
}
