package data

import (
	"bytes"
	"reflect"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// bookSheet is one worksheet of sheetsBook: its rows from cell at (A1
// when ""), whether it is hidden, and the sheet rows it hides.
type bookSheet struct {
	name       string
	hidden     bool
	at         string
	rows       [][]any
	hiddenRows []int
	hiddenCols string // columns to hide ("B", "C:D"), "" for none
}

// sheetsBook is a workbook (written by excelize) of the sheets given, in
// order.
func sheetsBook(t testing.TB, sheets ...bookSheet) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	for i, s := range sheets {
		if i == 0 {
			f.SetSheetName("Sheet1", s.name)
		} else if _, err := f.NewSheet(s.name); err != nil {
			t.Fatal(err)
		}
		col, row := 1, 1
		if s.at != "" {
			col, row, _ = excelize.CellNameToCoordinates(s.at)
		}
		for j, r := range s.rows {
			cell, _ := excelize.CoordinatesToCellName(col, row+j)
			if err := f.SetSheetRow(s.name, cell, &r); err != nil {
				t.Fatal(err)
			}
		}
		for _, r := range s.hiddenRows {
			f.SetRowVisible(s.name, r, false)
		}
		if s.hiddenCols != "" {
			if err := f.SetColVisible(s.name, s.hiddenCols, false); err != nil {
				t.Fatal(err)
			}
		}
	}
	// Hidden once every sheet exists and a visible one is active (a
	// workbook keeps its active sheet visible).
	for i, s := range sheets {
		if !s.hidden {
			f.SetActiveSheet(i)
			break
		}
	}
	for _, s := range sheets {
		if s.hidden {
			if err := f.SetSheetVisible(s.name, false); err != nil {
				t.Fatal(err)
			}
		}
	}
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

var (
	sheetData  = [][]any{{"y", "a"}, {1, 0.5}, {2, 1.5}, {1, 2.5}, {2, 0.0}}
	sheetDraft = [][]any{{"y", "a"}, {1, 9.0}, {2, 9.0}, {1, 9.0}, {2, 9.0}}
	sheetOpt   = Options{Outcome: "y", Predictors: []string{"a"}}
)

// With no sheet named, the one visible sheet with cells filled is read: a
// hidden sheet before it (an old draft) is not, nor an empty visible one;
// a hidden sheet is read when named, and says it is hidden; several
// visible sheets with cells, or only hidden ones, are refused with their
// names and the key that names one.
func TestWorkbookSheetChoice(t *testing.T) {
	read := func(raw []byte, sheet string) (*Dataset, error) {
		opt := sheetOpt
		opt.Dialect.Sheet = sheet
		return readBytes(raw, "b.xlsx", opt)
	}
	hiddenFirst := sheetsBook(t, bookSheet{name: "old", hidden: true, rows: sheetDraft}, bookSheet{name: "data", rows: sheetData})
	d, err := read(hiddenFirst, "")
	if err != nil || d.X[0] != 0.5 || d.Sheet == nil || !reflect.DeepEqual(*d.Sheet, SheetRead{Name: "data", Sheets: 2}) {
		t.Fatalf("hidden first sheet: %v %+v, want the visible sheet data", err, d)
	}
	d, err = read(hiddenFirst, "old")
	if err != nil || d.X[0] != 9 || d.Sheet == nil || !d.Sheet.Hidden || !strings.Contains(d.Sheet.Where(), `sheet "old" (a hidden sheet, read because data.sheet or --sheet names it)`) {
		t.Errorf("hidden sheet named: %v %+v %+v", err, d, d.Sheet)
	}
	d, err = read(sheetsBook(t, bookSheet{name: "notes"}, bookSheet{name: "Daten", rows: sheetData}), "")
	if err != nil || d.Sheet.Name != "Daten" {
		t.Errorf("empty first sheet: %v %+v", err, d)
	}
	_, err = read(sheetsBook(t, bookSheet{name: "notes", rows: [][]any{{"read me"}}}, bookSheet{name: "data", rows: sheetData}), "")
	if err == nil || err.Error() != `b.xlsx: workbook has 2 visible sheets with cells filled ("notes", "data"): name the sheet of the data with data.sheet (ordplan fit and ordplan init: --sheet)` {
		t.Errorf("two sheets with cells: %v", err)
	}
	_, err = read(sheetsBook(t, bookSheet{name: "front"}, bookSheet{name: "data", hidden: true, rows: sheetData}), "")
	if err == nil || !strings.Contains(err.Error(), `only hidden sheets hold cells ("data"), and a hidden sheet is read only when named`) {
		t.Errorf("only a hidden sheet with cells: %v", err)
	}
	_, err = read(sheetsBook(t, bookSheet{name: "front"}, bookSheet{name: "data", rows: sheetData}), "front")
	if err == nil || err.Error() != `b.xlsx: sheet "front" is empty; the workbook's other sheets: "data" (data.sheet, or --sheet, names the one to read)` {
		t.Errorf("empty sheet named: %v", err)
	}
	_, err = read(sheetsBook(t, bookSheet{name: "front"}), "")
	if err == nil || err.Error() != `b.xlsx: workbook is empty: no sheet has a filled cell (its sheets: "front")` {
		t.Errorf("empty workbook: %v", err)
	}
	// The name as the workbook spells it, whatever the plan's case.
	d, err = read(hiddenFirst, "DATA")
	if err != nil || d.Sheet.Name != "data" {
		t.Errorf("sheet named in other case: %v %+v", err, d)
	}
}

// Hidden rows are read, as the data they are, and counted.
func TestWorkbookHiddenRows(t *testing.T) {
	raw := sheetsBook(t, bookSheet{name: "s", rows: sheetData, hiddenRows: []int{2, 4}})
	d, err := readBytes(raw, "b.xlsx", sheetOpt)
	if err != nil || d.N != 4 || d.Sheet.HiddenRows != 2 {
		t.Fatalf("%v %+v %+v, want 4 rows, 2 of them hidden", err, d, d.Sheet)
	}
	if got, want := d.Sheet.HiddenNote(), "2 of the rows read are hidden in the sheet"; !strings.HasPrefix(got, want) {
		t.Errorf("note %q, want it to start %q", got, want)
	}
}

// Hidden columns are read, as the data they are, and those read are
// named, in the sheet's order, with their letters (the table starting at
// column B: the letters are the sheet's); a hidden column not read is not.
func TestWorkbookHiddenColumns(t *testing.T) {
	rows := [][]any{{"y", "a", "b", "note"}, {1, 0.5, 3, "x"}, {2, 0.1, 4, "x"}, {1, 0.7, 5, "x"}, {2, 0.2, 6, "x"}}
	raw := sheetsBook(t, bookSheet{name: "s", at: "B1", rows: rows, hiddenCols: "C:E"})
	opt := Options{Outcome: "y", Predictors: []string{"b", "a"}}
	d, err := readBytes(raw, "b.xlsx", opt)
	if err != nil || d.N != 4 || d.X[0] != 0.5 && d.X[0] != 3 {
		t.Fatalf("%v %+v", err, d)
	}
	if want := []HiddenColumn{{"a", "C"}, {"b", "D"}}; !reflect.DeepEqual(d.Sheet.HiddenColumns, want) {
		t.Errorf("hidden columns %+v, want %+v", d.Sheet.HiddenColumns, want)
	}
	if got, want := d.Sheet.HiddenNote(), `columns "a" (column C) and "b" (column D), which are read, are hidden in the sheet; they were read as data like the others`; !strings.HasPrefix(got, want) {
		t.Errorf("note %q, want it to start %q", got, want)
	}
	opt.Predictors = []string{"b"}
	raw = sheetsBook(t, bookSheet{name: "s", rows: rows, hiddenRows: []int{3}, hiddenCols: "B"})
	if d, err := readBytes(raw, "b.xlsx", opt); err != nil || d.Sheet.HiddenColumns != nil || d.Sheet.HiddenNote() != "1 of the rows read is hidden in the sheet (a hidden row, or one a filter hides); it was read as data like the others (delete it, or leave it out with a subset condition, if it should not count)" {
		t.Errorf("a hidden column not read: %v %+v", err, d.Sheet)
	}
	opt.Predictors = []string{"a", "b"}
	if d, err := readBytes(raw, "b.xlsx", opt); err != nil || !strings.HasSuffix(d.Sheet.HiddenNote(), `if it should not count); column "a" (column B), which is read, is hidden in the sheet; it was read as data like the others (a hidden column is often an old version kept out of view: check that it is the column meant)`) {
		t.Errorf("a hidden row and a hidden column: %v %q", err, d.Sheet.HiddenNote())
	}
}

// A workbook's number cells are numbers under data.decimal: comma (the
// setting of CSV files beside it); its text cells follow the setting.
func TestWorkbookNumbersUnderDecimalComma(t *testing.T) {
	raw := sheetsBook(t, bookSheet{name: "s", rows: [][]any{{"y", "a", "b"}, {1, 0.5, "3,5"}, {2, 1.25e-7, "1"}, {1, 2.0, "2,25"}}})
	opt := Options{Outcome: "y", Predictors: []string{"a", "b"}, Dialect: Dialect{DecimalComma: true}}
	d, err := readBytes(raw, "b.xlsx", opt)
	if err != nil || d.X[0] != 0.5 || d.X[1] != 3.5 || d.X[2] != 1.25e-7 || d.X[5] != 2.25 {
		t.Errorf("decimal comma: %v %+v", err, d)
	}
	d, err = readBytes(raw, "b.xlsx", Options{Outcome: "y", Predictors: []string{"a"}})
	if err != nil || d.X[0] != 0.5 || d.X[1] != 1.25e-7 {
		t.Errorf("decimal point: %v %+v", err, d)
	}
}

// A table that starts at a later column (B2) is read, its cells named
// where they are; a cell right of the table names itself and its value;
// a title above the table (a header of one name) points to the header
// row's key.
func TestWorkbookTableLayout(t *testing.T) {
	raw := sheetsBook(t, bookSheet{name: "s", at: "C2", rows: [][]any{{"y", "a"}, {1, 0.5}, {2, "x"}, {1, 2.5}}})
	_, err := readBytes(raw, "b.xlsx", sheetOpt)
	if err == nil || !strings.HasPrefix(err.Error(), `b.xlsx:4: column "a": value "x" is not a number`) {
		t.Errorf("table at C2: %v", err)
	}
	raw = sheetsBook(t, bookSheet{name: "s", at: "C2", rows: [][]any{{"y", "a"}, {1, 0.5}, {2, 1.0}, {1, 2.5}}})
	if d, err := readBytes(raw, "b.xlsx", sheetOpt); err != nil || d.N != 3 || d.X[1] != 1 {
		t.Errorf("table at C2: %v %+v", err, d)
	}
	raw = sheetsBook(t, bookSheet{name: "s", at: "B1", rows: [][]any{{"y", "a"}, {1, 0.5}, {2, 1.0, nil, "note: n=3"}, {1, 2.5}}})
	_, err = readBytes(raw, "b.xlsx", sheetOpt)
	if err == nil || err.Error() != `b.xlsx:3: cell E3 holds "note: n=3", right of the table, whose header (row 1) names 2 columns, up to column C: if it is a note beside the data, move or delete it; if it is data, give its column a name in the header row` {
		t.Errorf("note beside the table: %v", err)
	}
	raw = sheetsBook(t, bookSheet{name: "s", rows: append([][]any{{"Survey 2024"}}, sheetData...)})
	_, err = readBytes(raw, "b.xlsx", sheetOpt)
	if err == nil || !strings.Contains(err.Error(), `column "y": outcome column not found in the header; available columns: "Survey 2024"; the header was read from row 1 of the sheet "s": if the column names are in another row, give it with data.header_row`) {
		t.Errorf("title above the table: %v", err)
	}
	raw = sheetsBook(t, bookSheet{name: "s", rows: [][]any{{"Survey 2024"}, {"y", "a"}, {1, 0.5}}})
	_, err = readBytes(raw, "b.xlsx", Options{Outcome: "Survey 2024"})
	if err == nil || !strings.Contains(err.Error(), `b.xlsx:2: cell B2 holds "a", right of the header read from row 1, which holds one name, "Survey 2024": if that is a title above the table, give the row of the column names with data.header_row`) {
		t.Errorf("title above the table, as the header: %v", err)
	}
	raw = sheetsBook(t, bookSheet{name: "s", rows: [][]any{{nil, "y", "a"}, {1, 1, 0.5}}})
	_, err = readBytes(raw, "b.xlsx", sheetOpt)
	if err == nil || err.Error() != `b.xlsx:1: header: column 1 (cell A1) has no name: name it (or, if the column holds nothing, delete it)` {
		t.Errorf("unnamed column: %v", err)
	}
}

// A header cell that merged cells cover, other than the one holding
// their value, reads as no name: the message says so, within the header
// (a column without a name) and at its end (the data right of the last
// name), with the table at B1 too (the lead column left out). It said
// "has no name: name it" or "right of the table" while the sheet shows
// the merged name across the columns.
func TestWorkbookMergedHeader(t *testing.T) {
	book := func(at string, rows [][]any, merge [2]string) []byte {
		f := excelize.NewFile()
		defer f.Close()
		col, row, _ := excelize.CellNameToCoordinates(at)
		for j, r := range rows {
			cell, _ := excelize.CoordinatesToCellName(col, row+j)
			if err := f.SetSheetRow("Sheet1", cell, &r); err != nil {
				t.Fatal(err)
			}
		}
		if err := f.MergeCell("Sheet1", merge[0], merge[1]); err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		if err := f.Write(&b); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	raw := book("A1", [][]any{{"y", "a", nil, "d"}, {1, 0.5, 3, 1}, {2, 1.5, 4, 0}}, [2]string{"B1", "C1"})
	_, err := readBytes(raw, "b.xlsx", Options{Outcome: "y", Predictors: []string{"a", "d"}})
	if want := `b.xlsx:1: header: column 3 (cell C1) has no name; the cell is one of the merged cells B1:C1, whose one value, held by B1, the sheet shows across them all: unmerge them and name each column in the header row`; err == nil || err.Error() != want {
		t.Errorf("merged within the header:\n got %v\nwant %s", err, want)
	}
	raw = book("B1", [][]any{{"y", "a", nil}, {1, 0.5, 3}, {2, 1.5, 4}}, [2]string{"C1", "D1"})
	_, err = readBytes(raw, "b.xlsx", Options{Outcome: "y", Predictors: []string{"a"}})
	if want := `b.xlsx:2: cell D2 holds "3", right of the table, whose header (row 1) names 2 columns, up to column C; its column's header cell D1 is one of the merged cells C1:D1, whose one value, held by C1, the sheet shows across them all: unmerge them and name each column in the header row`; err == nil || err.Error() != want {
		t.Errorf("merged at the header's end:\n got %v\nwant %s", err, want)
	}
}
