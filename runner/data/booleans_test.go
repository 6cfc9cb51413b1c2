package data

import (
	"bytes"
	"fmt"
	"slices"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/xuri/excelize/v2"
)

// boolRows are the rows of the boolean tests: outcome y (false or true),
// a boolean b, a boolean s the subset reads, nil for a missing value.
var boolRows = []struct {
	y, b, s *bool
}{
	{bp(false), bp(true), bp(true)}, {bp(true), bp(false), bp(true)}, {bp(true), nil, bp(true)},
	{bp(false), bp(false), bp(false)}, {bp(true), bp(true), bp(true)}, {bp(false), bp(true), bp(true)},
}

func bp(b bool) *bool { return &b }

// boolFiles writes boolRows as CSV text (true and false spelled as
// spell gives them), an .xlsx workbook of boolean cells and a Parquet file
// of optional BOOLEAN columns; missing values are empty cells and nulls.
func boolFiles(t *testing.T) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	for i, spell := range []func(bool) string{
		func(b bool) string { return strings.ToUpper(fmt.Sprint(b)) },
		func(b bool) string { return fmt.Sprint(b) },
		func(b bool) string { return strings.ToUpper(fmt.Sprint(b)[:1]) + fmt.Sprint(b)[1:] },
	} {
		text := func(b *bool) string {
			if b == nil {
				return ""
			}
			return spell(*b)
		}
		var c strings.Builder
		c.WriteString("y,b,s\n")
		for _, r := range boolRows {
			fmt.Fprintf(&c, "%s,%s,%s\n", text(r.y), text(r.b), text(r.s))
		}
		files[fmt.Sprintf("d%d.csv", i)] = []byte(c.String())
	}
	f := excelize.NewFile()
	defer f.Close()
	f.SetSheetRow("Sheet1", "A1", &[]any{"y", "b", "s"})
	for i, r := range boolRows {
		for j, v := range []*bool{r.y, r.b, r.s} {
			if v != nil {
				cell, _ := excelize.CoordinatesToCellName(j+1, i+2)
				f.SetCellValue("Sheet1", cell, *v)
			}
		}
	}
	var xb bytes.Buffer
	if err := f.Write(&xb); err != nil {
		t.Fatal(err)
	}
	files["d.xlsx"] = xb.Bytes()
	type row struct {
		Y *bool `parquet:"y,optional"`
		B *bool `parquet:"b,optional"`
		S *bool `parquet:"s,optional"`
	}
	var rows []row
	for _, r := range boolRows {
		rows = append(rows, row{r.y, r.b, r.s})
	}
	var pb bytes.Buffer
	if err := parquet.Write(&pb, rows); err != nil {
		t.Fatal(err)
	}
	files["d.parquet"] = pb.Bytes()
	return files
}

// A boolean reads alike in every format: 1 (true) or 0 (false) in a
// column read as numbers, and in a column read as levels or categories
// the declared level or category it spells in any of its spellings (TRUE,
// True, true); a subset's one_of matches it the same way.
func TestBooleansAlikeInEveryFormat(t *testing.T) {
	files := boolFiles(t)
	names := make([]string, 0, len(files))
	for n := range files {
		names = append(names, n)
	}
	slices.Sort(names)
	wantX := []float64{1, 0, 0, 1, 1}
	for _, name := range names {
		raw := files[name]
		// As numbers: the outcome as integer codes, b a predictor.
		d, err := readBytes(raw, name, Options{Outcome: "y", Predictors: []string{"b"}, MissingTokens: []string{""}})
		if err != nil || !slices.Equal(d.X, wantX) || !slices.Equal(d.Y, []int{0, 1, 0, 1, 0}) || d.RowsDropped != 1 {
			t.Errorf("%s as numbers: %v %+v", name, err, d)
			continue
		}
		// As levels and categories declared in another spelling, with a
		// subset keeping the rows whose s is TRUE.
		opt := Options{Outcome: "y", Categories: []string{"FALSE", "TRUE"}, Predictors: []string{"b"},
			PredictorLevels: map[string][]string{"b": {"False", "True"}}, MissingTokens: []string{""},
			Keep: []Condition{{Column: "s", Op: "in", Values: []string{"TRUE"}, Key: "subset[0]"}}}
		d, err = readBytes(raw, name, opt)
		if err != nil || !slices.Equal(d.X, []float64{1, 0, 1, 1}) || !slices.Equal(d.Y, []int{0, 1, 1, 0}) || len(d.Notes) != 0 {
			t.Errorf("%s as levels: %v %+v", name, err, d)
		}
		// A numeric subset condition reads a boolean as its number.
		opt.Keep = []Condition{{Column: "s", Op: "==", Number: 1, Key: "subset[0]"}}
		if d2, err := readBytes(raw, name, opt); err != nil || !slices.Equal(d2.X, d.X) {
			t.Errorf("%s, s == 1: %v %+v", name, err, d2)
		}
	}
}

// boolWord knows the spellings true, True, TRUE (and false's alike), and
// no other text; a boolean is read as a number only from these.
func TestBoolWord(t *testing.T) {
	for _, c := range []struct {
		s  string
		v  float64
		ok bool
	}{{"true", 1, true}, {"True", 1, true}, {"TRUE", 1, true}, {"false", 0, true}, {"False", 0, true}, {"FALSE", 0, true},
		{"tRUE", 0, false}, {"T", 0, false}, {"yes", 0, false}, {"1", 0, false}, {" true", 0, false}} {
		if v, ok := boolWord(c.s); v != c.v || ok != c.ok {
			t.Errorf("boolWord(%q) = %v, %v", c.s, v, ok)
		}
	}
	if v, msg := (Dialect{DecimalComma: true}).number("TRUE"); v != 1 || msg != "" {
		t.Errorf("TRUE with a decimal comma: %v %q", v, msg)
	}
	if _, msg := (Dialect{}).number("tRUE"); msg == "" {
		t.Error("tRUE read as a number")
	}
}

// A missing-value marker spelling a boolean marks that text (and its
// other spellings are no marker): it does not mark every 1 or 0 of a
// column read as numbers, as a marker -99 marks -99.0.
func TestBooleanMarkerMarksItsText(t *testing.T) {
	raw := []byte("y,b\n1,TRUE\n2,1\n1,0\n2,FALSE\n")
	d, err := readBytes(raw, "d.csv", Options{Outcome: "y", Predictors: []string{"b"}, MissingTokens: []string{"TRUE"}})
	if err != nil || !slices.Equal(d.X, []float64{1, 0, 0}) || d.RowsDropped != 1 {
		t.Errorf("%v %+v", err, d)
	}
}
