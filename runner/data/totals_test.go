package data

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"ordplan/internal/testbook"
)

// totalsBook is a workbook whose sheet "s" holds y, a, b, c, d in rows 1
// to 7 and, in row 8, a row of totals as spreadsheets add them: the
// outcome's cell empty, B8 =SUM(B2:B7), C8 sharing that formula (read
// as =SUM(C2:C7)), D8 =AVERAGE(B2:B7) (another column's), each with its
// value saved.
func totalsBook(t testing.TB) []byte {
	rows := [][]any{{"y", "a", "b", "c", "d"}, {1, 0.5, 1.0, 2, 1}, {2, 3.0, 2.0, 1, 2}, {1, 7.0, 3.0, 4, 3}, {2, 1.5, 4.0, 1, 4}, {1, -1.0, 0.0, 2, 5}, {2, 2.0, 1.0, 3, 6}, {nil, 13.0, 11.0, 13, 2.1667}}
	return testbook.Rows(t, "s", 1, rows, func(f *excelize.File) {
		shared, ref := excelize.STCellFormulaTypeShared, "B8:C8"
		if err := f.SetCellFormula("s", "B8", "SUM(B2:B7)", excelize.FormulaOpts{Type: &shared, Ref: &ref}); err != nil {
			t.Fatal(err)
		}
		f.SetCellFormula("s", "D8", "AVERAGE(B2:B7)")
	})
}

// A row of totals is refused when a used column's cell aggregates the
// column, naming the file, row, cell, formula and sheet and what to do,
// whether or not its outcome would be imputed; a shared formula is read
// as each cell's own; a formula over another column, in a column not
// used, is no matter.
func TestWorkbookTotalsRow(t *testing.T) {
	raw := totalsBook(t)
	for _, c := range []struct {
		preds  []string
		impute bool
		want   string
	}{
		{[]string{"a"}, true, `t.xlsx:8: column "a": cell B8 of sheet "s" holds "=SUM(B2:B7)", which aggregates the column's own cells: row 8 looks like a row of totals, not a row of data, and would be read as one; delete the row, or move the totals to another sheet (a blank row above them does not end the table: blank rows are skipped and the rows below them read)`},
		{[]string{"a"}, false, `t.xlsx:8: column "a": cell B8 of sheet "s" holds "=SUM(B2:B7)"`},
		{[]string{"d", "b"}, true, `t.xlsx:8: column "b": cell C8 of sheet "s" holds "=SUM(C2:C7)", which aggregates`},
	} {
		opt := Options{Outcome: "y", Predictors: c.preds, Dialect: Dialect{Sheet: "s"}, KeepIncomplete: c.impute}
		_, err := readBytes(raw, "t.xlsx", opt)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v: %v", c.preds, err)
		}
	}
	d, err := readBytes(raw, "t.xlsx", Options{Outcome: "y", Predictors: []string{"d"}, Dialect: Dialect{Sheet: "s"}})
	if err != nil || d.N != 6 {
		t.Errorf("column d: %v %+v", err, d)
	}
}

// aggregateOver tells a totals cell's formula by its function and its
// range of the cell's own column (column 2, B).
func TestAggregateOver(t *testing.T) {
	for f, want := range map[string]bool{
		"SUM(B2:B41)": true, "=SUBTOTAL(9,$B$2:$B$41)": true, "_xlfn.STDEV.S(B:B)": true,
		"ROUND(AVERAGE(B2:B9),1)": true, "count(b2:b9)": true, "MAX(A2:A9,B2:B9)": true,
		"SUM(Other!B2:B9)": false, "SUM(C2:C9)": false, "B2*2": false, "SUM(AB2:AB9)": false,
		"IF(B2>0,1,0)": false, "SUM(B2:C9)": false, "VLOOKUP(A2,B2:B9,1)": false, "SUM(B2:B)": false,
	} {
		if got := aggregateOver(f, 2); got != want {
			t.Errorf("%s: %v, want %v", f, got, want)
		}
	}
	// A shared formula (of column 4, D) that a cell sharing it may spell
	// as an aggregate of its own column.
	for f, want := range map[string]bool{"SUM(D2:D9)": true, "SUM($B$2:$B$9)": true, "SUM($B$2:B2)": false, "SUM(B2:B9)": false, "D2*2": false} {
		if got := sharedAggregate(f, 4); got != want {
			t.Errorf("shared %s: %v, want %v", f, got, want)
		}
	}
}

// bookRows is a workbook whose sheet "s" holds rows from A1, changed by
// more before it is written.
func bookRows(t *testing.T, rows [][]any, more func(f *excelize.File)) []byte {
	return testbook.Rows(t, "s", 1, rows, more)
}

// A row of totals written through a defined name or a table's column
// (=SUM(Scores), =SUBTOTAL(109,T1[a])) is refused as one written with a
// range is; a name or a table column of another column is no matter.
func TestWorkbookNamedTotals(t *testing.T) {
	data := [][]any{{"y", "a", "b"}, {1, 0.5, 1.0}, {2, 3.0, 2.0}, {1, 7.0, 3.0}, {2, 1.5, 4.0}, {1, -1.0, 0.0}, {2, 2.0, 1.0}, {nil, 13.0, 11.0}}
	for _, c := range []struct {
		name  string
		more  func(f *excelize.File)
		preds []string
		want  string // "" when the data are read (row 8 dropped for its outcome)
	}{
		{"defined name", func(f *excelize.File) {
			f.SetDefinedName(&excelize.DefinedName{Name: "Scores", RefersTo: "s!$B$2:$B$7"})
			f.SetCellFormula("s", "B8", "SUM(Scores)")
		}, []string{"a", "b"}, `t.xlsx:8: column "a": cell B8 of sheet "s" holds "=SUM(Scores)", which aggregates the column's own cells`},
		{"defined name of another column", func(f *excelize.File) {
			f.SetDefinedName(&excelize.DefinedName{Name: "Scores", RefersTo: "s!$B$2:$B$7"})
			f.SetCellValue("s", "C8", 7.0) // not the sum of b
			f.SetCellFormula("s", "C8", "SUM(Scores)")
		}, []string{"b"}, ""},
		{"defined name of another sheet", func(f *excelize.File) {
			f.NewSheet("other")
			f.SetDefinedName(&excelize.DefinedName{Name: "Scores", RefersTo: "other!$B$2:$B$7"})
			f.SetCellValue("s", "B8", 7.0)
			f.SetCellFormula("s", "B8", "SUM(Scores)")
		}, []string{"a"}, ""},
		{"table column", func(f *excelize.File) {
			f.AddTable("s", &excelize.Table{Range: "A1:C7", Name: "T1"})
			f.SetCellFormula("s", "C8", "SUBTOTAL(109,T1[b])")
		}, []string{"b"}, `t.xlsx:8: column "b": cell C8 of sheet "s" holds "=SUBTOTAL(109,T1[b])", which aggregates the column's own cells`},
		{"table column, data and header", func(f *excelize.File) {
			f.AddTable("s", &excelize.Table{Range: "A1:C7", Name: "T1"})
			f.SetCellValue("s", "B8", 7.0)
			f.SetCellFormula("s", "B8", "AVERAGE(T1[[#Data],[a]])")
		}, []string{"a"}, `cell B8 of sheet "s" holds "=AVERAGE(T1[[#Data],[a]])"`},
		{"table's other column", func(f *excelize.File) {
			f.AddTable("s", &excelize.Table{Range: "A1:C7", Name: "T1"})
			f.SetCellValue("s", "C8", 7.0)
			f.SetCellFormula("s", "C8", "SUM(T1[a])")
		}, []string{"b"}, ""},
		{"one row of a table's column", func(f *excelize.File) {
			f.AddTable("s", &excelize.Table{Range: "A1:C8", Name: "T1"})
			f.SetCellValue("s", "C8", 7.0)
			f.SetCellFormula("s", "C8", "SUM(T1[@b],1)")
		}, []string{"b"}, ""},
	} {
		raw := bookRows(t, data, c.more)
		d, err := readBytes(raw, "t.xlsx", Options{Outcome: "y", Predictors: c.preds, Dialect: Dialect{Sheet: "s"}})
		switch {
		case c.want == "" && (err != nil || d.N != 6):
			t.Errorf("%s: %v", c.name, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%s: got %v, want %s", c.name, err, c.want)
		}
	}
}

// A row of totals typed as numbers at the foot of the table, a cell
// saying Total and each used column's number the sum of the column above,
// is refused; a last row saying Total whose numbers are not the sums
// (a level named total), or sums without the word, is read.
func TestWorkbookTypedTotals(t *testing.T) {
	rows := func(label any, a, b any) [][]any {
		return [][]any{{"y", "kind", "a", "b"}, {1, "partial", 0.1, 1}, {2, "total", 0.2, 2}, {1, "partial", 0.3, 3}, {2, "partial", 1.5, 4}, {nil}, {nil, label, a, b}}
	}
	for _, c := range []struct {
		name   string
		rows   [][]any
		preds  []string
		impute bool
		want   string
	}{
		{"typed totals", rows("Total", 2.1, 10), []string{"a", "b"}, true, `t.xlsx:7: column "a": row 7 of sheet "s" looks like a row of totals, not a row of data, and would be read as one: cell B7 says "Total", and the numbers of the used columns in it are the sums of the rows above (C7 holds "2.1", the sum of the column's cells above it); delete the row, or move the totals to another sheet (a blank row above them does not end the table: blank rows are skipped and the rows below them read)`},
		{"typed totals, label used as a level", rows("Sum:", 2.1, 10), []string{"b", "kind|partial/total"}, false, `t.xlsx:7: column "b": row 7 of sheet "s" looks like a row of totals`},
		{"a column not summed", rows("Total", 2.1, 9), []string{"a", "b"}, true, ""},
		{"sums without the word", rows("partial", 2.1, 10), []string{"a", "b"}, true, ""},
		{"zeros", [][]any{{"y", "kind", "a"}, {1, "x", 0}, {2, "x", 0}, {1, "total", 0}}, []string{"a"}, false, ""},
	} {
		opt := Options{Outcome: "y", Dialect: Dialect{Sheet: "s"}, KeepIncomplete: c.impute}
		for _, p := range c.preds {
			name, levels, ok := strings.Cut(p, "|")
			opt.Predictors = append(opt.Predictors, name)
			if ok {
				opt.PredictorLevels = map[string][]string{name: strings.Split(levels, "/")}
			}
		}
		_, err := readBytes(bookRows(t, c.rows, nil), "t.xlsx", opt)
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%s: %v", c.name, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%s: got %v, want %s", c.name, err, c.want)
		}
	}
}

// A CSV file's last line that says Total and holds the sums of the used
// columns above it (as a spreadsheet's table exported with its totals
// row) is refused, naming the line, the field and a sum, in any dialect
// and through a file read whole (Load) or by its bytes; a last line saying
// Total whose numbers are not the sums, or sums without the word, is read.
func TestCSVTypedTotals(t *testing.T) {
	const table = "y,a,b,note\n1,0.5,1,x\n2,0.25,0,\n1,0.75,1,y\n2,0.125,1,\n"
	opt := Options{Outcome: "y", Predictors: []string{"a", "b"}, KeepIncomplete: true}
	want := `t.csv:6: column "a": line 6 looks like a row of totals, not a row of data, and would be read as one: its field 4 ("note") says "Total", and the numbers of the used columns in it are the sums of the lines above ("a" holds "1.625", the sum of the column's values above it); delete the line, or keep the totals in another file`
	if _, err := Read(strings.NewReader(table+",1.625,3,Total\n\n"), "t.csv", opt); err == nil || err.Error() != want {
		t.Errorf("totals: got %v, want %s", err, want)
	}
	semi := strings.ReplaceAll(strings.ReplaceAll(table+",1.625,3,Total:\r\n", ",", ";"), ".", ",")
	o := opt
	o.Dialect = Dialect{Delimiter: ';', DecimalComma: true}
	if _, err := Read(strings.NewReader(semi), "t.csv", o); err == nil || !strings.Contains(err.Error(), `line 6 looks like a row of totals`) || !strings.Contains(err.Error(), `("a" holds "1,625"`) {
		t.Errorf("totals with a decimal comma: %v", err)
	}
	path := filepath.Join(t.TempDir(), "t.csv")
	os.WriteFile(path, []byte(table+"Sum,1.625,3,\n"), 0o644)
	if _, err := Load(path, opt); err == nil || !strings.Contains(err.Error(), `line 6 looks like a row of totals, not a row of data, and would be read as one: its field 1 ("y") says "Sum"`) {
		t.Errorf("Load: %v", err)
	}
	for name, in := range map[string]string{
		"not the sums":      table + ",1.6,3,Total\n",
		"sums, no word":     table + ",1.625,3,all\n",
		"a level of a word": "y,a,b,note\n1,0,0,x\n2,0,0,total\n",
	} {
		if _, err := Read(strings.NewReader(in), "t.csv", opt); err != nil {
			t.Errorf("%s: %v", name, err)
		}
	}
}

// A file of new rows to predict with a row of totals at its foot is
// refused as data are, a workbook's too.
func TestNewRowsTotals(t *testing.T) {
	dir := t.TempDir()
	csvPath := filepath.Join(dir, "new.csv")
	os.WriteFile(csvPath, []byte("a,b,note\n0.5,1,\n0.25,0,\n0.75,1,Total\n"), 0o644)
	if _, err := LoadNewRows(csvPath, []string{"a", "b"}, nil, Options{}); err == nil || !strings.Contains(err.Error(), `new.csv:4: column "a": line 4 looks like a row of totals`) {
		t.Errorf("CSV: %v", err)
	}
	bookPath := filepath.Join(dir, "new.xlsx")
	os.WriteFile(bookPath, bookRows(t, [][]any{{"a", "b", "note"}, {0.5, 1}, {0.25, 0}, {0.75, 1, "Total"}}, nil), 0o644)
	if _, err := LoadNewRows(bookPath, []string{"a", "b"}, nil, Options{Dialect: Dialect{Sheet: "s"}}); err == nil || !strings.Contains(err.Error(), `new.xlsx:4: column "a": row 4 of sheet "s" looks like a row of totals`) {
		t.Errorf("workbook: %v", err)
	}
	os.WriteFile(csvPath, []byte("a,b,note\n0.5,1,\n0.25,0,\n0.7,1,Total\n"), 0o644)
	if rs, err := LoadNewRows(csvPath, []string{"a", "b"}, nil, Options{}); err != nil || rs.N != 3 {
		t.Errorf("not the sums: %v", err)
	}
}

// A workbook of new rows names the hidden columns it reads, and refuses a
// cell covered by merged cells in a column read.
func TestNewRowsWorkbookHiddenAndMerged(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "new.xlsx")
	os.WriteFile(path, bookRows(t, [][]any{{"a", "b"}, {0.5, 1}, {0.25, 0}, {0.7, 0}}, func(f *excelize.File) {
		f.SetColVisible("s", "B", false)
	}), 0o644)
	rs, err := LoadNewRows(path, []string{"a", "b"}, nil, Options{Dialect: Dialect{Sheet: "s"}})
	if err != nil || rs.Sheet == nil || len(rs.Sheet.HiddenColumns) != 1 || rs.Sheet.HiddenColumns[0].Name != "b" {
		t.Errorf("hidden column: %v %+v", err, rs)
	}
	os.WriteFile(path, bookRows(t, [][]any{{"a", "b"}, {0.5, 1}, {0.25, nil}, {0.7, 0}}, func(f *excelize.File) {
		f.MergeCell("s", "B2", "B3")
	}), 0o644)
	if _, err := LoadNewRows(path, []string{"a", "b"}, nil, Options{Dialect: Dialect{Sheet: "s"}}); err == nil || !strings.Contains(err.Error(), `new.xlsx:3: column "b": cell B3 is one of the merged cells B2:B3`) {
		t.Errorf("merged: %v", err)
	}
}
