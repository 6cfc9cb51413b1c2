package data

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func TestReadHeader(t *testing.T) {
	names, err := ReadHeader(strings.NewReader("\uFEFF y , a,\"b c\"\r\n1,2\n"), "h.csv")
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"y", "a", "b c"}; !reflect.DeepEqual(names, want) {
		t.Errorf("names %q, want %q", names, want)
	}
	for _, c := range []struct{ in, want string }{
		{"", `h.csv: file is empty (a header line naming the columns is needed)`},
		{"y,a,a\n", `h.csv:1: header: column name "a" appears twice (columns 2 and 3): rename one, since a plan finds a column by its name`},
		{"y,,a\n", `h.csv:1: header: column 2 has no name: name it (or, if the column holds nothing, delete it)`},
		{"y,\"a\n", `h.csv:1: malformed CSV at character 6: extraneous or missing " in quoted-field`},
	} {
		_, err := ReadHeader(strings.NewReader(c.in), "h.csv")
		var e *Error
		if !errors.As(err, &e) || err.Error() != c.want {
			t.Errorf("ReadHeader(%q) = %v, want %s", c.in, err, c.want)
		}
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "h.csv")
	os.WriteFile(path, []byte("y,x\n"), 0o644)
	if names, err := Header(path); err != nil || !reflect.DeepEqual(names, []string{"y", "x"}) {
		t.Errorf("Header = %q, %v", names, err)
	}
	_, err = Header(filepath.Join(dir, "none.csv"))
	var e *Error
	if !errors.As(err, &e) || !strings.HasPrefix(e.Msg, "cannot open file: ") || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("Header of a missing file: %v", err)
	}
}

// A file whose lines all end in a delimiter (a stray empty column, as
// spreadsheets export one) has unnamed columns after its last name: they
// are not among the names, and the file reads as the same file without
// them, through every path (chunks, record at a time, the profile of
// ordplan init); an unnamed column between names is still refused.
func TestTrailingUnnamedColumns(t *testing.T) {
	plain := "y,a,g\n1,0.5,p\n2,1.5,q\n1,-1,q\n2,2,p\n"
	trailing := strings.ReplaceAll(plain, "\n", ",,\n")
	for _, in := range []string{trailing, strings.ReplaceAll(plain, "\n", ", \r\n")} {
		names, err := ReadHeader(strings.NewReader(in), "h.csv")
		if err != nil || !reflect.DeepEqual(names, []string{"y", "a", "g"}) {
			t.Errorf("names %q, %v", names, err)
		}
	}
	opt := Options{Outcome: "y", Predictors: []string{"a", "g"}, PredictorLevels: map[string][]string{"g": {"p", "q"}}}
	want, err := Read(strings.NewReader(plain), "t.csv", opt)
	if err != nil {
		t.Fatal(err)
	}
	for name, read := range map[string]func(string) (*Dataset, error){
		"Read":       func(s string) (*Dataset, error) { return Read(strings.NewReader(s), "t.csv", opt) },
		"ReadStream": func(s string) (*Dataset, error) { return ReadStream(strings.NewReader(s), "t.csv", opt) },
	} {
		got, err := read(trailing)
		if err != nil || !reflect.DeepEqual(got, want) {
			t.Errorf("%s: %v\n%+v\nwant %+v", name, err, got, want)
		}
	}
	path := filepath.Join(t.TempDir(), "t.csv")
	os.WriteFile(path, []byte(trailing), 0o644)
	if p, err := ProfileFile(path, nil, Dialect{}); err != nil || len(p) != 3 || p[2].Name != "g" || p[2].Distinct != 2 {
		t.Errorf("profile: %v %+v", err, p)
	}
	if _, err := Read(strings.NewReader("y,a,\n1,2,\n2,3\n"), "t.csv", Options{Outcome: "y", Predictors: []string{"a"}}); err == nil || err.Error() != "t.csv:3: row has 2 fields but the header has 3 (the last 1 unnamed: the header line ends with 1 delimiter after its last name, which this row does not have: remove it from the header line)" {
		t.Errorf("a row without the trailing field: %v", err)
	}
}

// Rows of weight zero stand for no observation: they are dropped and
// counted, and a file of nothing else says so.
func TestAllRowsZeroWeight(t *testing.T) {
	_, err := Read(strings.NewReader("y,w\n1,0\n2,0\n"), "t.csv", Options{Outcome: "y", Weights: "w"})
	want := `t.csv: all 2 data rows were dropped for zero weight (w = 0: 2)`
	if err == nil || err.Error() != want {
		t.Errorf("got %v, want %s", err, want)
	}
}

// A data line that repeats the header (files joined each with its header)
// is refused at its line, by the reader of fits and by the profile of
// ordplan init, even where a subset condition would drop it; a line that
// repeats only some names is an ordinary row.
func TestHeaderRepeated(t *testing.T) {
	raw := []byte("y,a,g\n1,0.5,n\n2,1.5,s\n y , a,g\n1,0.1,n\n2,0.2,s\n")
	const want = `d.csv:4: this line repeats the header (y,a,g) of line 1: a data file has one header line; remove the repeated one`
	for _, keep := range [][]Condition{nil, {{Column: "g", Op: "in", Values: []string{"n", "s"}, Key: "subset[0]"}}} {
		_, err := readBytes(raw, "d.csv", Options{Outcome: "y", Predictors: []string{"a"}, MissingTokens: []string{""}, Keep: keep})
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("subset %v: %v, want %q", keep, err, want)
		}
	}
	path := filepath.Join(t.TempDir(), "d.csv")
	if err := os.WriteFile(path, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ProfileFile(path, []string{""}, Dialect{}); err == nil || !strings.Contains(err.Error(), want[len("d.csv"):]) {
		t.Errorf("profile: %v", err)
	}
	// A repeated header whose every cell reads as a valid value (the
	// outcome's category "y", the level "g"): refused on the fast way
	// (no subset) as on the general way.
	valid := []byte("y,g\nlo,a\ny,g\n  y,g\nlo,g\n")
	for _, keep := range [][]Condition{nil, {{Column: "g", Op: "not_in", Values: []string{"zz"}, Key: "subset[0]"}}} {
		opt := Options{Outcome: "y", Categories: []string{"lo", "y"}, Predictors: []string{"g"}, PredictorLevels: map[string][]string{"g": {"a", "g"}}, MissingTokens: []string{""}, Keep: keep}
		const want = `d.csv:3: this line repeats the header (y,g) of line 1`
		if _, err := readBytes(valid, "d.csv", opt); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("valid cells, subset %v: %v, want %q", keep, err, want)
		}
	}
	part := []byte("y,a,g\n1,0.5,n\n2,1.5,s\ny,a,x\n")
	if _, err := readBytes(part, "d.csv", Options{Outcome: "y", Predictors: []string{"a"}, MissingTokens: []string{""}}); err == nil || strings.Contains(err.Error(), "repeats the header") {
		t.Errorf("a line repeating two of three names: %v", err)
	}
}

// A column is found by its name in either Unicode form, composed (NFC)
// or with combining accents (NFD), as declared levels are matched: in one
// file, and among parts whose headers write it in different forms
// (OtherColumns sees one set of names); the data are those of the file
// with the plan's form.
func TestColumnNameUnicodeForms(t *testing.T) {
	nfc, nfd := "gr\u00f6\u00dfe", "gro\u0308\u00dfe"
	dir := t.TempDir()
	write := func(name, head string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte("y,"+head+"\n1,0.5\n2,1.5\n1,-1\n2,2\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	a, b := write("a.csv", nfc), write("b.csv", nfd)
	want, err := Load(a, Options{Outcome: "y", Predictors: []string{nfc}})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		paths []string
		col   string
	}{{[]string{b}, nfc}, {[]string{a}, nfd}, {[]string{a, b}, nfc}, {[]string{b, a}, nfd}} {
		got, err := LoadFiles(c.paths, Options{Outcome: "y", Predictors: []string{c.col}})
		if err != nil {
			t.Errorf("%d parts, column %+q: %v", len(c.paths), c.col, err)
			continue
		}
		if n := len(want.X); !reflect.DeepEqual(got.X[:n], want.X) || !reflect.DeepEqual(got.Y[:n], want.Y) {
			t.Errorf("%d parts, column %+q: %v %v, want %v %v", len(c.paths), c.col, got.X, got.Y, want.X, want.Y)
		}
	}
	if msg := OtherColumns([]string{"y", nfc}, []string{nfd, "y"}); msg != "" {
		t.Errorf("OtherColumns: %s", msg)
	}
	if !HasColumn([]string{"y", nfd}, nfc) || HasColumn([]string{"Y"}, "y") || HasColumn([]string{"TRUE"}, "true") {
		t.Error("HasColumn compares the composed forms and nothing else")
	}
}

// A name twice in a workbook's header names the two cells too.
func TestWorkbookHeaderNameTwice(t *testing.T) {
	_, err := readBytes(toBook(t, "y,a,b,a\n1,2,3,4\n2,3,4,5\n"), "h.xlsx", Options{Outcome: "y", Predictors: []string{"b"}})
	if want := `h.xlsx:1: header: column name "a" appears twice (columns 2 and 4, cells B1 and D1): rename one, since a plan finds a column by its name`; err == nil || err.Error() != want {
		t.Errorf("got %v, want %s", err, want)
	}
}

// A first line "sep=;" (a spreadsheet program's line naming the
// delimiter) is refused, saying what it is; a title line above the header
// is named as a possible title where the header has one field and the next
// line more.
func TestSepAndTitleLines(t *testing.T) {
	opt := Options{Outcome: "y", Predictors: []string{"a"}}
	for in, want := range map[string]string{
		"sep=;\ny;a\n1;2\n":             `t.csv:1: line 1 is "sep=;", the line a spreadsheet program writes to name the delimiter, not the header: delete the line, so that the header is the first line, and read the file as semicolon-separated (data.delimiter: semicolon; ordplan fit and ordplan init: --delimiter semicolon)`,
		"\uFEFFsep=,\r\ny,a\r\n1,2\r\n": `t.csv:1: line 1 is "sep=,", the line a spreadsheet program writes to name the delimiter, not the header: delete the line, so that the header is the first line`,
		"Export 2024\ny,a\n1,2\n":       `t.csv: column "y": outcome column not found in the header; available columns: "Export 2024"; the first line holds one field and the next 2: if the first line is a title above the table, delete it (a CSV file's header is its first line)`,
	} {
		_, err := Read(strings.NewReader(in), "t.csv", opt)
		if err == nil || err.Error() != want {
			t.Errorf("%q: got %v, want %s", in, err, want)
		}
	}
	path := filepath.Join(t.TempDir(), "t.csv")
	os.WriteFile(path, []byte("Export 2024\ny,a\n1,2\n"), 0o644)
	if _, err := ProfileFile(path, nil, Dialect{}); err == nil || !strings.HasSuffix(err.Error(), "t.csv:2: row has 2 fields but the header has 1; the first line holds one field and the next 2: if the first line is a title above the table, delete it (a CSV file's header is its first line)") {
		t.Errorf("profile of a title line: %v", err)
	}
	if _, err := Read(strings.NewReader("y\n1\n2\n"), "t.csv", Options{Outcome: "y"}); err != nil {
		t.Errorf("a file of one column: %v", err)
	}
}

// A column named but for its spaces (a line break, a no-break space, two
// spaces) is said to be so; another name is not.
func TestSpacedColumn(t *testing.T) {
	names := []string{"y", "Age\n(years)", "Weight\u00a0kg", "a  b"}
	for col, want := range map[string]string{
		"Age (years)": `the file names it "Age\n(years)", with a line break (or another control character) in the name, which a plan cannot write: rename the column in the file, on one line`,
		"Weight kg":   `the file names it "Weight\u00a0kg", with other spaces (a no-break space, or more than one) between its words: write the name so (in a plan, a double-quoted name takes \u00a0 for a no-break space), or rename the column in the file`,
		"a b":         `the file names it "a  b", with other spaces (a no-break space, or more than one) between its words: write the name so (in a plan, a double-quoted name takes \u00a0 for a no-break space), or rename the column in the file`,
		"Age":         "",
	} {
		if got := SpacedColumn(col, names); got != want {
			t.Errorf("%q: got %q, want %q", col, got, want)
		}
	}
}
