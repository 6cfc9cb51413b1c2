package rscript

import (
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// parse reads R's "name v1 v2 ..." lines (as printed by
// cat(name, sprintf("%.17g", v), "\n")) without losing a digit, and refuses
// anything else.
func TestParse(t *testing.T) {
	v, err := parse([]byte("a.theta 2.8523903676542552 -0.70883006286987216 \nll -130.47168374355917 \n\nnan NaN Inf -Inf\n"))
	if err != nil {
		t.Fatal(err)
	}
	if got := v["a.theta"]; len(got) != 2 || got[0] != 2.8523903676542552 || got[1] != -0.70883006286987216 {
		t.Errorf("a.theta = %v", got)
	}
	if got := v["ll"]; len(got) != 1 || got[0] != -130.47168374355917 {
		t.Errorf("ll = %v", got)
	}
	if got := v["nan"]; len(got) != 3 || !math.IsNaN(got[0]) || !math.IsInf(got[1], 1) || !math.IsInf(got[2], -1) {
		t.Errorf("nan = %v", got)
	}
	for _, bad := range []string{"x 1\nx 2\n", "Warning message: something\n", "x 1 NA\n"} {
		if _, err := parse([]byte(bad)); err == nil {
			t.Errorf("%q: no error", bad)
		}
	}
}

func TestCSVRoundTrip(t *testing.T) {
	path := filepath.Join(t.TempDir(), "x.csv")
	a := []float64{0.1, 1.0 / 3, -2.5e-300, 4}
	b := []float64{1, 2, 3, math.Pi}
	WriteCSV(t, path, []string{"a", "b"}, [][]float64{a, b})
	tb := ReadCSV(t, path)
	if tb.Rows != 4 || strings.Join(tb.Names, ",") != "a,b" {
		t.Fatalf("%d rows, names %v", tb.Rows, tb.Names)
	}
	for i := range a {
		if tb.Col(t, "a")[i] != a[i] || tb.Col(t, "b")[i] != b[i] {
			t.Errorf("row %d: %v %v", i, tb.Col(t, "a")[i], tb.Col(t, "b")[i])
		}
	}
}

// RequirePackages skips a test that needs an R package R cannot load
// (without Rscript, Require skips it first).
func TestRequirePackagesSkips(t *testing.T) {
	var skipped bool
	t.Run("missing", func(t *testing.T) {
		defer func() { skipped = t.Skipped() }()
		RequirePackages(t, "stats", "ordplanNoSuchPackage")
		t.Error("went on without the package")
	})
	if !skipped {
		t.Error("not skipped")
	}
}
