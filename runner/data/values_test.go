package data

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"golang.org/x/text/unicode/norm"
)

// Points that separate thousands in a semicolon or tab file read with a
// decimal point are refused, and so are commas that do in a file read
// with a decimal comma; marks that are decimals (a digit count other than
// three, a whole part of 0, a whole number of 1000 or more without a
// mark) are not, nor are points in a comma-separated file.
func TestThousandsPointsRefused(t *testing.T) {
	semi := Dialect{Delimiter: ';'}
	opt := func(d Dialect) Options { return Options{Outcome: "y", Predictors: []string{"a"}, Dialect: d} }
	rows := func(delim string, cells ...string) string {
		var b strings.Builder
		b.WriteString("y" + delim + "a\n")
		for i, c := range cells {
			fmt.Fprintf(&b, "%d%s%s\n", i%3+1, delim, c)
		}
		return b.String()
	}
	for _, c := range []struct {
		name string
		text string
		d    Dialect
		want string // "" when read
	}{
		{"thousands beside small integers", rows(";", "3.473", "313", "1.179", "87", "NA", "12.500"), semi,
			`t.csv:2: column "a": value "3.473" looks like 3473 written with a thousands separator: every value of the column with a point has three digits after it and would be 1000 or more without it (3 values), and the others are integers below 1000 written without a point (2, such as "313"); a decimal point reads it as 3.473. Write the numbers without thousands separators (3473); or, if the points are decimal points, write the whole numbers with three decimals too ("313.000")`},
		{"tab-separated", rows("\t", "-3.473", "313", "1.179"), Dialect{Delimiter: '\t'}, `value "-3.473" looks like -3473 written with a thousands separator`},
		{"three decimals below 1", rows(";", "1.250", "2", "0.375"), semi, ""},
		{"a decimal of two digits", rows(";", "1.250", "2", "1.25"), semi, ""},
		{"no integer without a point", rows(";", "1.250", "2.375", "3.125"), semi, ""},
		{"an integer of 1000 or more", rows(";", "1.250", "2", "1250"), semi, ""},
		{"an exponent", rows(";", "1.250", "2", "1e3"), semi, ""},
		{"a comma-separated file", rows(",", "3.473", "313", "1.179"), Dialect{}, ""},
		// Read with a decimal comma, commas that separate thousands (a
		// spreadsheet's "2,449" in a comma-separated file) read 2.449
		// beside 313 without a word before.
		{"commas that separate thousands, read with a decimal comma", rows(",", `"2,449"`, "313", `"1,179"`, "87"), Dialect{DecimalComma: true},
			`t.csv:2: column "a": value "2,449" looks like 2449 written with a thousands separator: every value of the column with a comma has three digits after it and would be 1000 or more without it (2 values), and the others are integers below 1000 written without a comma (2, such as "313"); a decimal comma reads it as 2.449. Write the numbers without thousands separators (2449); or, if the commas are decimal commas, write the whole numbers with three decimals too ("313,000")`},
		{"semicolon, decimal comma", rows(";", "3,473", "313", "1,179"), Dialect{Delimiter: ';', DecimalComma: true}, `value "3,473" looks like 3473 written with a thousands separator`},
		{"decimal commas of two digits", rows(";", "1,250", "2", "1,25"), Dialect{Delimiter: ';', DecimalComma: true}, ""},
		{"decimal commas below 1", rows(";", "1,250", "2", "0,375"), Dialect{Delimiter: ';', DecimalComma: true}, ""},
	} {
		_, err := Read(strings.NewReader(c.text), "t.csv", opt(c.d))
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%s: %v", c.name, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%s: got %v, want %q", c.name, err, c.want)
		}
	}
	// Every value with a point and three digits, no integer: three
	// decimals, or thousands; read, with a note.
	d, err := Read(strings.NewReader(rows(";", "1.250", "2.375", "13.125")), "t.csv", opt(semi))
	if want := "Column a: every value is written with a point and three digits after it (3 values, such as 1.250), none otherwise, in a semicolon-separated file read with a decimal point (data.decimal: point): they were read as decimals (1.250); if the points separate thousands (1250), every value was read a thousand times too small: write the numbers without separators. The column's possible range in the plan (dictionary.a.range) settles it: check and run refuse a value outside it"; err != nil || len(d.Notes) != 1 || d.Notes[0] != want || !slices.Equal(d.PointNotes, d.Notes) {
		t.Errorf("three decimals everywhere: %v %q", err, d.Notes)
	}
	d, err = Read(strings.NewReader(rows(";", "1,250", "2,375", "13,125")), "t.csv", opt(Dialect{Delimiter: ';', DecimalComma: true}))
	if want := "Column a: every value is written with a comma and three digits after it (3 values, such as 1,250), none otherwise, in a semicolon-separated file read with a decimal comma (data.decimal: comma): they were read as decimals (1,250 as 1.250); if the commas separate thousands (1250), every value was read a thousand times too small: write the numbers without separators. The column's possible range in the plan (dictionary.a.range) settles it: check and run refuse a value outside it"; err != nil || len(d.Notes) != 1 || d.Notes[0] != want {
		t.Errorf("three decimals everywhere, decimal comma: %v %q", err, d.Notes)
	}
	if d, err := Read(strings.NewReader(rows(";", "1.250", "2.375", "13.125", "0.5")), "t.csv", opt(semi)); err != nil || len(d.Notes) != 0 {
		t.Errorf("three decimals and a half: %v %q", err, d.Notes)
	}
	// The first rows show the sign; a decimal beyond them settles it.
	cells := make([]string, 0, 1500)
	for i := range 1500 {
		cells = append(cells, []string{"3.473", "313"}[i%2])
	}
	if _, err := Read(strings.NewReader(rows(";", cells...)), "t.csv", opt(semi)); err == nil || !strings.Contains(err.Error(), "(750 values), and the others are integers below 1000 written without a point (750,") {
		t.Errorf("1500 rows: %v", err)
	}
	cells[1200] = "1.5"
	if _, err := Read(strings.NewReader(rows(";", cells...)), "t.csv", opt(semi)); err != nil {
		t.Errorf("a decimal on row 1200: %v", err)
	}
	// A column read as levels, and a column not used, are not judged.
	lv := Options{Outcome: "y", Predictors: []string{"a"}, PredictorLevels: map[string][]string{"a": {"3.473", "313", "1.179"}}, Dialect: semi}
	if _, err := Read(strings.NewReader(rows(";", "3.473", "313", "1.179")), "t.csv", lv); err != nil {
		t.Errorf("levels: %v", err)
	}
}

// The project's example and reference data, written with semicolons and
// read with a decimal point, or with a decimal comma, show no sign of
// thousands separators.
func TestThousandsPointsSpareProjectData(t *testing.T) {
	var files []string
	for _, glob := range []string{"../../testdata/reference/*.csv", "../../plans/data/*.csv"} {
		m, _ := filepath.Glob(glob)
		files = append(files, m...)
	}
	if len(files) < 5 {
		t.Fatalf("found %d files", len(files))
	}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		if strings.ContainsAny(string(b), ";\"") {
			t.Fatalf("%s: a semicolon or a quote: rewrite the test", f)
		}
		// Written with semicolons and a decimal point, then with a
		// decimal comma.
		path := filepath.Join(t.TempDir(), filepath.Base(f))
		semi := strings.ReplaceAll(string(b), ",", ";")
		for _, w := range []struct {
			text string
			d    Dialect
		}{{semi, Dialect{Delimiter: ';'}}, {strings.ReplaceAll(semi, ".", ","), Dialect{Delimiter: ';', DecimalComma: true}}} {
			os.WriteFile(path, []byte(w.text), 0o644)
			ps, err := ProfileFile(path, nil, w.d)
			if err != nil {
				t.Fatal(err)
			}
			for _, p := range ps {
				if p.ThousandsPoint != "" {
					t.Errorf("%s (decimal %s): column %s: %s", f, w.d.DecimalWord(), p.Name, p.ThousandsPoint)
				}
			}
		}
	}
}

// Outcome codes written with a zero fraction (2.0, as a table whose
// integer column has a missing value is often written) are the codes, with
// or without declared categories, in the file's decimal mark; 2.5 is not.
func TestZeroFractionCodes(t *testing.T) {
	text := "y,a\n2.0,1\n1.00,2\n3,3\n,4\n2.0,5\n0.0,6\n"
	d, err := Read(strings.NewReader(text), "t.csv", Options{Outcome: "y", Predictors: []string{"a"}})
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(d.Categories, " "); got != "0 1 2 3" || fmt.Sprint(d.Y) != "[2 1 3 2 0]" {
		t.Errorf("categories %s, y %v", got, d.Y)
	}
	d, err = Read(strings.NewReader(text), "t.csv", Options{Outcome: "y", Categories: []string{"0", "1", "2", "3"}, Predictors: []string{"a"}})
	if err != nil || fmt.Sprint(d.Y) != "[2 1 3 2 0]" {
		t.Errorf("declared: %v %v", d, err)
	}
	semi := strings.NewReplacer(",", ";", ".", ",").Replace(text)
	if d, err := Read(strings.NewReader(semi), "t.csv", Options{Outcome: "y", Predictors: []string{"a"}, Dialect: Dialect{Delimiter: ';', DecimalComma: true}}); err != nil || fmt.Sprint(d.Y) != "[2 1 3 2 0]" {
		t.Errorf("decimal comma: %v %v", d, err)
	}
	if d, err := Read(strings.NewReader("y,a\n-0.0,1\n1,2\n"), "t.csv", Options{Outcome: "y", Predictors: []string{"a"}}); err != nil || d.Categories[0] != "0" {
		t.Errorf("-0.0: %v", err)
	}
	for _, c := range []string{"2.5", "2.", ".0", "+-2.0", "02.0"} {
		_, err := Read(strings.NewReader("y,a\n1,1\n"+c+",2\n"), "t.csv", Options{Outcome: "y", Categories: []string{"1", "2"}, Predictors: []string{"a"}})
		if err == nil || !strings.Contains(err.Error(), "is not one of the declared categories") {
			t.Errorf("%s with categories: %v", c, err)
		}
		if c == "02.0" {
			continue // 02 is the code 2, as +2 is
		}
		_, err = Read(strings.NewReader("y,a\n1,1\n"+c+",2\n"), "t.csv", Options{Outcome: "y", Predictors: []string{"a"}})
		if err == nil || !strings.Contains(err.Error(), "is not an integer category code") {
			t.Errorf("%s: %v", c, err)
		}
	}
}

// A declared category or level is read in either Unicode form of its
// text (composed, decomposed, or a mix), on the fast and the record path,
// and named as declared.
func TestUnicodeFormsAlike(t *testing.T) {
	cats := []string{"mal", "bien", "très bien"}
	lv := []string{"Bern", "Zürich", "Genève-Lémanique"}
	opt := Options{Outcome: "y", Categories: cats, Predictors: []string{"c"}, PredictorLevels: map[string][]string{"c": lv}}
	var b strings.Builder
	b.WriteString("y,c\n")
	for i := range 30 {
		fmt.Fprintf(&b, "%s,%s\n", cats[i%3], lv[i%3])
	}
	nfc := b.String()
	want, err := Read(strings.NewReader(nfc), "t.csv", opt)
	if err != nil {
		t.Fatal(err)
	}
	// Mixed: one accent composed, the other not, in one cell: neither form.
	mixed := strings.ReplaceAll(nfc, "Genève-Lémanique", "Genève-Le\u0301manique")
	if norm.NFC.IsNormalString(mixed) || norm.NFD.IsNormalString(mixed) {
		t.Fatal("the mixed text is in one form")
	}
	for name, text := range map[string]string{"NFD": norm.NFD.String(nfc), "mixed": mixed, "quoted NFD": strings.ReplaceAll(norm.NFD.String(nfc), "\n", "\n\"x\",Bern\n")} {
		o := opt
		if strings.HasPrefix(name, "quoted") {
			o.Categories = append(slices.Clone(cats), "x")
		}
		got, err := Read(strings.NewReader(text), "t.csv", o)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !strings.HasPrefix(name, "quoted") && (fmt.Sprint(got.Y) != fmt.Sprint(want.Y) || fmt.Sprint(got.X) != fmt.Sprint(want.X) || fmt.Sprint(got.Categories) != fmt.Sprint(cats)) {
			t.Errorf("%s: y %v x %v, want %v %v", name, got.Y, got.X, want.Y, want.X)
		}
	}
	// Declared in NFD, read from NFC data.
	o := opt
	o.Categories = []string{"mal", "bien", norm.NFD.String("très bien")}
	if got, err := Read(strings.NewReader(nfc), "t.csv", o); err != nil || got.Categories[2] != o.Categories[2] {
		t.Errorf("declared NFD: %v", err)
	}
}

// The profile `ordplan init` writes categories from lists the codes of a
// column of integers as the reader reads them (2.0 as 2, in the file's
// decimal mark), once each, and keeps a value written with a zero
// fraction to say so; a column of other numbers is listed as written.
func TestProfileZeroFractionCodes(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		text string
		d    Dialect
	}{{"y,a\n2.0,1.5\n1,2.5\n3.00,3\n,4\n2,5\n", Dialect{}}, {"y;a\n2,0;1,5\n1;2,5\n3,00;3\n;4\n2;5\n", Dialect{Delimiter: ';', DecimalComma: true}}} {
		path := filepath.Join(dir, "z.csv")
		os.WriteFile(path, []byte(c.text), 0o644)
		ps, err := ProfileFile(path, nil, c.d)
		if err != nil {
			t.Fatal(err)
		}
		y, a := ps[0], ps[1]
		if got := strings.Join(y.Values, " "); got != "1 2 3" || y.Distinct != 3 || y.ZeroFraction != strings.Split(c.text, "\n")[1][:3] || !y.Integer {
			t.Errorf("%q: y values %s (%d), written %q", c.text, got, y.Distinct, y.ZeroFraction)
		}
		if a.ZeroFraction != "" || a.Values[0] != strings.Split(strings.Split(c.text, "\n")[1], string(c.d.delim()))[1] {
			t.Errorf("%q: a %+v", c.text, a)
		}
	}
}

// A number written with a currency sign or with its digits grouped by
// spaces or apostrophes is refused saying what it holds and how to write
// it; a cell that is no number without them gets no such hint.
func TestGroupedAndCurrencyHints(t *testing.T) {
	comma := Dialect{Delimiter: ';', DecimalComma: true}
	for _, c := range []struct {
		cell string
		d    Dialect
		want string
	}{
		{"$12.50", Dialect{}, "; it holds a currency sign: write the amount as a number without it, such as 12.50 (the currency in the column's name or the data dictionary's unit)"},
		{"12,50 €", comma, "; it holds a currency sign: write the amount as a number without it, such as 12,50 (the currency in the column's name or the data dictionary's unit)"},
		{"1 234,5", comma, "; it separates groups of digits with spaces: write the number without them, such as 1234,5"},
		{"1\u202f234\u202f567", comma, "; it separates groups of digits with the character U+202F (a space): write the number without them, such as 1234567"},
		{"1'234.5", Dialect{}, "; it separates groups of digits with apostrophes: write the number without them, such as 1234.5"},
		{"1 23", Dialect{}, ""},
		{"12 3456", Dialect{}, ""},
		{"$", Dialect{}, ""},
		{"US$ x", Dialect{}, ""},
	} {
		if got := groupedHint(c.cell, c.d); got != c.want {
			t.Errorf("%q: got %q, want %q", c.cell, got, c.want)
		}
	}
}
