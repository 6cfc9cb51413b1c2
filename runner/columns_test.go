package runner

import (
	"math"
	"slices"
	"strings"
	"testing"

	"ordplan/runner/data"
)

// printOf prints a hand-made data set: outcome y (categories lo, hi),
// a numeric x, a categorical g (levels p, q), sampling weights w and a
// cluster c; missing counts as given.
func printOf(y []int, x, g, w []float64, c []string, missX int) OutcomeColumns {
	n := len(y)
	X := make([]float64, 0, 2*n)
	for i := range n {
		X = append(X, x[i], g[i])
	}
	ds := &data.Dataset{Categories: []string{"lo", "hi"}, Y: y, Predictors: []string{"x", "g"}, X: X, N: n, K: 2, Weights: w, Cluster: c,
		Missing: &data.MissingTable{Columns: []string{"y", "x", "g", "w", "c"}, ByColumn: []int{0, missX, 0, 0, 0}}}
	return outcomeColumns(ds, data.Options{Outcome: "y", Predictors: []string{"x", "g"}, PredictorLevels: map[string][]string{"g": {"p", "q"}}, Weights: "w", Cluster: "c"})
}

// What each kind of change is said as; the sums and counts are counted by
// hand from the rows below.
func TestColumnChanges(t *testing.T) {
	y := []int{0, 1, 0, 1, 1}
	x := []float64{40, 50, 43, 60, 70}
	g := []float64{0, 1, 1, 0, 0}
	w := []float64{1, 1, 1, 1, 1}
	c := []string{"k1", "k1", "k2", "k2", "k3"}
	base := printOf(y, x, g, w, c, 0)
	if s := base.Columns[1]; s.Column != "x" || *s.Sum != 263 || *s.Min != 40 || *s.Max != 70 || s.Values != 5 {
		t.Fatalf("x: %+v", s)
	}
	if s := base.Columns[2]; len(s.Levels) != 2 || s.Levels[0] != (LevelCount{"p", 3}) || s.Levels[1] != (LevelCount{"q", 2}) {
		t.Fatalf("g: %+v", s.Levels)
	}
	if s := base.Columns[4]; s.Role != "cluster" || s.Clusters != 3 {
		t.Fatalf("c: %+v", s)
	}
	with := func(f func(y []int, x, g, w []float64, c []string)) OutcomeColumns {
		y2, x2, g2, w2, c2 := append([]int(nil), y...), append([]float64(nil), x...), append([]float64(nil), g...), append([]float64(nil), w...), append([]string(nil), c...)
		f(y2, x2, g2, w2, c2)
		return printOf(y2, x2, g2, w2, c2, 0)
	}
	cases := []struct {
		name string
		now  OutcomeColumns
		want string
	}{
		{"same", base, "y: no column this outcome uses changed in the rows it uses (the data changed in columns it does not read, or in rows it does not use: outside the subset, or dropped for a missing value)"},
		{"a value corrected", with(func(_ []int, x, _, _ []float64, _ []string) { x[2] = 34 }),
			"y: column x (predictor) changed: sum 263 -> 254, mean 52.6 -> 50.8, smallest 40 -> 34"},
		{"other values, same summaries", with(func(_ []int, x, _, _ []float64, _ []string) { x[2], x[1] = 44, 49 }),
			"y: column x (predictor) changed: other values, with the same number of values, of missing values, sum, smallest and largest value"},
		{"outcome exchanged", with(func(y []int, _, _, _ []float64, _ []string) { y[0], y[1] = y[1], y[0] }),
			"y: column y (outcome) changed: the same values in other rows (values exchanged between rows; its counts per level and of missing values are the same)"},
		{"a level recoded", with(func(_ []int, _, g, _ []float64, _ []string) { g[0] = 1 }),
			"y: column g (predictor) changed: rows per level p 3 -> 2, q 2 -> 3"},
		{"a cluster split", with(func(_ []int, _, _, _ []float64, c []string) { c[4] = "k4" }),
			"y: column c (cluster) changed: other values, with the same numbers of values, of clusters and of missing values"},
		{"a cluster merged", with(func(_ []int, _, _, _ []float64, c []string) { c[4] = "k2" }),
			"y: column c (cluster) changed: clusters 3 -> 2"},
		{"rows reordered", with(func(y []int, x, g, w []float64, c []string) {
			for _, s := range [][2]int{{0, 4}, {1, 3}} {
				i, j := s[0], s[1]
				y[i], y[j] = y[j], y[i]
				x[i], x[j] = x[j], x[i]
				g[i], g[j] = g[j], g[i]
				w[i], w[j] = w[j], w[i]
				c[i], c[j] = c[j], c[i]
			}
		}), "y: the 5 rows used are the same, in another order: no value of a column changed (a reordering of the rows changes no fit beyond rounding in the last digits, so no column is named)"},
		{"a missing value more", printOf(y, x, g, w, c, 1), "y: column x (predictor) changed: missing 0 -> 1"},
	}
	// A level renamed (the same rows: the fingerprint is of the level's
	// place), a level gone and another new, a column no longer read.
	edited := func(f func(o *OutcomeColumns)) OutcomeColumns {
		o := base
		o.Columns = append([]ColumnPrint(nil), base.Columns...)
		f(&o)
		return o
	}
	cases = append(cases, []struct {
		name string
		now  OutcomeColumns
		want string
	}{
		{"a level renamed", edited(func(o *OutcomeColumns) {
			o.Columns[2].Levels = []LevelCount{{"p", 3}, {"qq", 2}}
			o.Columns[2].ValuesSHA256 = "other" // the labels take part
		}), "y: column g (predictor) changed: level q renamed qq (2 rows, as before)"},
		{"a level gone, one new", edited(func(o *OutcomeColumns) {
			o.Columns[2].Levels = []LevelCount{{"p", 2}, {"r", 3}}
			o.Columns[2].ValuesSHA256, o.Columns[2].ValuesMultiset, o.RowsMultiset = "other", "other", "other"
		}), "y: column g (predictor) changed: rows per level p 3 -> 2, no longer a level: q (2 rows then), new level: r (3 rows)"},
		{"a column no longer read", edited(func(o *OutcomeColumns) { o.Columns = slices.Delete(o.Columns, 1, 2) }),
			"y: no column this outcome uses changed in the rows it uses (the data changed in columns it does not read, or in rows it does not use: outside the subset, or dropped for a missing value)\ny: column x (predictor) is no longer read: the earlier run read it in this role, this run does not"},
	}...)
	for _, k := range cases {
		if got := strings.Join(ColumnChanges([]OutcomeColumns{base}, []OutcomeColumns{k.now}), "\n"); got != k.want {
			t.Errorf("%s:\n got %s\nwant %s", k.name, got, k.want)
		}
	}
	// The same rows give the same record, whatever the order in which
	// the columns' values are mixed; -0 reads as 0.
	x0 := append([]float64(nil), x...)
	x0[0] = 40
	if a, b := printOf(y, x0, g, w, c, 0), base; a.RowsMultiset != b.RowsMultiset || a.Columns[1].ValuesSHA256 != b.Columns[1].ValuesSHA256 {
		t.Error("the same rows printed differently")
	}
	z, nz := with(func(_ []int, x, _, _ []float64, _ []string) { x[0] = 0 }), with(func(_ []int, x, _, _ []float64, _ []string) { x[0] = math.Copysign(0, -1) })
	if z.Columns[1].ValuesSHA256 != nz.Columns[1].ValuesSHA256 {
		t.Error("-0 and 0 printed differently")
	}
	// A missing value kept for imputation (NaN) is not summed.
	nan := with(func(_ []int, x, _, _ []float64, _ []string) { x[4] = math.NaN() })
	if s := nan.Columns[1]; s.Values != 4 || *s.Sum != 193 {
		t.Errorf("NaN kept: %+v", s)
	}
	// The record of a replaced run names the columns.
	was, now := &RunRecord{Data: &DataRef{File: "d.csv", SHA256: "1"}, DataColumns: []OutcomeColumns{base}}, &RunRecord{Data: &DataRef{File: "d.csv", SHA256: "2"}, DataColumns: []OutcomeColumns{cases[1].now}}
	if got := strings.Join(RecordChanges(was, now), "; "); got != "the data file d.csv changed (column x)" {
		t.Errorf("RecordChanges: %q", got)
	}
	now.DataColumns = []OutcomeColumns{cases[7].now} // reordered: no column
	if got := strings.Join(RecordChanges(was, now), "; "); got != "the data file d.csv changed" {
		t.Errorf("RecordChanges, reordered: %q", got)
	}
}

// A column renamed in the data (and in the plan), its values the same row
// for row, is said to be the same column under another name, not a column
// whose change cannot be told; a renamed column whose values changed too
// is not.
func TestColumnChangesRenamed(t *testing.T) {
	y := []int{0, 1, 0, 1, 1}
	x := []float64{40, 50, 43, 60, 70}
	g := []float64{0, 1, 1, 0, 0}
	w := []float64{1, 1, 1, 1, 1}
	c := []string{"k1", "k1", "k2", "k2", "k3"}
	base := printOf(y, x, g, w, c, 0)
	renamed := printOf(y, x, g, w, c, 0)
	renamed.Columns[1].Column = "x_new"
	got := strings.Join(ColumnChanges([]OutcomeColumns{base}, []OutcomeColumns{renamed}), "\n")
	want := "y: column x_new (predictor) holds, row for row, the values that column x held in the earlier run: the same column under another name\n" +
		"y: no other column this outcome uses changed in the rows it uses"
	if got != want {
		t.Errorf("renamed:\n got %s\nwant %s", got, want)
	}
	x2 := append([]float64(nil), x...)
	x2[2] = 34
	other := printOf(y, x2, g, w, c, 0)
	other.Columns[1].Column = "x_new"
	got = strings.Join(ColumnChanges([]OutcomeColumns{base}, []OutcomeColumns{other}), "\n")
	if strings.Contains(got, "under another name") || !strings.Contains(got, "x_new (predictor)") {
		t.Errorf("renamed and changed:\n%s", got)
	}
}
