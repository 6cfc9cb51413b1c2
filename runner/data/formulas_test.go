package data

import (
	"bytes"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// formulaBook is a workbook (written by excelize, which computes no
// formula) whose sheet "s" holds a title row, then y, a, b, c, note from
// row 2: cell D5 (column c) a formula without a saved value, B6 a formula
// whose value (1.5) is saved, E3 (a column no plan uses) a formula
// without a value, C7 an error value.
func formulaBook(t testing.TB) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	f.SetSheetName("Sheet1", "s")
	f.SetCellValue("s", "A1", "title")
	rows := [][]any{{"y", "a", "b", "c", "note"}, {1, 0.5, 1.0, 1, "x"}, {2, 3.0, 2.0, 1, "y"}, {1, 7.0, 3.0, nil, "z"}, {2, 1.5, 4.0, 1, "w"}, {1, -1.0, 0.0, 1, "v"}}
	for i, r := range rows {
		cell, _ := excelize.CoordinatesToCellName(1, i+2)
		if err := f.SetSheetRow("s", cell, &r); err != nil {
			t.Fatal(err)
		}
	}
	f.SetCellFormula("s", "D5", "A5*2&\"<\"")
	f.SetCellFormula("s", "B6", "=1+0.5") // keeps the value there, as if computed
	f.SetCellValue("s", "E3", nil)
	f.SetCellFormula("s", "E3", "UPPER(\"x\")")
	f.SetCellStr("s", "C7", "#N/A")
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// A formula cell without a saved value is read as its formula's text,
// refused with what it is (not taken for a missing value); one with a
// saved value is read as that value; a formula in a column not used is
// no matter; an error value is refused as such, or read as missing when
// listed among the markers.
func TestWorkbookFormulas(t *testing.T) {
	raw := formulaBook(t)
	if got := unsavedFormulas(raw, "s"); len(got) != 2 || got[5][4] != `=A5*2&"<"` || got[3][5] != `=UPPER("x")` {
		t.Errorf("unsaved formulas: %v", got)
	}
	opt := Options{Outcome: "y", Predictors: []string{"c"}, Dialect: Dialect{Sheet: "s", HeaderRow: 2}}
	_, err := readBytes(raw, "f.xlsx", opt)
	if err == nil || !strings.Contains(err.Error(), `f.xlsx:5: column "c": value "=A5*2&\"<\"" is not a number; the cell holds a formula without its value`) {
		t.Errorf("formula without a value: %v", err)
	}
	opt.PredictorLevels = map[string][]string{"c": {"1"}}
	_, err = readBytes(raw, "f.xlsx", opt)
	if err == nil || !strings.Contains(err.Error(), `the cell holds a formula without its value`) {
		t.Errorf("formula without a value, as a level: %v", err)
	}
	// Column a: the saved formula's value is read, E3's formula is no matter.
	d, err := readBytes(raw, "f.xlsx", Options{Outcome: "y", Predictors: []string{"a"}, Dialect: Dialect{Sheet: "s", HeaderRow: 2}})
	if err != nil || d.N != 5 || d.X[3] != 1.5 {
		t.Errorf("column a: %v %+v", err, d)
	}
	opt = Options{Outcome: "y", Predictors: []string{"b"}, Dialect: Dialect{Sheet: "s", HeaderRow: 2}}
	_, err = readBytes(raw, "f.xlsx", opt)
	if err == nil || !strings.Contains(err.Error(), `f.xlsx:7: column "b": value "#N/A" is not a number; it is a spreadsheet's error value`) {
		t.Errorf("error value: %v", err)
	}
	opt.MissingTokens = []string{"", "#N/A"}
	d, err = readBytes(raw, "f.xlsx", opt)
	if err != nil || d.N != 4 || d.X[2] != 3 {
		t.Errorf("error value as a missing-value marker: %v %+v", err, d)
	}
}
