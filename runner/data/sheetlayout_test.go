package data

import (
	"archive/zip"
	"bytes"
	"fmt"
	"io"
	"reflect"
	"slices"
	"testing"

	"github.com/xuri/excelize/v2"
)

// editPart is the workbook raw with the XML of its part name passed
// through edit (a layout excelize does not write itself).
func editPart(t *testing.T, raw []byte, name string, edit func([]byte) []byte) []byte {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	zw := zip.NewWriter(&b)
	for _, f := range zr.File {
		rc, err := f.Open()
		if err != nil {
			t.Fatal(err)
		}
		x, err := io.ReadAll(rc)
		rc.Close()
		if err != nil {
			t.Fatal(err)
		}
		if f.Name == name {
			x = edit(x)
		}
		w, err := zw.Create(f.Name)
		if err != nil {
			t.Fatal(err)
		}
		w.Write(x)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// sheetLayout is what the reader asks of excelize outside the cells: the
// sheet's merged ranges and its columns 1 to 20 hidden from view.
func sheetLayout(t *testing.T, f *excelize.File, sheet string) (merged []excelize.MergeCell, hidden []int) {
	t.Helper()
	merged, err := f.GetMergeCells(sheet, true)
	if err != nil {
		t.Fatal(err)
	}
	for c := range hiddenColumns(f, sheet, 20) {
		hidden = append(hidden, c)
	}
	slices.Sort(hidden)
	return merged, hidden
}

// excelize, given the worksheet without its rows (withoutRows), finds the
// same merged ranges (overlapping ones joined, a lone cell, absolute
// references) and hidden columns (a <cols> element of ranges min..max, a
// later range overriding an earlier one, hidden in an outline) as from
// the whole worksheet, whether it holds the part in memory or, past its
// size limit, in a temporary file; the part it parses is the short one.
func TestWorkbookLayoutWithoutRows(t *testing.T) {
	rows := [][]any{{"y", "a", "b", "c", "d", "e"}}
	for i := range 300 {
		rows = append(rows, []any{i%3 + 1, float64(i) / 7, "t" + fmt.Sprint(i%5), i, true, "x"})
	}
	plain := sheetsBook(t, bookSheet{name: "data", at: "B2", rows: rows, hiddenCols: "C:E"})
	// Merged ranges and a column range split by widths and hiding.
	f := excelize.NewFile()
	f.SetSheetName("Sheet1", "data")
	for i, r := range rows {
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		f.SetSheetRow("data", cell, &r)
	}
	f.SetColWidth("data", "A", "H", 14)
	f.SetColVisible("data", "D", false)
	f.SetColVisible("data", "F:G", false)
	f.SetColOutlineLevel("data", "B", 2)
	f.MergeCell("data", "B3", "C4")
	f.MergeCell("data", "A10", "A12")
	f.MergeCell("data", "E20", "F20")
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	f.Close()
	merges := b.Bytes()
	// Overlapping ranges, a lone cell, absolute references, and a later
	// <col> that shows again a column an earlier one hid: written by hand.
	edited := editPart(t, merges, "xl/worksheets/sheet1.xml", func(x []byte) []byte {
		x = bytes.Replace(x, []byte("</mergeCells>"), []byte(`<mergeCell ref="C4:D6"/><mergeCell ref="H30"/><mergeCell ref="$J$40:$K$41"/></mergeCells>`), 1)
		return bytes.Replace(x, []byte("</cols>"), []byte(`<col min="7" max="7" width="3"/><col min="9" max="11" hidden="true"/></cols>`), 1)
	})
	for _, c := range []struct {
		name string
		raw  []byte
	}{{"hidden columns", plain}, {"merged ranges", merges}, {"written by hand", edited}} {
		for _, limit := range []int64{0, 1 << 10} {
			want, err := excelize.OpenReader(bytes.NewReader(c.raw))
			if err != nil {
				t.Fatal(err)
			}
			wantMerged, wantHidden := sheetLayout(t, want, "data")
			want.Close()
			got, err := excelize.OpenReader(bytes.NewReader(c.raw), excelize.Options{UnzipXMLSizeLimit: limit})
			if err != nil {
				t.Fatal(err)
			}
			if _, err := got.GetRows("data"); err != nil {
				t.Fatal(err)
			}
			files, x := workbookParts(c.raw, "data")
			part := sheetPart(files, "data")
			withoutRows(got, part.Name, x)
			if v, ok := got.Pkg.Load(part.Name); !ok || len(v.([]byte)) >= len(x)/4 || bytes.Contains(v.([]byte), []byte("<c ")) {
				t.Errorf("%s (limit %d): the part excelize parses is not the worksheet without its rows", c.name, limit)
			}
			gotMerged, gotHidden := sheetLayout(t, got, "data")
			got.Close()
			if !reflect.DeepEqual(gotMerged, wantMerged) || !reflect.DeepEqual(gotHidden, wantHidden) {
				t.Errorf("%s (limit %d): merged %v, hidden %v; from the whole worksheet %v, %v", c.name, limit, gotMerged, gotHidden, wantMerged, wantHidden)
			}
			if c.name != "hidden columns" && (len(wantMerged) == 0 || len(wantHidden) == 0) {
				t.Errorf("%s: nothing to compare: %v %v", c.name, wantMerged, wantHidden)
			}
			t.Logf("%s: merged %v, hidden %v", c.name, wantMerged, wantHidden)
		}
	}
	// A comment after the rows holding a closing tag: the rows end at the
	// first one, and the merged ranges between are kept.
	x := []byte(`<worksheet><sheetData><row r="1"/></sheetData><mergeCells count="1"><mergeCell ref="A1:B1"/></mergeCells><!-- </sheetData> --></worksheet>`)
	f = excelize.NewFile()
	withoutRows(f, "xl/worksheets/sheet9.xml", x)
	if v, ok := f.Pkg.Load("xl/worksheets/sheet9.xml"); !ok || string(v.([]byte)) != `<worksheet><sheetData></sheetData><mergeCells count="1"><mergeCell ref="A1:B1"/></mergeCells><!-- </sheetData> --></worksheet>` {
		t.Errorf("a closing tag in a comment after the rows: %s", v)
	}
	f.Close()
	// A worksheet whose rows cannot be told apart for sure is left whole.
	for _, x := range []string{
		`<worksheet><!-- <sheetData> --><sheetData><row r="1"/></sheetData></worksheet>`,
		`<worksheet><sheetData/></worksheet>`,
		`<worksheet><sheetDataX></sheetDataX></worksheet>`,
		`<worksheet><sheetData><row r="1"/><!-- </sheetData> --></sheetData></worksheet>`,
	} {
		f := excelize.NewFile()
		withoutRows(f, "xl/worksheets/sheet9.xml", []byte(x))
		if _, ok := f.Pkg.Load("xl/worksheets/sheet9.xml"); ok {
			t.Errorf("%s: changed", x)
		}
		f.Close()
	}
}
