package data

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

const dictCSV = "y,a,b\n1,0.5,-9\n2,1.5,2\n3,abc,1\n1,-9,7\n2,0.2,NA\n"

func writeTemp(t *testing.T, name, s string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// A column's own missing-value code is missing in that column only: the
// row is dropped and counted under the column; in another column the same
// text is a value.
func TestColumnMissingCodes(t *testing.T) {
	path := writeTemp(t, "d.csv", "y,a,b\n1,0.5,-9\n2,-9,2\n3,0.1,1\n1,0.3,2\n2,0.2,1\n3,0.9,2\n")
	ds, err := Load(path, Options{Outcome: "y", Predictors: []string{"a", "b"}, ColumnMissing: map[string][]string{"b": {"-9"}}})
	if err != nil {
		t.Fatal(err)
	}
	if ds.N != 5 || len(ds.Dropped) != 1 || ds.Dropped[0].Column != "b" || ds.Dropped[0].Rows != 1 {
		t.Fatalf("rows %d, dropped %+v", ds.N, ds.Dropped)
	}
	if ds.X[0] != -9 { // first kept row (line 3): a = -9 is a value of a
		t.Errorf("a on line 3 is %g, want -9", ds.X[0])
	}
	nr := writeTemp(t, "new.csv", "a,b\n0.1,-9\n0.2,1\n")
	rows, err := LoadRowsMissing(nr, []string{"a", "b"}, nil, "", nil, map[string][]string{"b": {"-9"}}, Dialect{})
	if err != nil || len(rows.Skipped) != 1 || rows.Skipped[0] != 2 {
		t.Fatalf("new rows: %v %+v", err, rows)
	}
}

// Validate lists each cell against the dictionary with its line and
// column: not a number, out of range, not among the values; missing cells
// (common or the column's own codes) are not checked.
func TestValidateAgainstDictionary(t *testing.T) {
	path := writeTemp(t, "d.csv", dictCSV)
	err := Validate(path, []Rule{
		{Column: "a", Key: "dictionary.a", Numeric: true, Range: []float64{0, 1}, Missing: []string{"-9"}},
		{Column: "b", Key: "dictionary.b", Numeric: true, Values: []string{"1", "2"}, Missing: []string{"-9"}},
	}, nil)
	var ve *ValidationError
	if !errors.As(err, &ve) {
		t.Fatalf("got %v", err)
	}
	want := []string{
		`d.csv:3: column "a": value "1.5" is above the range [0, 1] of the data dictionary (dictionary.a.range)`,
		`d.csv:4: column "a": value "abc" is not a number; the data dictionary (dictionary.a) describes a numeric column`,
		`d.csv:5: column "b": value "7" is not one of the values 1, 2 of the data dictionary (dictionary.b.values)`,
	}
	got := strings.Split(strings.ReplaceAll(err.Error(), path, "d.csv"), "\n")
	if strings.Join(got, "\n") != strings.Join(want, "\n") || ve.Total != 3 {
		t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

// The dictionary check reads a CSV file in chunks on the workers: the same
// problems, in file order, the same count and the same first unreadable
// line as one chunk read in order, whatever the chunk size; a file whose
// quoted field spans lines (read record by record) gets the same answer
// for the same lines.
func TestValidateInChunks(t *testing.T) {
	var b strings.Builder
	b.WriteString("a,b,c\n")
	for i := 0; i < 400; i++ {
		switch {
		case i%37 == 5:
			fmt.Fprintf(&b, "%d.5,\"x,y\",1\n", i) // above the range
		case i%53 == 7:
			b.WriteString("abc,1,2\n") // not a number
		case i%41 == 3:
			b.WriteString("0.5,7,\"q\"\n") // not among the values
		case i%29 == 1:
			b.WriteString("-9,-9,\r\n") // missing codes, a CRLF line end
		default:
			fmt.Fprintf(&b, "0.%d,1,z\n", i)
		}
	}
	rules := []Rule{
		{Column: "a", Key: "dictionary.a", Numeric: true, Range: []float64{0, 1}, Missing: []string{"-9"}},
		{Column: "b", Key: "dictionary.b", Numeric: true, Values: []string{"1", "2"}, Missing: []string{"-9"}},
	}
	check := func(body string) string {
		t.Helper()
		path := writeTemp(t, "v.csv", body)
		var want string
		withChunks(1<<30, 1, func() { want = fmt.Sprint(Validate(path, rules, nil)) })
		if !strings.Contains(want, "problems in all") && !strings.Contains(want, "fields") {
			t.Fatalf("too few problems to test: %s", want)
		}
		for _, size := range []int{1, 17, 200, 4096} {
			withChunks(size, 3, func() {
				if got := fmt.Sprint(Validate(path, rules, nil)); got != want {
					t.Fatalf("chunks of %d bytes:\n%s\nwant\n%s", size, got, want)
				}
			})
		}
		return want
	}
	chunked := check(b.String())
	check(b.String() + "0.1,1\n0.2,1,2\n") // a short line: the first unreadable line wins
	// Read record by record (a quoted field spans lines, so no chunks):
	// the same first problems as the chunked read of the same lines, and
	// the total with the 2 of the last line (a above its range, b not
	// among its values).
	byRecord := check(b.String() + "0.1,1,\"spans\nlines\"\n3,3,3\n")
	cut := func(s string) (string, int) {
		i := strings.LastIndex(s, "\n")
		var n int
		fmt.Sscanf(s[strings.LastIndex(s, " ... ")+5:], "%d", &n)
		// Each check writes its file in a folder of its own: compare
		// from the file's name on.
		var lines []string
		for _, l := range strings.Split(s[:i], "\n") {
			lines = append(lines, l[strings.Index(l, "v.csv"):])
		}
		return strings.Join(lines, "\n"), n
	}
	hc, nc := cut(chunked)
	hr, nr := cut(byRecord)
	if hc != hr || nr != nc+2 {
		t.Errorf("record by record:\n%s\nwant the chunked read's first problems\n%s\nand %d problems in all", byRecord, chunked, nc+2)
	}
}

// New rows are checked against the subset conditions, as the data's
// reader decides, but kept: Fails lists the conditions each row fails,
// Undecided those its missing cell cannot be checked against, Unchecked
// the conditions whose column the file lacks.
func TestNewRowsSubsetConditions(t *testing.T) {
	nr := writeTemp(t, "new.csv", "a;site;w\n16;north;1\n30,5;west;\n45;north;2\n")
	keep := []Condition{
		{Column: "a", Op: ">=", Number: 18, Key: "subset[0]"},
		{Column: "site", Op: "in", Values: []string{"north", "east"}, Key: "subset[1]"},
		{Column: "w", Op: "<=", Number: 1, Key: "subset[2]"},
		{Column: "clinic", Op: "==", Number: 1, Key: "subset[3]"},
	}
	rows, err := LoadNewRows(nr, []string{"a"}, nil, Options{Keep: keep, MissingTokens: []string{""}, Dialect: Dialect{Delimiter: ';', DecimalComma: true}})
	if err != nil {
		t.Fatal(err)
	}
	wantFails := [][]int{{0}, {1}, {2}}
	wantUndecided := [][]int{nil, {2}, nil}
	for i := range wantFails {
		if !slices.Equal(rows.Fails[i], wantFails[i]) || !slices.Equal(rows.Undecided[i], wantUndecided[i]) {
			t.Errorf("row %d: fails %v undecided %v, want %v %v", i, rows.Fails[i], rows.Undecided[i], wantFails[i], wantUndecided[i])
		}
	}
	if !slices.Equal(rows.Unchecked, []int{3}) || rows.N != 3 || rows.X[1] != 30.5 {
		t.Errorf("unchecked %v, rows %d, x %v", rows.Unchecked, rows.N, rows.X)
	}
}

// A numeric cell that looks like a missing-value marker none of those in
// force reads as missing ("n/a") gets, from the dictionary's check as
// from the reader, the way to have it read as missing.
func TestValidateMissingWordHint(t *testing.T) {
	path := writeTemp(t, "d.csv", "y,a\n1,0.5\n2,n/a\n")
	err := Validate(path, []Rule{{Column: "a", Key: "dictionary.a", Numeric: true}}, nil)
	want := `d.csv:3: column "a": value "n/a" is not a number; the data dictionary (dictionary.a) describes a numeric column; it looks like a missing-value marker, which is not among the markers in force: to read it as missing, set data.missing_values: ["", "NA", "NaN", ".", "n/a"] (the markers in force and it), or list it for this column alone under dictionary.a.missing (ordplan fit cannot give this code, which holds a comma, slash or equals sign: use a plan)`
	if err == nil || strings.ReplaceAll(err.Error(), path, "d.csv") != want {
		t.Errorf("got\n%v\nwant\n%s", err, want)
	}
}

// An outcome whose declared category no row holds while rows hold a value
// not declared gets, after the problems, the hint that the data may have
// renamed the category; the same whether the file is read in chunks or
// record by record. A file holding every declared category gets none.
func TestValidateRenamedCategory(t *testing.T) {
	var b strings.Builder
	b.WriteString("y,a\n")
	for i := range 60 {
		y := []string{"low", "neither", "high", "neither"}[i%4]
		fmt.Fprintf(&b, "%s,%d\n", y, i)
	}
	b.WriteString("odd,1\n")
	path := writeTemp(t, "d.csv", b.String())
	rules := []Rule{{Column: "y", Key: "outcomes[0].categories", Outcome: true, Categories: []string{"low", "neutral", "high"}}}
	want := `d.csv: column "y": the declared category "neutral" is in no row, while "neither" (30 rows) and "odd" (1 row) are not declared: if the data renamed a category, write its new name in outcomes[0].categories (under a lock, a change from the registered plan to state in its deviations)`
	for _, size := range []int{1 << 30, 64} {
		withChunks(size, 3, func() {
			err := Validate(path, rules, nil)
			lines := strings.Split(strings.ReplaceAll(fmt.Sprint(err), path, "d.csv"), "\n")
			if got := lines[len(lines)-1]; got != want {
				t.Errorf("chunks of %d bytes: last line\n%s\nwant\n%s", size, got, want)
			}
		})
	}
	rules[0].Categories = []string{"low", "neither", "high"}
	if err := Validate(path, rules, nil); err == nil || strings.Contains(err.Error(), "renamed") {
		t.Errorf("every category held: %v", err)
	}
}
