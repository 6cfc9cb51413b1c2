package data

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
)

// A data set read as parts is the data set of the concatenated file: the
// same rows, values, counts, drops and missing-value tables; its lines are
// numbered through the parts and map back to each part's file and line.
func TestPartsReadAsOne(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	all := write("all.csv", "y,a,b\n1,0.5,x\n2,NA,y\n3,1.5,x\n1,2,y\n2,,x\n3,0.25,y\n")
	// b's header lists the columns in another order.
	a := write("a.csv", "y,a,b\n1,0.5,x\n2,NA,y\n")
	b := write("b.csv", "b,y,a\nx,3,1.5\ny,1,2\n")
	c := write("c.csv", "y,a,b\n2,,x\n3,0.25,y\n")
	opt := Options{Outcome: "y", Predictors: []string{"a", "b"}, PredictorLevels: map[string][]string{"b": {"x", "y"}}}
	want, err := Load(all, opt)
	if err != nil {
		t.Fatal(err)
	}
	got, err := LoadFiles([]string{a, b, c}, opt)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []struct {
		name string
		g, w any
	}{
		{"Y", got.Y, want.Y}, {"X", got.X, want.X}, {"Categories", got.Categories, want.Categories},
		{"Counts", got.Counts, want.Counts}, {"RowsRead", got.RowsRead, want.RowsRead},
		{"Dropped", got.Dropped, want.Dropped}, {"Missing", got.Missing, want.Missing},
	} {
		if !reflect.DeepEqual(f.g, f.w) {
			t.Errorf("%s: %v, want %v", f.name, f.g, f.w)
		}
	}
	var where []string
	for _, l := range got.Lines {
		where = append(where, got.Where(l))
	}
	if w := []string{a + ":2", b + ":2", b + ":3", c + ":3"}; !reflect.DeepEqual(where, w) {
		t.Errorf("rows at %v, want %v", where, w)
	}
	if !reflect.DeepEqual(got.Files(), []string{a, b, c}) {
		t.Errorf("files %v", got.Files())
	}
}

// Bad parts are refused naming the part: a missing file, other columns,
// a part listed twice, a part without rows, a bad cell in a later part at
// that part's own line, an empty later part and one whose header names a
// column twice (at its own line 1).
func TestPartsBadInput(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(text), 0o644)
		return p
	}
	a := write("a.csv", "y,a\n1,0.5\n2,1\n")
	other := write("other.csv", "y,z\n1,0.5\n")
	empty := write("empty.csv", "y,a\n")
	bad := write("bad.csv", "y,a\n1,0.5\n2,high\n")
	zero := write("zero.csv", "")
	twice := write("twice.csv", "y,a,a\n1,0.5,2\n")
	opt := Options{Outcome: "y", Predictors: []string{"a"}}
	for _, c := range []struct {
		parts []string
		want  string
	}{
		{[]string{a, filepath.Join(dir, "gone.csv")}, "gone.csv: cannot open file: no such file or directory"},
		{[]string{a, other}, `other.csv:1: has other columns than the first part ` + a + ` (it lacks "a"; it has "z" besides); every part must have the same columns`},
		{[]string{a, a}, "a.csv: is listed twice among the parts; every part is read once"},
		{[]string{a, empty}, "empty.csv: no data rows after the header; every part needs rows"},
		{[]string{a, bad}, `bad.csv:3: column "a": value "high" is not a number`},
		{[]string{a, zero}, "zero.csv: file is empty (a header line naming the columns is needed)"},
		{[]string{a, twice}, `twice.csv:1: header: column name "a" appears twice (columns 2 and 3): rename one, since a plan finds a column by its name`},
	} {
		_, err := LoadFiles(c.parts, opt)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v: got %v, want %q", c.parts, err, c.want)
		}
	}
}

// inPart marks a data error (also wrapped) as a problem with the part as a
// whole, which local gives back unchanged (not renumbered through the
// parts); any other error passes as it is.
func TestInPart(t *testing.T) {
	de := &Error{File: "p2.csv", Line: 1, Msg: "header: column 1 has no name"}
	p := &partRecords{spans: []PartSpan{{File: "p1.csv", Offset: 0, Last: 5}, {File: "p2.csv", Offset: 5, Last: 9}}}
	for _, err := range []error{de, fmt.Errorf("opening: %w", de)} {
		if got := p.local(inPart(err)); got != de {
			t.Errorf("%v: local gives %v, want the part's own error", err, got)
		}
	}
	other := errors.New("not a data error")
	if got := inPart(other); got != other {
		t.Errorf("a plain error became %v", got)
	}
}

// Parts get the checks of the used columns a file gets before its rows
// (columnChecks), each part on its own through its header's order: points
// that separate thousands are refused in the part that writes them, at
// its file and line; a column whose every value has a point and three
// digits is noted once, naming the parts; a workbook part's sheet, its
// hidden rows and the hidden columns read are recorded (PartSpan.Sheet).
func TestPartsColumnChecks(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, b []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	opt := Options{Outcome: "y", Predictors: []string{"a", "w"}, Dialect: Dialect{Delimiter: ';'}}
	a := write("a.csv", []byte("y;a;w\n1;0.5;1.250\n2;1.5;2.500\n"))
	b := write("b.csv", []byte("w;y;a\n3.473;1;2\n313;2;0.25\n")) // w: thousands, in another column order
	c := write("c.csv", []byte("y;a;w\n2;0.5;4.125\n1;0.75;7.000\n"))
	if _, err := LoadFiles([]string{a, b}, opt); err == nil || !strings.HasPrefix(err.Error(), b+`:2: column "w": value "3.473" looks like 3473 written with a thousands separator`) {
		t.Errorf("thousands in the second part: %v", err)
	}
	d, err := LoadFiles([]string{a, c}, opt)
	if err != nil {
		t.Fatal(err)
	}
	want := "In the parts " + a + ", " + c + `, column w: every value is written with a point and three digits after it (2 values, such as 1.250)`
	if len(d.PointNotes) != 1 || !strings.HasPrefix(d.PointNotes[0], want) || !slices.Contains(d.Notes, d.PointNotes[0]) {
		t.Errorf("notes %q, want one starting %q", d.PointNotes, want)
	}
	if d, err := LoadFiles([]string{c, a}, Options{Outcome: "y", Predictors: []string{"a"}, Dialect: Dialect{Delimiter: ';'}}); err != nil || d.PointNotes != nil {
		t.Errorf("w not read: %v %q", err, d.PointNotes)
	}

	rows := [][]any{{"y", "a", "w"}, {1, 0.5, 3}, {2, 0.1, 4}, {1, 0.7, 5}}
	x := write("x.xlsx", sheetsBook(t, bookSheet{name: "data", rows: rows, hiddenRows: []int{3}, hiddenCols: "C"}))
	y := write("y.xlsx", sheetsBook(t, bookSheet{name: "draft", hidden: true, rows: rows}, bookSheet{name: "data", rows: rows}))
	opt = Options{Outcome: "y", Predictors: []string{"a", "w"}}
	d, err = LoadFiles([]string{x, y}, opt)
	if err != nil {
		t.Fatal(err)
	}
	if d.Sheet != nil || d.Parts[0].Sheet == nil || d.Parts[1].Sheet == nil {
		t.Fatalf("sheets %+v %+v", d.Sheet, d.Parts)
	}
	if s := *d.Parts[0].Sheet; s.Name != "data" || s.HiddenRows != 1 || !reflect.DeepEqual(s.HiddenColumns, []HiddenColumn{{"w", "C"}}) {
		t.Errorf("first part's sheet %+v", s)
	}
	if s := *d.Parts[1].Sheet; s.Name != "data" || s.HiddenRows != 0 || s.HiddenColumns != nil || s.Sheets != 2 {
		t.Errorf("second part's sheet %+v", s)
	}
	if got, want := PartSheets(d.Parts, nil), x+`, sheet "data" (1 of the rows read is hidden in the sheet`; !strings.HasPrefix(got, want) || !strings.HasSuffix(got, "; "+y+`, sheet "data"`) {
		t.Errorf("PartSheets %q", got)
	}
}
