package runner

import (
	"bytes"
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/rscript"
	"ordplan/runner/data"
)

// The completed sets a run writes (data.imputation.write_sets) are the
// sets its fits used: split by imputed_set and read back by the ordinary
// reader with the run's own reading of the outcome, each set has the
// outcome, the predictors (level indexes of a categorical column, numbers
// to the bit) and the lines of the set the fits were made on; and the
// data_line of each row is the data file's line. Without the key nothing
// is written.
func TestCompletedSetsReadBackAsFitted(t *testing.T) {
	p := chainedFixture(t, "  imputation: {sets: 3, iterations: 2, write_sets: true}")
	r := runPlan(t, p, 1)
	im := r.Outcomes[0].Imputed
	text, err := im.CompletedSetsCSV()
	if err != nil || text == nil {
		t.Fatalf("no sets written: %v", err)
	}
	recs, err := csv.NewReader(bytes.NewReader(text)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(recs[0], ","); got != "imputed_set,data_line,y,x,g" {
		t.Fatalf("header %s", got)
	}
	if len(recs)-1 != im.M*im.Rows {
		t.Fatalf("%d rows, want %d sets of %d", len(recs)-1, im.M, im.Rows)
	}
	reading := r.Analysis.Outcomes[0]
	opt := reading.Options
	opt.Refuse = true // a completed set has no missing value left
	dir := t.TempDir()
	for s := 0; s < im.M; s++ {
		var b strings.Builder
		w := csv.NewWriter(&b)
		w.Write(recs[0][2:])
		for i, rec := range recs[1+s*im.Rows : 1+(s+1)*im.Rows] {
			if rec[0] != strconv.Itoa(s+1) {
				t.Fatalf("set %d row %d: imputed_set %s", s+1, i+1, rec[0])
			}
			if line, _ := strconv.Atoi(rec[1]); line != im.Data[s].Lines[i] {
				t.Fatalf("set %d row %d: data_line %d, the set's row is line %d", s+1, i+1, line, im.Data[s].Lines[i])
			}
			w.Write(rec[2:])
		}
		w.Flush()
		path := filepath.Join(dir, "set"+strconv.Itoa(s+1)+".csv")
		if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		back, err := data.Load(path, opt)
		if err != nil {
			t.Fatalf("set %d read back: %v", s+1, err)
		}
		used := im.Data[s]
		if back.N != used.N || !slices.Equal(back.Y, used.Y) || !slices.Equal(back.Categories, used.Categories) {
			t.Fatalf("set %d: outcome read back differs (%d rows, %d used)", s+1, back.N, used.N)
		}
		for k, x := range used.X {
			if math.Float64bits(back.X[k]) != math.Float64bits(x) {
				t.Fatalf("set %d row %d column %s: read back %v, fitted %v", s+1, k/used.K+1, used.Predictors[k%used.K], back.X[k], x)
			}
		}
	}
	// Every observed value of the data file is in every set as written.
	file, _ := os.ReadFile(p.Data.Path)
	lines := strings.Split(string(file), "\n")
	for _, rec := range recs[1:] {
		line, _ := strconv.Atoi(rec[1])
		orig := strings.Split(lines[line-1], ",")
		for k, v := range orig {
			if v != "" && v != "NA" && v != rec[2+k] {
				if a, e1 := strconv.ParseFloat(v, 64); e1 != nil || a != mustFloat(t, rec[2+k]) {
					t.Fatalf("line %d column %d: observed %q, set %s has %q", line, k, v, rec[0], rec[2+k])
				}
			}
		}
	}
	q := chainedFixture(t, "  imputation: {sets: 3, iterations: 2}")
	if text, err := runPlan(t, q, 1).Outcomes[0].Imputed.CompletedSetsCSV(); text != nil || err != nil {
		t.Errorf("without write_sets: %d bytes, %v", len(text), err)
	}
}

func mustFloat(t *testing.T, s string) float64 {
	t.Helper()
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return x
}

// R's read.csv, split by imputed_set, reads the written sets back to the
// values the fits used, bit for bit (numbers printed by R with 17
// significant digits), the outcome's labels and g's levels as written.
func TestCompletedSetsReadInR(t *testing.T) {
	rscript.Require(t)
	p := chainedFixture(t, "  imputation: {sets: 3, iterations: 2, write_sets: true}")
	// x to the last digit (a third of the fixture's): what the sets
	// write must read back to every bit.
	b, _ := os.ReadFile(p.Data.Path)
	lines := strings.Split(string(b), "\n")
	for i := 1; i < len(lines); i++ {
		if f := strings.Split(lines[i], ","); len(f) == 3 && f[1] != "" {
			f[1] = strconv.FormatFloat(mustFloat(t, f[1])/3, 'g', -1, 64)
			lines[i] = strings.Join(f, ",")
		}
	}
	os.WriteFile(p.Data.Path, []byte(strings.Join(lines, "\n")), 0o644)
	r := runPlan(t, p, 1)
	im := r.Outcomes[0].Imputed
	text, err := im.CompletedSetsCSV()
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(text), "333333") {
		t.Fatal("the sets hold no value with many digits")
	}
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "sets.csv"), text, 0o644)
	os.WriteFile(filepath.Join(dir, "levels.txt"), []byte("a\nb\nc\n"), 0o644)
	vals := rscript.Run(t, dir, "testdata/rcheck/readsets.R")
	if got := vals.Scalar(t, "sets"); got != float64(im.M) {
		t.Fatalf("R reads %g sets, want %d", got, im.M)
	}
	for s, ds := range im.Data {
		k := strconv.Itoa(s + 1)
		lines, ys, xs, gs := vals.Get(t, "line"+k), vals.Get(t, "y"+k), vals.Get(t, "x"+k), vals.Get(t, "g"+k)
		if len(xs) != ds.N {
			t.Fatalf("set %d: R reads %d rows, the set has %d", s+1, len(xs), ds.N)
		}
		xcol, gcol := slices.Index(ds.Predictors, "x"), slices.Index(ds.Predictors, "g")
		for i := 0; i < ds.N; i++ {
			y, _ := strconv.ParseFloat(ds.Categories[ds.Y[i]], 64)
			if lines[i] != float64(ds.Lines[i]) || ys[i] != y || gs[i] != ds.X[i*ds.K+gcol] ||
				math.Float64bits(xs[i]) != math.Float64bits(ds.X[i*ds.K+xcol]) {
				t.Fatalf("set %d row %d: R reads line %g, y %g, x %v, g %g; the fitted set has line %d, y %s, x %v, g %g",
					s+1, i+1, lines[i], ys[i], xs[i], gs[i], ds.Lines[i], ds.Categories[ds.Y[i]], ds.X[i*ds.K+xcol], ds.X[i*ds.K+gcol])
			}
		}
	}
}
