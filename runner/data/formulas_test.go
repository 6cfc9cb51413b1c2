package data

import (
	"archive/zip"
	"bytes"
	"compress/flate"
	"hash/crc32"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"ordplan/internal/zipparts"
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
	if err == nil || !strings.Contains(err.Error(), `f.xlsx:5: column "c": value "=A5*2&\"<\"" is not a number; the cell D5 holds a formula without its value`) {
		t.Errorf("formula without a value: %v", err)
	}
	opt.PredictorLevels = map[string][]string{"c": {"1"}}
	_, err = readBytes(raw, "f.xlsx", opt)
	if err == nil || !strings.Contains(err.Error(), `"1"; the cell D5 holds a formula without its value`) {
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

// withSheetXML is the workbook raw with every old in its first sheet's XML
// replaced by new.
func withSheetXML(t *testing.T, raw []byte, old, new string) []byte {
	t.Helper()
	return withPartXML(t, raw, "xl/worksheets/sheet1.xml", old, new)
}

// withPartXML is the workbook raw with every old in its ZIP entry part
// replaced by new.
func withPartXML(t *testing.T, raw []byte, part, old, new string) []byte {
	t.Helper()
	return rezip(t, raw, func(name string, body []byte) []byte {
		if name == part {
			if !bytes.Contains(body, []byte(old)) {
				t.Fatalf("%s has no %s", part, old)
			}
			body = bytes.ReplaceAll(body, []byte(old), []byte(new))
		}
		return body
	}, nil)
}

// rezip is the ZIP container raw with each entry's body passed through
// edit; claim, when not nil, gives the uncompressed size an entry's
// header states (0: its own), written without checking.
func rezip(t testing.TB, raw []byte, edit func(name string, body []byte) []byte, claim func(name string) uint64) []byte {
	t.Helper()
	out, err := zipparts.Rewrite(raw, func(name string, body []byte) ([]byte, *zip.FileHeader) {
		body = edit(name, body)
		if claim == nil || claim(name) == 0 {
			return body, nil
		}
		var z bytes.Buffer
		fw, _ := flate.NewWriter(&z, flate.BestCompression)
		fw.Write(body)
		fw.Close()
		return z.Bytes(), &zip.FileHeader{Name: name, Method: zip.Deflate, CRC32: crc32.ChecksumIEEE(body), CompressedSize64: uint64(z.Len()), UncompressedSize64: claim(name)}
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// A formula whose saved result is the empty text (=IF(C5="","",C5), a
// usual way to leave a cell missing) is saved, as far as we remember the
// format (from memory), as a t="str" cell with an empty <v> element: its
// value is saved, and it is the empty text, so the cell is missing, not a
// formula without its value (re-saving the workbook would not change it).
// A formula without a <v> element, or with an empty one in a cell of
// another type (a number's, by default: no t, t="n"), as programs that do
// not compute formulas save them, has no saved value.
func TestWorkbookFormulaEmptyResult(t *testing.T) {
	for _, v := range []string{"<v></v>", "<v/>", `<v xml:space="preserve"></v>`} {
		x := []byte(`<worksheet><sheetData><row r="2"><c r="D2" t="str"><f>IF(C2="","",C2)</f>` + v + `</c><c r="E2" t="str"><f>C2</f></c></row></sheetData></worksheet>`)
		if got := scanFormulas(x); len(got) != 1 || len(got[2]) != 1 || got[2][5] != "=C2" {
			t.Errorf("%s: formulas without a saved value %v, want only E2 (=C2)", v, got)
		}
		for _, typ := range []string{"", ` t="n"`, ` t="b"`} {
			x := []byte(`<worksheet><sheetData><row r="2"><c r="D2"` + typ + `><f>1000*3.5</f>` + v + `</c><c r="E2"><f>2+1</f><v>3</v></c></row></sheetData></worksheet>`)
			if got := scanFormulas(x); len(got) != 1 || len(got[2]) != 1 || got[2][4] != "=1000*3.5" {
				t.Errorf("%s%s: formulas without a saved value %v, want only D2 (=1000*3.5)", v, typ, got)
			}
		}
	}
	old := `<c r="D5" t="str"><f>A5*2&amp;&#34;&lt;&#34;</f></c>`
	for _, v := range []string{"<v></v>", "<v/>"} {
		raw := withSheetXML(t, formulaBook(t), old, `<c r="D5" t="str"><f>IF(C5=&#34;&#34;,&#34;&#34;,C5)</f>`+v+`</c>`)
		d, err := readBytes(raw, "f.xlsx", Options{Outcome: "y", Predictors: []string{"c"}, Dialect: Dialect{Sheet: "s", HeaderRow: 2}})
		if err != nil || d.N != 4 || len(d.Dropped) != 1 || d.Dropped[0] != (DropCount{Column: "c", Rows: 1}) {
			t.Errorf("%s: %v %+v, want row 5 dropped as missing in c", v, err, d)
		}
		// As a program that computes no formula saves one: refused.
		raw = withSheetXML(t, formulaBook(t), old, `<c r="D5"><f>1000*3.5</f>`+v+`</c>`)
		_, err = readBytes(raw, "f.xlsx", Options{Outcome: "y", Predictors: []string{"c"}, Dialect: Dialect{Sheet: "s", HeaderRow: 2}})
		if err == nil || !strings.Contains(err.Error(), `f.xlsx:5: column "c": value "=1000*3.5" is not a number; the cell D5 holds a formula without its value`) {
			t.Errorf("%s without t=\"str\": %v, want a formula without its value", v, err)
		}
	}
}
