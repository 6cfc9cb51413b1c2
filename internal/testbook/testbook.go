// Package testbook writes small xlsx workbooks for tests: one function,
// so that the tests of every package build their workbooks alike.
package testbook

import (
	"bytes"
	"testing"

	"github.com/xuri/excelize/v2"
)

// Rows is a workbook whose one sheet, named sheet (Sheet1 when empty),
// holds rows from row first (1-based) in column A on, numbers as numbers
// and nil as an empty cell, changed by more (if not nil) before it is
// written.
func Rows(t testing.TB, sheet string, first int, rows [][]any, more func(*excelize.File)) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	if sheet == "" {
		sheet = "Sheet1"
	}
	if sheet != "Sheet1" {
		if err := f.SetSheetName("Sheet1", sheet); err != nil {
			t.Fatal(err)
		}
	}
	for i, r := range rows {
		cell, _ := excelize.CoordinatesToCellName(1, first+i)
		if err := f.SetSheetRow(sheet, cell, &r); err != nil {
			t.Fatal(err)
		}
	}
	if more != nil {
		more(f)
	}
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}
