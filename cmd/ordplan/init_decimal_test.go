package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// ordplan init on a workbook whose numbers are held as text with a
// decimal comma ("0,25") marks data.decimal with an EDIT line; with
// --decimal comma it writes the key and reads the column as numbers, and
// the plan checks; --delimiter, which a workbook has no use for, is
// refused.
func TestInitWorkbookDecimalComma(t *testing.T) {
	dir := t.TempDir()
	rows := [][]any{{"y", "b", "x"}}
	for i := 0; i < 24; i++ {
		rows = append(rows, []any{1 + i%3, []string{"0,25", "1,5", "2", "3,75"}[i%4], float64(i%5) / 4})
	}
	data := filepath.Join(dir, "c.xlsx")
	if err := os.WriteFile(data, bookOf(t, rows, nil), 0o644); err != nil {
		t.Fatal(err)
	}
	read := func(name string) string {
		text, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		return string(text)
	}
	if _, errs, code := runCLI("init", filepath.Join(dir, "p.yaml"), "--data", data); code != 0 {
		t.Fatal(errs)
	}
	hasEach(t, read("p.yaml"), `  # EDIT: column b holds numbers as text written with a decimal comma ("0,25"): add decimal: comma here to read them as numbers (ordplan init --decimal comma)`+"\n")
	if _, errs, code := runCLI("init", filepath.Join(dir, "q.yaml"), "--data", data, "--decimal", "comma"); code != 0 {
		t.Fatal(errs)
	}
	q := read("q.yaml")
	hasEach(t, q, "  decimal: comma ", "#   b  numeric from 0.25 to 3.75\n", "predictors: [b, x]\n")
	if strings.Contains(q, "# EDIT: column b") {
		t.Errorf("the EDIT line under --decimal comma:\n%s", q)
	}
	if _, errs, code := runCLI("check", filepath.Join(dir, "q.yaml")); code != 0 || strings.Contains(errs, "data.decimal") {
		t.Errorf("check: exit %d\n%s", code, errs)
	}
	_, errs, code := runCLI("init", filepath.Join(dir, "r.yaml"), "--data", data, "--delimiter", "semicolon")
	if want := "--delimiter is for CSV text; the data file is a workbook or a Parquet file, which has no delimiter"; code == 0 || !strings.Contains(errs, want) {
		t.Errorf("--delimiter: exit %d, want %q in\n%s", code, want, errs)
	}
}

// ordplan init describes a column of amounts written with a currency sign
// (or digits grouped by spaces) as such, and proposes it as no predictor,
// where it proposed the amounts as the levels of a categorical predictor.
func TestInitFormattedNumbers(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "m.csv")
	if err := os.WriteFile(data, []byte("y,price,b\n1,$12.50,1\n2,$3.00,0\n3,$4.25,1\n1,$1.00,0\n2,$2.00,1\n3,$5.00,0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	plan := filepath.Join(dir, "m.yaml")
	if _, errs, code := runCLI("init", plan, "--data", data); code != 0 {
		t.Fatal(errs)
	}
	text, err := os.ReadFile(plan)
	if err != nil {
		t.Fatal(err)
	}
	hasEach(t, string(text), `#   price  numbers written with a currency sign or with grouped digits ("$12.50"): write them as plain numbers to use the column`+"\n", "predictors: [b]\n")
	if strings.Contains(string(text), "categorical:\n  price") {
		t.Errorf("price proposed as categorical:\n%s", text)
	}
}
