package data

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

var opts = Options{Outcome: "y", Predictors: []string{"a", "b"}}

func TestReadErrors(t *testing.T) {
	labelled := Options{Outcome: "y", Categories: []string{"low", "mid", "high"}, Predictors: []string{"a"}}
	tests := []struct {
		name string
		in   string
		opt  Options
		line int
		col  string
		want string // full rendered message
	}{
		{"empty file", "", opts, 0, "",
			`t.csv: file is empty (a header line naming the columns is needed)`},
		{"blank lines only", "\n\r\n\n", opts, 0, "",
			`t.csv: file is empty (a header line naming the columns is needed)`},
		{"header only", "y,a,b\n", opts, 0, "",
			`t.csv: no data rows after the header`},
		{"duplicate header", "y,a,b,a\n1,2,3,4\n", opts, 1, "",
			`t.csv:1: header: column name "a" appears twice (columns 2 and 4): rename one, since a plan finds a column by its name`},
		{"unnamed header column", "y,a,,b\n1,2,3,4\n", opts, 1, "",
			`t.csv:1: header: column 3 has no name: name it (or, if the column holds nothing, delete it)`},
		{"missing predictor column", "y,a,c\n1,2,3\n", opts, 0, "b",
			`t.csv: column "b": predictor column not found in the header; available columns: "y", "a", "c"`},
		{"missing outcome column", "z,a,b\n1,2,3\n", opts, 0, "y",
			`t.csv: column "y": outcome column not found in the header; available columns: "z", "a", "b"`},
		{"missing weights column", "y,a,b\n1,2,3\n", Options{Outcome: "y", Weights: "w"}, 0, "w",
			`t.csv: column "w": weights column not found in the header; available columns: "y", "a", "b"`},
		{"cluster column named in another letter case", "y,a,b,site-id\n1,2,3,4\n", Options{Outcome: "y", Cluster: "Site_ID"}, 0, "Site_ID",
			`t.csv: column "Site_ID": cluster column not found in the header; did you mean "site-id"?`},
		{"ragged short row", "y,a,b\n1,2,3\n2,3\n", opts, 3, "",
			`t.csv:3: row has 2 fields but the header has 3`},
		{"ragged long row", "y,a,b\n1,2,3\n2,3,4\n1,2,3,4\n", opts, 4, "",
			`t.csv:4: row has 4 fields but the header has 3`},
		{"bad quote", "y,a,b\n1,2,3\n1,x\"y,3\n", opts, 3, "a",
			`t.csv:3: column "a": malformed CSV at character 4: bare " in non-quoted-field; the field is: x"y ; a quote is read inside a field only when the whole field is enclosed in quotes and the quote is written twice, as "x""y" ; correct the field, or remove the quote`},
		// A quote in a column no plan reads, as tab-separated exports write
		// inches in a free-text column: the column and field are named (it
		// said only the line and the character).
		{"bare quote in an unused column", "y\ta\tnote\n1\t2\tok\n2\t3\ta 12\" pipe\n", Options{Outcome: "y", Predictors: []string{"a"}, Dialect: Dialect{Delimiter: '\t'}}, 3, "note",
			`t.csv:3: column "note": malformed CSV at character 9: bare " in non-quoted-field; the field is: a 12" pipe ; a quote is read inside a field only when the whole field is enclosed in quotes and the quote is written twice, as "a 12"" pipe" ; correct the field, or remove the quote`},
		{"text after a quoted field, after a quoted delimiter", "y,note,a\n1,ok,2\n2,\"a,b\" c,3\n", Options{Outcome: "y", Predictors: []string{"a"}}, 3, "note",
			`t.csv:3: column "note": malformed CSV at character 7: extraneous or missing " in quoted-field; the field is: "a,b" c ; a quote is read inside a field only when the whole field is enclosed in quotes and the quote is written twice, as """a,b"" c" ; correct the field, or remove the quote`},
		{"quote not closed", "y,a,b\n1,2,3\n1,\"2,3\n2,3,4\n1,2,3\n", opts, 3, "",
			`t.csv:3: malformed CSV: a quoted field of the row that starts on this line is not closed where it should be (an extraneous or missing " in a quoted field), and the row runs on to line 5: check the quotes of this row`},
		{"non-numeric predictor", "y,a,b\n1,2,3\n2,abc,4\n", opts, 3, "a",
			`t.csv:3: column "a": value "abc" is not a number; the column holds text: declare it categorical with its levels to use it as a predictor (in a plan under categorical:, in ordplan fit as COLUMN|levels=a/b/c)`},
		{"underscore number", "y,a,b\n1,2,3\n2,1_000,4\n", opts, 3, "a",
			`t.csv:3: column "a": value "1_000" is not a number`},
		{"literal Inf", "y,a,b\n1,2,Inf\n", opts, 2, "b",
			`t.csv:2: column "b": value "Inf" is infinite`},
		{"literal -inf", "y,a,b\n1,-inf,3\n", opts, 2, "a",
			`t.csv:2: column "a": value "-inf" is infinite`},
		{"overflow", "y,a,b\n1,2,3\n1,1e999,3\n", opts, 3, "a",
			`t.csv:3: column "a": value "1e999" is infinite (too large for a number)`},
		{"literal nan not a token", "y,a,b\n1,nan,3\n", opts, 2, "a",
			`t.csv:2: column "a": value "nan" is NaN, which is not a number; it looks like a missing-value marker, which is not among the markers in force: to read it as missing, set data.missing_values: ["", "NA", "NaN", ".", "nan"] (the markers in force and it), or list it for this column alone under dictionary.a.missing (ordplan fit: --missing-codes a=nan)`},
		{"NaN when tokens exclude it", "y,a,b\n1,NaN,3\n", Options{Outcome: "y", Predictors: []string{"a", "b"}, MissingTokens: []string{""}}, 2, "a",
			`t.csv:2: column "a": value "NaN" is NaN, which is not a number; it looks like a missing-value marker, which is not among the markers in force: to read it as missing, set data.missing_values: ["", "NaN"] (the markers in force and it), or list it for this column alone under dictionary.a.missing (ordplan fit: --missing-codes a=NaN)`},
		// Markers without the empty cell: it said "leave the cell empty to
		// mark a missing value", which these markers do not read as one.
		{"NaN when the markers leave out the empty cell", "y,a,b\n1,NaN,3\n", Options{Outcome: "y", Predictors: []string{"a", "b"}, MissingTokens: []string{"-99"}}, 2, "a",
			`t.csv:2: column "a": value "NaN" is NaN, which is not a number; it looks like a missing-value marker, which is not among the markers in force: to read it as missing, set data.missing_values: ["-99", "NaN"] (the markers in force and it), or list it for this column alone under dictionary.a.missing (ordplan fit: --missing-codes a=NaN)`},
		{"non-numeric weight", "y,a,w\n1,2,x\n", Options{Outcome: "y", Weights: "w"}, 2, "w",
			`t.csv:2: column "w": value "x" is not a number`},
		{"non-numeric offset", "y,a,o\n1,2,zz\n", Options{Outcome: "y", Offset: "o"}, 2, "o",
			`t.csv:2: column "o": value "zz" is not a number`},
		{"negative weight", "y,w\n1,-2\n2,1\n", Options{Outcome: "y", Weights: "w"}, 2, "w",
			`t.csv:2: column "w": weight "-2" is negative (weights must be zero or more; a row of weight 0 is dropped)`},
		{"undeclared category", "y,a\nlow,1\nmedium,2\n", labelled, 3, "y",
			`t.csv:3: column "y": value "medium" is not one of the declared categories: "low", "mid", "high" (add it to the categories, or list it among the missing-value markers)`},
		{"outcome not integer", "y,a,b\n1,2,3\n2.5,2,3\n", opts, 3, "y",
			`t.csv:3: column "y": value "2.5" is not an integer category code (declare the categories to use text labels: outcomes[].categories; ordplan fit: --categories)`},
		{"outcome text without categories", "y,a,b\nlow,2,3\n", opts, 2, "y",
			`t.csv:2: column "y": value "low" is not an integer category code (declare the categories to use text labels: outcomes[].categories; ordplan fit: --categories)`},
		{"one category", "y,a,b\n2,1,1\n2,2,2\n3,,1\n", opts, 0, "y",
			`t.csv: column "y": only one category ("2") among the 2 kept rows; at least two are needed`},
		{"one declared category observed", "y,a\nmid,1\nmid,2\n", labelled, 0, "y",
			`t.csv: column "y": only one category ("mid") among the 2 kept rows; at least two are needed`},
		{"all rows dropped", "y,a,b\n1,,3\nNA,2,3\n2,3,.\n", opts, 0, "",
			`t.csv: all 3 data rows were dropped for missing values (y: 1, a: 1, b: 1; a row with several of these is counted once, under the first)`},
		{"refuse missing", "y,a,b\n1,2,3\n2, NA ,3\n", Options{Outcome: "y", Predictors: []string{"a", "b"}, Refuse: true}, 3, "a",
			`t.csv:3: column "a": missing value ("NA") where missing values are refused`},
		{"refuse empty outcome", "y,a,b\n,2,3\n", Options{Outcome: "y", Predictors: []string{"a", "b"}, Refuse: true}, 2, "y",
			`t.csv:2: column "y": missing value (empty cell) where missing values are refused`},
		{"no outcome option", "y,a\n1,2\n", Options{}, 0, "",
			`t.csv: no outcome column given`},
		{"column given twice", "y,a\n1,2\n", Options{Outcome: "y", Predictors: []string{"a", "a"}}, 0, "",
			`t.csv: column "a" is given twice as predictor`},
		{"outcome also predictor", "y,a\n1,2\n", Options{Outcome: "y", Predictors: []string{"y"}}, 0, "",
			`t.csv: column "y" is given both as outcome and as predictor`},
		{"duplicate declared category", "y,a\n1,2\n", Options{Outcome: "y", Categories: []string{"a", "b", "a"}}, 0, "",
			`t.csv: outcome category "a" is declared twice`},
		{"single declared category", "y,a\n1,2\n", Options{Outcome: "y", Categories: []string{"a"}}, 0, "",
			`t.csv: only one outcome category declared ("a"); at least two are needed`},
		{"line after quoted newline", "y,a,b\n1,\"2\n\",3\n2,q,3\n", opts, 4, "a",
			`t.csv:4: column "a": value "q" is not a number; the column holds text: declare it categorical with its levels to use it as a predictor (in a plan under categorical:, in ordplan fit as COLUMN|levels=a/b/c)`},
		{"field line is where the field starts", "y,a,b\n1,\"2\n\",\"\nq\"\n", opts, 3, "b",
			`t.csv:3: column "b": value "q" is not a number; the column holds text: declare it categorical with its levels to use it as a predictor (in a plan under categorical:, in ordplan fit as COLUMN|levels=a/b/c)`},
		{"error line counts CRLF", "y,a,b\r\n1,2,3\r\n2,x,3\r\n", opts, 3, "a",
			`t.csv:3: column "a": value "x" is not a number; the column holds text: declare it categorical with its levels to use it as a predictor (in a plan under categorical:, in ordplan fit as COLUMN|levels=a/b/c)`},
		{"long value shortened", "y,a\n1," + strings.Repeat("z", 60) + "\n", Options{Outcome: "y", Predictors: []string{"a"}}, 2, "a",
			`t.csv:2: column "a": value "` + strings.Repeat("z", 40) + `"... is not a number; the column holds text: declare it categorical with its levels to use it as a predictor (in a plan under categorical:, in ordplan fit as COLUMN|levels=a/b/c)`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Read(strings.NewReader(tc.in), "t.csv", tc.opt)
			if err == nil {
				t.Fatalf("no error; got %d rows", d.N)
			}
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %T is not *Error: %v", err, err)
			}
			if got := err.Error(); got != tc.want {
				t.Errorf("message\n got: %s\nwant: %s", got, tc.want)
			}
			if e.Line != tc.line || e.Column != tc.col || e.File != "t.csv" {
				t.Errorf("fields: line %d column %q file %q; want line %d column %q", e.Line, e.Column, e.File, tc.line, tc.col)
			}
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("message spans lines: %q", err.Error())
			}
		})
	}
}

func TestRead(t *testing.T) {
	// The code 10 lies apart from -1 and 2: a warning (strayCode).
	const stray10 = `Code 10 lies apart from the others (-1 to 2), as codes for "don't know" or a missing answer often do: it was analysed as the highest category; if it is not a point of the scale, list it as missing (dictionary.y.missing: ["10"]; ordplan fit: --missing-codes y=10), or declare the categories (outcomes[].categories: [-1, 2])`
	tests := []struct {
		name string
		in   string
		opt  Options
		want Dataset
	}{
		{
			name: "integer codes sorted numerically, drops counted",
			in:   "y,a,b,c\n10,1,2,x\n2,3,4,x\n-1,5,6,x\n10,,7,x\n2,8,NA,x\n,1,.,x\n2, 9 ,10,x\n",
			opt:  opts,
			want: Dataset{
				Outcome: "y", Categories: []string{"-1", "2", "10"},
				Y: []int{2, 1, 0, 1}, Predictors: []string{"a", "b"},
				X: []float64{1, 2, 3, 4, 5, 6, 9, 10}, N: 4, K: 2,
				RowsRead: 7, RowsDropped: 3,
				Dropped: []DropCount{{Column: "y", Rows: 1}, {Column: "a", Rows: 1}, {Column: "b", Rows: 1}},
				Counts:  []float64{1, 2, 1}, Lines: []int{2, 3, 4, 8},
				Notes:     []string{"The outcome y holds the integer codes -1, 2 and 10, taken as ordered categories, lowest first; 9 integers between them do not occur (0, 1, 3, 4, 5, 6, ...), so no category stands for them, and the distance between two codes plays no part. " + stray10},
				StrayCode: stray10,
			},
		},
		{
			name: "labels, weights, offset, cluster, BOM, CRLF, unobserved category",
			in:   "\uFEFFg,y,w,o,x\r\nd1,low,2,0.5,1\r\nd2,high,4,-1,2\r\nd1,low,1,0,3\r\n",
			opt: Options{Outcome: "y", Categories: []string{"low", "mid", "high"}, Predictors: []string{"x"},
				Weights: "w", Offset: "o", Cluster: "g"},
			want: Dataset{
				Outcome: "y", Categories: []string{"low", "mid", "high"},
				Y: []int{0, 2, 0}, Predictors: []string{"x"}, X: []float64{1, 2, 3}, N: 3, K: 1,
				Weights: []float64{2, 4, 1}, Offset: []float64{0.5, -1, 0}, Cluster: []string{"d1", "d2", "d1"},
				RowsRead: 3, Counts: []float64{3, 0, 4}, Lines: []int{2, 3, 4},
				Unobserved: []string{"mid"},
			},
		},
		{
			name: "no predictors; custom missing tokens; a row counts once",
			in:   "y,z,w\n1,q,-9\n2,q,1\n-9,q,-9\n1,q,3\n",
			opt:  Options{Outcome: "y", Weights: "w", MissingTokens: []string{"-9"}},
			want: Dataset{
				Outcome: "y", Categories: []string{"1", "2"}, Y: []int{1, 0},
				Predictors: []string{}, X: []float64{}, N: 2, K: 0,
				Weights: []float64{1, 3}, RowsRead: 4, RowsDropped: 2,
				Dropped: []DropCount{{Column: "y", Rows: 1}, {Column: "w", Rows: 1}},
				Counts:  []float64{3, 1}, Lines: []int{3, 5},
			},
		},
		{
			name: "quoted fields, multi-line cell in an unused column, spaces in header",
			in:   " y , a ,note\n1,\"2.5\",\"two\nlines\"\n0,1e-3,ok\n",
			opt:  Options{Outcome: "y", Predictors: []string{"a"}},
			want: Dataset{
				Outcome: "y", Categories: []string{"0", "1"}, Y: []int{1, 0},
				Predictors: []string{"a"}, X: []float64{2.5, 0.001}, N: 2, K: 1,
				RowsRead: 2, Counts: []float64{1, 1}, Lines: []int{2, 4},
			},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Read(strings.NewReader(tc.in), "t.csv", tc.opt)
			if err != nil {
				t.Fatal(err)
			}
			tc.want.File = "t.csv"
			d.Missing = nil // checked by TestMissingPatterns
			if !reflect.DeepEqual(*d, tc.want) {
				t.Errorf("got  %+v\nwant %+v", *d, tc.want)
			}
		})
	}
}

// TestMissingPatterns: every missing cell of a used column is counted,
// dropped rows are grouped by the set of columns they miss, and by the
// outcome category (counted by hand; category 3 occurs only in an
// incomplete row and comes last).
func TestMissingPatterns(t *testing.T) {
	in := "y,a,b,note\n1,,2,x\n,,,z\n2,1,,\n1,,3,\n2,5,6,\n1,7,8,\nNA,1,1,\n3,,1,\n"
	d, err := Read(strings.NewReader(in), "t.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}})
	if err != nil {
		t.Fatal(err)
	}
	want := &MissingTable{Columns: []string{"y", "a", "b"}, ByColumn: []int{2, 4, 2},
		Patterns: []MissingPattern{
			{Missing: []bool{false, true, false}, Rows: 3},
			{Missing: []bool{false, false, true}, Rows: 1},
			{Missing: []bool{true, false, false}, Rows: 1},
			{Missing: []bool{true, true, true}, Rows: 1},
		},
		Rows: 8,
		ByCategory: []CategoryMissing{
			{Category: "1", Rows: 3, ByColumn: []int{0, 2, 0}, Incomplete: 2},
			{Category: "2", Rows: 2, ByColumn: []int{0, 0, 1}, Incomplete: 1},
			{Category: "3", Rows: 1, ByColumn: []int{0, 1, 0}, Incomplete: 1},
		}}
	if !reflect.DeepEqual(d.Missing, want) {
		t.Errorf("got  %+v\nwant %+v", d.Missing, want)
	}
	if d.N != 2 || d.RowsDropped != 6 {
		t.Errorf("N %d dropped %d", d.N, d.RowsDropped)
	}
}

// A CSV line of delimiters alone (a row a spreadsheet holds empty, as it
// exports one) is a blank line, skipped as the CSV reader skips an empty
// line and as a workbook's empty rows are: not a row of missing values
// counted among the dropped ones. The same rows in a workbook give the
// same data set; a line with one filled cell, in any column, is a row.
func TestDelimiterLinesAreBlank(t *testing.T) {
	in := "y,a,note\n1,0.5,x\n,,\n2,1.5,\n , ,\r\n1,,\n,,kept\n2,2,\n,,\n"
	opt := Options{Outcome: "y", Predictors: []string{"a"}}
	want := "rows read 5, kept 3, dropped 2, lines [2 4 8]"
	for name, read := range map[string]func() (*Dataset, error){
		"Read":       func() (*Dataset, error) { return Read(strings.NewReader(in), "t.csv", opt) },
		"ReadStream": func() (*Dataset, error) { return ReadStream(strings.NewReader(in), "t.csv", opt) },
		"workbook": func() (*Dataset, error) {
			return readBytes(toBook(t, strings.ReplaceAll(in, "\r", "")), "t.xlsx", opt)
		},
	} {
		d, err := read()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if got := fmt.Sprintf("rows read %d, kept %d, dropped %d, lines %v", d.RowsRead, d.N, d.RowsDropped, d.Lines); got != want {
			t.Errorf("%s: %s, want %s", name, got, want)
		}
	}
}

// toBook writes CSV text (no quotes) as the first sheet of a workbook,
// numbers as numbers and empty cells left out.
func toBook(t *testing.T, text string) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	for i, line := range strings.Split(strings.TrimSuffix(text, "\n"), "\n") {
		for j, cell := range strings.Split(line, ",") {
			if strings.TrimSpace(cell) == "" {
				continue
			}
			name, _ := excelize.CoordinatesToCellName(j+1, i+1)
			if v, err := strconv.ParseFloat(cell, 64); err == nil {
				f.SetCellValue("Sheet1", name, v)
			} else {
				f.SetCellStr("Sheet1", name, cell)
			}
		}
	}
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestDatasetMethods(t *testing.T) {
	in := "y,a,b,w\n1,1,2,5\n2,3,4,2\n2,,4,2\n"
	d, err := Read(strings.NewReader(in), "m.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}, Weights: "w"})
	if err != nil {
		t.Fatal(err)
	}
	if got := d.NObs(); got != 7 {
		t.Errorf("NObs = %v, want 7", got)
	}
	if got := d.Row(1); !reflect.DeepEqual(got, []float64{3, 4}) || cap(got) != 2 {
		t.Errorf("Row(1) = %v (cap %d)", got, cap(got))
	}
	// A weights column with no weight 0: the rows were dropped for
	// missing values only (it said "missing values or zero weight").
	if got, want := d.DropSummary(), "1 of 3 rows dropped for missing values (a: 1)"; got != want {
		t.Errorf("DropSummary = %q, want %q", got, want)
	}
	// Each reason named only when some row was dropped for it.
	for _, c := range []struct {
		in, want string
	}{
		{"y,a,b,w\n1,1,2,5\n2,3,4,0\n2,1,2,1\n", "1 of 3 rows dropped for zero weight (w = 0: 1)"},
		{"y,a,b,w\n1,1,2,5\n2,3,4,0\n2,,4,2\n2,1,2,1\n", "2 of 4 rows dropped for missing values or zero weight (a: 1, w = 0: 1; a row with several of these is counted once, under the first)"},
	} {
		d, err := Read(strings.NewReader(c.in), "m.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}, Weights: "w"})
		if err != nil {
			t.Fatal(err)
		}
		if got := d.DropSummary(); got != c.want {
			t.Errorf("DropSummary = %q, want %q", got, c.want)
		}
	}
	d, err = Read(strings.NewReader("y,a,b\n1,1,2\n2,,2\n1,3,0\n2,2,2\n"), "m.csv", Options{Outcome: "y", Predictors: []string{"a"}, Keep: []Condition{{Column: "b", Op: ">", Number: 1}}})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := d.DropSummary(), "2 of 4 rows dropped for the subset or missing values"; !strings.HasPrefix(got, want) {
		t.Errorf("DropSummary = %q, want it to begin %q", got, want)
	}
	d.Weights = nil
	if got := d.NObs(); got != 2 {
		t.Errorf("unweighted NObs = %v, want 2", got)
	}
	d.RowsDropped = 0
	if got, want := d.DropSummary(), "no rows dropped for missing values"; got != want {
		t.Errorf("DropSummary = %q, want %q", got, want)
	}
}

func TestLoad(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "ok.csv")
	if err := os.WriteFile(path, []byte("y,a,b\n1,2,3\n2,4,5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	d, err := Load(path, opts)
	if err != nil {
		t.Fatal(err)
	}
	if d.File != path || d.N != 2 || !reflect.DeepEqual(d.X, []float64{2, 3, 4, 5}) {
		t.Errorf("unexpected data set %+v", d)
	}

	tests := []struct {
		name, path, want string
	}{
		{"missing file", filepath.Join(dir, "nope.csv"), "cannot open file: no such file or directory"},
		{"directory", dir, "is a folder, not a regular file"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Load(tc.path, opts)
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %T is not *Error: %v", err, err)
			}
			if e.File != tc.path || !strings.HasPrefix(e.Msg, tc.want) {
				t.Errorf("got %q, want file %q and message starting %q", err, tc.path, tc.want)
			}
		})
	}
}

func TestZeroWeightRowsDropped(t *testing.T) {
	d, err := Read(strings.NewReader("y,w\n1,1\n2,0\n2,3\n"), "t.csv", Options{Outcome: "y", Weights: "w"})
	if err != nil {
		t.Fatal(err)
	}
	if d.N != 2 || d.RowsDropped != 1 || len(d.Dropped) != 1 || d.Dropped[0].Column != "w = 0" {
		t.Fatalf("got N=%d dropped=%d %+v", d.N, d.RowsDropped, d.Dropped)
	}
	if d.NObs() != 4 {
		t.Fatalf("nobs %v", d.NObs())
	}
}

func TestLoadRows(t *testing.T) {
	dir := t.TempDir()
	p := dir + "/new.csv"
	os.WriteFile(p, []byte("id,b,a\n1,2,3\n2,,4\n3,5,6\n"), 0o644)
	rs, err := LoadRows(p, []string{"a", "b"}, "", nil)
	if err != nil {
		t.Fatal(err)
	}
	if rs.N != 2 || rs.X[0] != 3 || rs.X[1] != 2 || len(rs.Skipped) != 1 || rs.Skipped[0] != 3 || rs.Lines[1] != 4 {
		t.Fatalf("%+v", rs)
	}
	if !reflect.DeepEqual(rs.SkippedColumns, [][]string{{"b"}}) {
		t.Errorf("skipped columns %q", rs.SkippedColumns)
	}
	// Every column a skipped row misses is named; its other cells are
	// not read (x is no error there).
	os.WriteFile(p, []byte("id,b,a\n1,2,3\n2,,NA\n3,x,\n"), 0o644)
	if rs, err := LoadRows(p, []string{"a", "b"}, "", nil); err != nil || !reflect.DeepEqual(rs.SkippedColumns, [][]string{{"a", "b"}, {"a"}}) || !reflect.DeepEqual(rs.Skipped, []int{3, 4}) {
		t.Errorf("%v: skipped %v, columns %q", err, rs.Skipped, rs.SkippedColumns)
	}
	os.WriteFile(p, []byte("a,b\n1,x\n"), 0o644)
	if _, err := LoadRows(p, []string{"a", "b"}, "", nil); err == nil || !strings.Contains(err.Error(), `new.csv:2: column "b"`) {
		t.Fatalf("%v", err)
	}
	if _, err := LoadRows(p, []string{"a", "c"}, "", nil); err == nil || !strings.Contains(err.Error(), `column "c": column not found`) {
		t.Fatalf("%v", err)
	}
}

// TestKeepIncomplete: for imputation, rows missing only outcome or
// predictor values are kept (NaN, outcome -1) and described by the same
// missing-value table; rows missing a weight are still dropped.
func TestKeepIncomplete(t *testing.T) {
	in := "y,a,b,w\n1,,2,1\n,,,1\n2,1,,1\n1,,3,1\n2,5,6,1\n1,7,8,1\nNA,1,1,1\n3,,1,1\n2,2,2,\n"
	d, err := Read(strings.NewReader(in), "t.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}, Weights: "w", KeepIncomplete: true})
	if err != nil {
		t.Fatal(err)
	}
	if d.N != 8 || d.Incomplete != 6 || d.RowsDropped != 1 || !reflect.DeepEqual(d.Categories, []string{"1", "2", "3"}) {
		t.Fatalf("N %d incomplete %d dropped %d categories %v", d.N, d.Incomplete, d.RowsDropped, d.Categories)
	}
	if !reflect.DeepEqual(d.Y, []int{0, -1, 1, 0, 1, 0, -1, 2}) || !math.IsNaN(d.X[0]) || d.X[1] != 2 || !math.IsNaN(d.X[5]) {
		t.Errorf("Y %v X %v", d.Y, d.X)
	}
	if !reflect.DeepEqual(d.Counts, []float64{3, 2, 1}) {
		t.Errorf("counts %v", d.Counts)
	}
	mt := d.Missing
	if mt.Rows != 9 || !reflect.DeepEqual(mt.ByColumn, []int{2, 4, 2, 1}) ||
		!reflect.DeepEqual(mt.ByCategory[2], CategoryMissing{Category: "3", Rows: 1, ByColumn: []int{0, 1, 0, 0}, Incomplete: 1}) {
		t.Errorf("missing table %+v", mt)
	}
}

// Options.Codes: the outcome's codes are read as numbers and indexed by
// the listed codes, a listed code no row has is a category without rows,
// and a code not listed is an error naming the file, line and column —
// the same from the chunked reader and the record-at-a-time one.
func TestListedCodes(t *testing.T) {
	opt := Options{Outcome: "y", Predictors: []string{"a"}, Codes: []int64{1, 2, 3, 7}}
	in := "y,a\n+2,0.5\n02,1.5\n1,2\n 3 ,4\n2,1\n"
	for _, read := range []func(string) (*Dataset, error){
		func(s string) (*Dataset, error) { return Read(strings.NewReader(s), "c.csv", opt) },
		func(s string) (*Dataset, error) { return ReadStream(strings.NewReader(s), "c.csv", opt) },
	} {
		d, err := read(in)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(d.Categories, []string{"1", "2", "3", "7"}) || !reflect.DeepEqual(d.Y, []int{1, 1, 0, 2, 1}) ||
			!reflect.DeepEqual(d.Counts, []float64{1, 3, 1, 0}) || !reflect.DeepEqual(d.Unobserved, []string{"7"}) {
			t.Fatalf("categories %v, y %v, counts %v, unobserved %v", d.Categories, d.Y, d.Counts, d.Unobserved)
		}
		_, err = read(in + "5,1\n")
		want := `c.csv:7: column "y": outcome code 5 is not one of the codes the whole data has (1, 2, 3, 7): the parts must code the outcome alike`
		if err == nil || err.Error() != want {
			t.Fatalf("got %v\nwant %s", err, want)
		}
	}
}

// A row that misses several used columns is counted once, under the first,
// and the summary says so, since the missing-value table counts it under
// each (here b has two missing values but one row under it).
func TestDropSummarySaysFirstColumnCounts(t *testing.T) {
	in := "y,a,b\n1,1,2\n2,,\n1,3,\n2,4,5\n1,2,3\n"
	d, err := Read(strings.NewReader(in), "m.csv", Options{Outcome: "y", Predictors: []string{"a", "b"}})
	if err != nil {
		t.Fatal(err)
	}
	// No weights column: no row can have been dropped for its weight, so
	// the summary does not name that reason (TestDatasetMethods: with one).
	want := "2 of 5 rows dropped for missing values (a: 1, b: 1; a row with several of these is counted once, under the first)"
	if got := d.DropSummary(); got != want {
		t.Errorf("DropSummary = %q, want %q", got, want)
	}
}

// TestStrayCode: an outcome's highest integer code of 8 or more lying
// further from the next than the other codes span, or a negative lowest
// code as far apart, is said to look like a code for a missing answer;
// codes of a scale with a gap (1, 2, 5; 1 to 7 and 9; -1, 0, 1) are not.
func TestStrayCode(t *testing.T) {
	for _, c := range []struct {
		labels []string
		code   string // "" when none
	}{
		{[]string{"1", "2", "3", "4", "9"}, "Code 9 lies apart from the others (1 to 4)"},
		{[]string{"1", "2", "3", "4", "5", "99"}, "Code 99 lies apart from the others (1 to 5)"},
		{[]string{"0", "1", "9"}, "Code 9 lies apart from the others (0 to 1)"},
		{[]string{"-9", "1", "2", "3"}, "Code -9 lies apart from the others (1 to 3), as codes for \"don't know\" or a missing answer often do: it was analysed as the lowest category"},
		{[]string{"-1", "1", "2"}, "Code -1 lies apart from the others (1 to 2)"},
		{[]string{"-1", "0", "1"}, ""},
		{[]string{"-1", "0", "1", "2"}, ""},
		{[]string{"1", "2", "5"}, ""},
		{[]string{"1", "2", "3", "4", "5", "6", "7", "9"}, ""},
		{[]string{"-2", "-1", "0", "1", "2"}, ""},
		{[]string{"1", "2", "10", "11"}, ""},
		{[]string{"1", "9"}, ""},
	} {
		got := strayCode("y", c.labels)
		if c.code == "" && got != "" || c.code != "" && !strings.HasPrefix(got, c.code) {
			t.Errorf("%v: %q, want %q", c.labels, got, c.code)
		}
	}
}
