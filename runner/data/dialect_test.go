package data

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// The three delimiters and two decimal marks read the same numbers.
func TestDialectsReadTheSameData(t *testing.T) {
	base := "y,a,b\n1,0.5,-1.25\n2,1e-3,3\n3,-0.75,2.5\n"
	want, err := Read(strings.NewReader(base), "base.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ delim, dec string }{{"semicolon", "comma"}, {"tab", "point"}, {"tab", "comma"}, {"semicolon", "point"}} {
		dl, err := ParseDialect(c.delim, c.dec)
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(base, "\n")
		for i, ln := range lines {
			cells := strings.Split(ln, ",")
			if dl.DecimalComma {
				for j := range cells {
					cells[j] = strings.ReplaceAll(cells[j], ".", ",")
				}
			}
			lines[i] = strings.Join(cells, string(dl.delim()))
		}
		got, err := Read(strings.NewReader(strings.Join(lines, "\n")), "x.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}, Dialect: dl})
		if err != nil {
			t.Fatalf("%v: %v", c, err)
		}
		for i := range want.X {
			if got.X[i] != want.X[i] {
				t.Errorf("%v: X[%d] = %v, want %v", c, i, got.X[i], want.X[i])
			}
		}
		if msg := SuggestDialect([]byte(strings.Join(lines, "\n")), dl); msg != "" {
			t.Errorf("%v: suggestion for a file in its own dialect: %s", c, msg)
		}
	}
}

func TestSuggestDialect(t *testing.T) {
	for _, c := range []struct {
		file string
		d    Dialect
		want string
	}{
		{"y;a\n1;0,5\n2;1,5\n", Dialect{}, "set delimiter: semicolon and decimal: comma"},
		{"y;a\n1;0.5\n2;1\n", Dialect{}, "set delimiter: semicolon under data"},
		{"y\ta\n1\t0.5\n", Dialect{}, "set delimiter: tab under data"},
		{"y;a\n1;0.5\n", Dialect{Delimiter: ';', DecimalComma: true}, "set decimal: point under data"},
		{"y,a\n1,0.5\n", Dialect{}, ""},
		{"y\n1\n2\n", Dialect{}, ""},
		// A comma-separated file with decimal points read as semicolon and
		// decimal comma: both keys (the decimal mark was kept as read).
		{"y,a,b\n1,0.5,2\n2,1.5,3\n", Dialect{Delimiter: ';', DecimalComma: true}, "looks comma-separated with a decimal point, but is read as semicolon-separated with a decimal comma: set delimiter: comma and decimal: point under data (ordplan fit: --delimiter comma --decimal point)"},
		{"y,a\n1,0.5\n", Dialect{DecimalComma: true}, "set decimal: point under data"},
		// Quoted decimal commas in a comma-separated file.
		{"y,a\n1,\"0,5\"\n2,\"1,25\"\n", Dialect{}, "looks comma-separated with a decimal comma, but is read as comma-separated with a decimal point: set decimal: comma under data"},
		{"y,a\n1,\"0,5\"\n2,\"1,25\"\n", Dialect{DecimalComma: true}, ""},
	} {
		got := SuggestDialect([]byte(c.file), c.d)
		if c.want == "" && got != "" || !strings.Contains(got, c.want) {
			t.Errorf("%q: got %q, want %q", c.file, got, c.want)
		}
	}
}

func TestCheckUTF8(t *testing.T) {
	if msg := checkUTF8([]byte("a,b\ncaf\xc3\xa9,1\n")); msg != "" {
		t.Errorf("valid UTF-8 refused: %s", msg)
	}
	if msg := checkUTF8([]byte("a,b\ncaf\xc3")); msg != "" {
		t.Errorf("a rune cut at the end of the sample refused: %s", msg)
	}
	if msg := checkUTF8([]byte("a,b\ncaf\xe9,1\n")); !strings.Contains(msg, "byte 0xe9 on line 2") {
		t.Errorf("Latin-1: %q", msg)
	}
}

// The new rows to predict are read in the data file's dialect: the same
// rows written with a semicolon and a decimal comma give the same values,
// and a decimal comma under the default dialect is refused, not misread.
func TestNewRowsFollowTheDialect(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	levels := map[string][]string{"site": {"north", "south"}}
	base := write("base.csv", "id,a,site\nr1,0.5,north\nr2,-1.25,south\n")
	semi := write("semi.csv", "id;a;site\nr1;0,5;north\nr2;-1,25;south\n")
	want, err := LoadRowsMissing(base, []string{"a", "site"}, levels, "", nil, nil, Dialect{})
	if err != nil {
		t.Fatal(err)
	}
	dl, _ := ParseDialect("semicolon", "comma")
	got, err := LoadRowsMissing(semi, []string{"a", "site"}, levels, "", nil, nil, dl)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(got.X, want.X) || !slices.Equal(got.Header, want.Header) || len(got.Cells) != 2 || got.Cells[1][0] != "r2" {
		t.Errorf("semicolon rows %v %v %v, want %v %v", got.X, got.Header, got.Cells, want.X, want.Header)
	}
	comma := write("comma.csv", "id,a,site\nr1,\"0,5\",north\n")
	if _, err := LoadRowsMissing(comma, []string{"a", "site"}, levels, "", nil, nil, Dialect{}); err == nil || !strings.Contains(err.Error(), "decimal comma") {
		t.Errorf("a decimal comma under the default dialect: %v", err)
	}
}

// A number with one comma under a decimal point: the message offers the
// decimal comma, and for 1,234 a thousands separator too.
func TestCommaInNumberMessage(t *testing.T) {
	for cell, want := range map[string]string{
		"0,5":     `value "0,5" is not a number (it has a decimal comma; if the file writes numbers that way, set data.decimal: comma, or --decimal comma)`,
		"1,234":   `value "1,234" is not a number (it has a comma: if it is a decimal comma, set data.decimal: comma, or --decimal comma; if it separates thousands, write the number without it, such as 1234)`,
		"-12,500": `value "-12,500" is not a number (it has a comma: if it is a decimal comma, set data.decimal: comma, or --decimal comma; if it separates thousands, write the number without it, such as -12500)`,
		"0,125":   `value "0,125" is not a number (it has a decimal comma; if the file writes numbers that way, set data.decimal: comma, or --decimal comma)`,
		"1234,5":  `value "1234,5" is not a number (it has a decimal comma; if the file writes numbers that way, set data.decimal: comma, or --decimal comma)`,
	} {
		if _, msg := (Dialect{}).number(cell); msg != want {
			t.Errorf("%s: %s\nwant %s", cell, msg, want)
		}
	}
}

// Numbers as data write them, and texts that only Go source reads as
// numbers: digit separators and hexadecimal floats are refused (strconv
// reads 0x1p3 as 8); a percentage is refused with what it is.
func TestNumberForms(t *testing.T) {
	for cell, want := range map[string]float64{"+1.5": 1.5, "-2e3": -2000, "1E-2": 0.01, ".5": 0.5, "5.": 5} {
		if v, msg := (Dialect{}).number(cell); msg != "" || v != want {
			t.Errorf("%q: %v %q, want %v", cell, v, msg, want)
		}
	}
	for _, cell := range []string{"0x1p3", "0X1P-2", "1_000", "0x10"} {
		if _, msg := (Dialect{}).number(cell); msg != "value "+strconv.Quote(cell)+" is not a number" {
			t.Errorf("%q: %q", cell, msg)
		}
	}
	_, err := Read(strings.NewReader("y,a\n1,0x1p3\n2,1\n"), "h.csv", Options{Outcome: "y", Predictors: []string{"a"}})
	if err == nil || err.Error() != `h.csv:2: column "a": value "0x1p3" is not a number` {
		t.Errorf("hexadecimal: %v", err)
	}
	_, err = Read(strings.NewReader("y,a\n1,50%\n2,1\n"), "p.csv", Options{Outcome: "y", Predictors: []string{"a"}})
	if err == nil || err.Error() != `p.csv:2: column "a": value "50%" is not a number; it is a percentage: write it as a number without the percent sign (50, or 0.5 as a share)` {
		t.Errorf("percentage: %v", err)
	}
}

// A missing-value code that is a number marks a missing value in a
// column read as numbers however the file writes the number (-99.00, as a
// spreadsheet's export of a column shown with two decimals writes -99),
// through every path: chunks (the fast way included), record by record,
// a decimal comma, the data dictionary's check and the new rows; a column
// of levels keeps its texts as written.
func TestNumericMissingCodes(t *testing.T) {
	var b strings.Builder
	b.WriteString("y,a,w,g\n")
	for i := 0; i < 3000; i++ { // enough lines for several chunks
		a := strconv.Itoa(i % 7)
		switch i % 500 {
		case 17:
			a = "-99.00"
		case 18:
			a = "-99"
		case 19:
			a = "-9.9e1"
		}
		fmt.Fprintf(&b, "%d,%s,1.0,%s\n", 1+i%3, a, []string{"p", "q", "-99"}[i%3])
	}
	in := b.String()
	opt := Options{Outcome: "y", Predictors: []string{"a"}, Weights: "w", MissingTokens: []string{"", "-99"}}
	for name, read := range map[string]func(string, Options) (*Dataset, error){
		"Read":       func(s string, o Options) (*Dataset, error) { return Read(strings.NewReader(s), "m.csv", o) },
		"ReadStream": func(s string, o Options) (*Dataset, error) { return ReadStream(strings.NewReader(s), "m.csv", o) },
	} {
		d, err := read(in, opt)
		if err != nil || d.RowsDropped != 18 || d.N != 2982 {
			t.Errorf("%s: %v, dropped %d of %d", name, err, d.RowsDropped, d.RowsRead)
		}
		semi := strings.NewReplacer(",", ";", ".", ",").Replace(in)
		sopt := opt
		sopt.Dialect = Dialect{Delimiter: ';', DecimalComma: true}
		if d, err := read(semi, sopt); err != nil || d.RowsDropped != 18 {
			t.Errorf("%s, decimal comma: %v, dropped %d", name, err, d.RowsDropped)
		}
		// A column's own code; levels keep their texts.
		lopt := Options{Outcome: "y", Predictors: []string{"a", "g"}, PredictorLevels: map[string][]string{"g": {"p", "q"}}, ColumnMissing: map[string][]string{"a": {"-99"}, "g": {"-99"}}}
		if d, err := read(in, lopt); err != nil || d.RowsDropped != 1000+12 {
			t.Errorf("%s, column codes: %v, dropped %d", name, err, d.RowsDropped)
		}
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "m.csv")
	os.WriteFile(path, []byte(in), 0o644)
	err := ValidateDialect(path, []Rule{{Column: "a", Key: "dictionary.a", Numeric: true, Range: []float64{0, 10}, Missing: []string{"-99"}}}, nil, Dialect{})
	if err != nil {
		t.Errorf("the dictionary's check: %v", err)
	}
	rows, err := LoadRowsMissing(path, []string{"a"}, nil, "", []string{"", "-99"}, nil, Dialect{})
	if err != nil || len(rows.Skipped) != 18 {
		t.Errorf("new rows: %v, skipped %d", err, len(rows.Skipped))
	}
}
