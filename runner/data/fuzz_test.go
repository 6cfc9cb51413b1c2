package data

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/xuri/excelize/v2"
)

func FuzzRead(f *testing.F) {
	for _, s := range []string{
		"y,a,b\n1,2,3\n2,3,4\n",
		"\uFEFFy,a,b\r\n1,2,3\r\n3,NA,1\r\n2,1e999,0\r\n",
		"y,a,b\n1,\"2\n\",3\n",
		"y,a\n1,2\n",
		"",
		"y,a,b,a\n",
		"b,a,y\n,,\n1,1,1\n1,1,2\n",
	} {
		f.Add([]byte(s))
	}
	opt := Options{Outcome: "y", Predictors: []string{"a", "b"}}
	f.Fuzz(func(t *testing.T, in []byte) {
		d, err := Read(bytes.NewReader(in), "fuzz.csv", opt)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %T is not *Error: %v", err, err)
			}
			if strings.Contains(err.Error(), "\n") {
				t.Fatalf("message spans lines: %q", err.Error())
			}
			return
		}
		if d.K != 2 || len(d.Y) != d.N || len(d.X) != d.N*d.K || len(d.Lines) != d.N {
			t.Fatalf("bad sizes: N=%d K=%d len(Y)=%d len(X)=%d", d.N, d.K, len(d.Y), len(d.X))
		}
		if d.N+d.RowsDropped != d.RowsRead {
			t.Fatalf("rows: kept %d + dropped %d != read %d", d.N, d.RowsDropped, d.RowsRead)
		}
		for _, x := range d.X {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				t.Fatalf("non-finite X value %v", x)
			}
		}
		for _, y := range d.Y {
			if y < 0 || y >= len(d.Categories) {
				t.Fatalf("Y value %d out of range 0..%d", y, len(d.Categories)-1)
			}
		}
	})
}

// FuzzReadWorkbook feeds arbitrary bytes (seeded with a real workbook and
// broken copies of it) to the .xlsx path: every failure is an *Error.
func FuzzReadWorkbook(f *testing.F) {
	book := excelize.NewFile()
	for i, row := range [][]any{{"y", "a", "b"}, {1, 0.5, 2}, {2, 1.5, 0}, {3, -1, 1}} {
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		book.SetSheetRow("Sheet1", cell, &row)
	}
	var b bytes.Buffer
	book.Write(&b)
	good := b.Bytes()
	f.Add(good)
	f.Add(good[:len(good)/2])
	f.Add([]byte("PK\x03\x04"))
	f.Add([]byte("y,a,b\n1,2,3\n"))
	f.Add(formulaBook(f)) // formulas without saved values (formulas.go)
	f.Add(dateBook(f, 4)) // dates and times in date formats (sheetdates.go)
	f.Add(mergedBook(f))  // merged cells (markMerged)
	// A hidden sheet before the data, hidden rows, a table at C2 with a
	// note beside it (chooseSheet, scanHiddenRows, emptyLead).
	f.Add(sheetsBook(f, bookSheet{name: "old", hidden: true, rows: sheetDraft}, bookSheet{name: "data", rows: sheetData, hiddenRows: []int{3}}))
	f.Add(sheetsBook(f, bookSheet{name: "s", at: "C2", rows: [][]any{{"y", "a", "b"}, {1, 0.5, 1}, {2, 1.0, 0, nil, "note"}}}))
	opt := Options{Outcome: "y", Predictors: []string{"a", "b"}}
	f.Fuzz(func(t *testing.T, in []byte) {
		if len(in) > 1<<16 {
			return
		}
		_, err := Read(bytes.NewReader(in), "fuzz.xlsx", opt)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %T is not *Error: %v", err, err)
			}
		}
	})
}

// FuzzScanFormulas feeds arbitrary bytes to the scan of a worksheet's XML
// for formulas without saved values: it never panics, and a cell it
// names has a sheet row and column.
func FuzzScanFormulas(f *testing.F) {
	f.Add([]byte(`<worksheet><sheetData><row r="2"><c r="B2"><f>A2*2</f></c><c r="C2"><f>1</f><v>1</v></c></row></sheetData></worksheet>`))
	f.Add([]byte(`<x:worksheet><x:c r="A1" t="str"><x:f t="shared" si="0"/><x:v></x:v></x:c><x:c r="A2"><x:f>`))
	f.Add([]byte(`<worksheet><c r="A1"><rPr><family val="2"/></rPr><f/></c>`))
	// As programs that compute no formula save one: an empty <v> in a cell
	// that is not of type str.
	f.Add([]byte(`<worksheet><sheetData><row r="2"><c r="E2"><f>1000*3.5</f><v></v></c><c r="F2" t="n"><f>1</f><v/></c><c r="G2" t="str"><f>""</f><v xml:space="preserve"></v></c></row></sheetData></worksheet>`))
	f.Fuzz(func(t *testing.T, x []byte) {
		for row, cols := range scanFormulas(x) {
			for col, text := range cols {
				if row < 1 || col < 1 || !strings.HasPrefix(text, "=") {
					t.Fatalf("cell row %d column %d: %q", row, col, text)
				}
			}
		}
	})
}

// FuzzSheetTimes feeds arbitrary bytes to the scan of a worksheet's XML
// for cells in date formats, arbitrary format codes to formatKind and
// arbitrary cells to timeText: none panics, a cell found has a sheet row
// and column, and a number shown as a date or time is never left a number.
func FuzzSheetTimes(f *testing.F) {
	f.Add([]byte(`<worksheet><sheetData><row r="2"><c r="B2" s="1" t="n"><v>45292</v></c><c r="C2" s="2"><v>0.5</v></c></row></sheetData></worksheet>`), "yyyy-mm-dd", "45292.25", byte(1))
	f.Add([]byte(`<x:worksheet><x:c r="A1" s="3" t="s"><x:v>1</x:v></x:c><x:c s="1" r="A2">`), "[h]:mm:ss", "1.5", byte(4))
	f.Add([]byte(`<worksheet><c r="A1" s="`), `0.0 "days";[Red]\-0`, "-1", byte(3))
	styles := map[int]timeKind{1: showsDate, 2: showsTime, 3: showsDateTime, 4: showsDuration}
	f.Fuzz(func(t *testing.T, x []byte, code, cell string, k byte) {
		scanTimeCells(x, styles, func(col, row int, k timeKind) {
			if row < 1 || col < 1 || k == showsNumber {
				t.Fatalf("cell row %d column %d kind %d", row, col, k)
			}
		})
		if got := formatKind(code); got > showsDuration {
			t.Fatalf("formatKind(%q) = %d", code, got)
		}
		kind := timeKind(k%4 + 1)
		text := timeText(cell, kind, k&8 != 0)
		if v, err := strconv.ParseFloat(cell, 64); err == nil && v >= 0 && v <= 2958465 {
			if _, err := strconv.ParseFloat(text, 64); err == nil || !strings.Contains(text, ":") && !strings.Contains(text, "-") {
				t.Fatalf("timeText(%q, %d) = %q, still a number", cell, kind, text)
			}
		} else if text != cell {
			t.Fatalf("timeText(%q) = %q, want the cell as it is", cell, text)
		}
	})
}

// FuzzReadParquet feeds arbitrary bytes to the Parquet path: every
// failure is an *Error, never a panic.
func FuzzReadParquet(f *testing.F) {
	var b bytes.Buffer
	w := parquet.NewGenericWriter[struct {
		Y int64   `parquet:"y"`
		A float64 `parquet:"a"`
	}](&b)
	w.Write([]struct {
		Y int64   `parquet:"y"`
		A float64 `parquet:"a"`
	}{{1, 0.5}, {2, -1}, {3, 2}})
	w.Close()
	good := b.Bytes()
	f.Add(good)
	f.Add(good[:len(good)/2])
	f.Add([]byte("PAR1PAR1"))
	// a decimal, an unsigned integer and a date (their logical types'
	// texts, logical.go)
	b.Reset()
	dw := parquet.NewGenericWriter[struct {
		Y int64  `parquet:"y"`
		A int32  `parquet:"a,decimal(2:9)"`
		U uint64 `parquet:"u"`
		D int32  `parquet:"d,date"`
	}](&b)
	dw.Write([]struct {
		Y int64  `parquet:"y"`
		A int32  `parquet:"a,decimal(2:9)"`
		U uint64 `parquet:"u"`
		D int32  `parquet:"d,date"`
	}{{1, 50, 1 << 63, 3}, {2, -100, 2, -4}, {3, 200, 7, 19000}})
	dw.Close()
	f.Add(bytes.Clone(b.Bytes()))
	opt := Options{Outcome: "y", Predictors: []string{"a"}}
	f.Fuzz(func(t *testing.T, in []byte) {
		if len(in) > 1<<16 {
			return
		}
		_, err := Read(bytes.NewReader(in), "fuzz.parquet", opt)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %T is not *Error: %v", err, err)
			}
		}
	})
}
