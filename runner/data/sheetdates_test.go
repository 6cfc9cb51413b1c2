package data

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/parquet-go/parquet-go"
	"github.com/xuri/excelize/v2"
)

// What a number format shows: dates, times, both, durations, and the
// number formats (scientific, General, currencies, quoted words) that
// show numbers. The format codes are the spreadsheet's usual ones (from
// memory).
func TestFormatKind(t *testing.T) {
	for code, want := range map[string]timeKind{
		"yyyy-mm-dd":                  showsDate,
		"dd/mm/yyyy;@":                showsDate,
		"[$-409]d-mmm-yy;@":           showsDate,
		"mmm yyyy":                    showsDate,
		"mmmm":                        showsDate,
		"m/d/yyyy h:mm":               showsDateTime,
		"yyyy-mm-dd hh:mm:ss":         showsDateTime,
		"h:mm AM/PM":                  showsTime,
		"mm:ss":                       showsTime,
		"hh:mm:ss.000":                showsTime,
		"[h]:mm:ss":                   showsDuration,
		"[mm]:ss":                     showsDuration,
		"General":                     showsNumber,
		"0.00E+00":                    showsNumber,
		"0.00":                        showsNumber,
		"#,##0.00 [$€-1];[Red]-#,##0": showsNumber,
		`0.0 "days"`:                  showsNumber,
		`0 \d`:                        showsNumber,
		"[>=100]0;0.0":                showsNumber,
		"0%":                          showsNumber,
		`_-* #,##0_-;\-* #,##0_-`:     showsNumber,
	} {
		if got := formatKind(code); got != want {
			t.Errorf("formatKind(%q) = %d, want %d", code, got, want)
		}
	}
}

// The texts of spreadsheet day numbers. Serials from 61 on are days since
// 1899-12-30, as R's as.Date(45292, origin = "1899-12-30") gives
// 2024-01-01 (and 61 gives 1900-03-01, 36526 2000-01-01); below 60 the
// 1900 date system counts a 29 February 1900 that the calendar has not, so
// serial 1 is 1900-01-01 and 59 is 1900-02-28 (from memory); the 1904
// system counts from 1904-01-01 (R: as.Date(1000, origin = "1904-01-01")
// is 1906-09-27); R's format(as.POSIXct(44927.75 * 86400, origin =
// "1899-12-30", tz = "UTC")) is 2023-01-01 18:00:00.
func TestTimeText(t *testing.T) {
	for _, c := range []struct {
		cell     string
		k        timeKind
		date1904 bool
		want     string
	}{
		{"45292", showsDate, false, "2024-01-01"},
		{"61", showsDate, false, "1900-03-01"},
		{"36526", showsDate, false, "2000-01-01"},
		{"1", showsDate, false, "1900-01-01"},
		{"59", showsDate, false, "1900-02-28"},
		{"1000", showsDate, true, "1906-09-27"},
		{"44927.75", showsDate, false, "2023-01-01T18:00:00"},
		{"44927.75", showsDateTime, false, "2023-01-01T18:00:00"},
		{"44927", showsDateTime, false, "2023-01-01T00:00:00"},
		{"0.5", showsTime, false, "12:00:00"},
		{"0.3541666666666667", showsTime, false, "08:30:00"},
		{"0.99999999999", showsTime, false, "00:00:00"},
		{"45292.5", showsTime, false, "2024-01-01T12:00:00"},
		{"1.5", showsDuration, false, "36:00:00"},
		{"0.0000115740740741", showsTime, false, "00:00:01"},
		{"-3", showsDate, false, "-3"},
		{"abc", showsDate, false, "abc"},
		{"1e9", showsDate, false, "1e9"},
	} {
		if got := timeText(c.cell, c.k, c.date1904); got != c.want {
			t.Errorf("timeText(%s, %d, %v) = %q, want %q", c.cell, c.k, c.date1904, got, c.want)
		}
	}
}

// dateBook is a workbook whose sheet "s" holds y, a, day (dates, as a
// spreadsheet stores them: day numbers in a date format), at (date and
// time) and yes (booleans).
func dateBook(t testing.TB, n int) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	f.SetSheetName("Sheet1", "s")
	f.SetSheetRow("s", "A1", &[]any{"y", "a", "day", "at", "yes"})
	for i := 0; i < n; i++ {
		cell, _ := excelize.CoordinatesToCellName(1, i+2)
		day := time.Date(2024, 1, 1+i%3, 0, 0, 0, 0, time.UTC)
		f.SetSheetRow("s", cell, &[]any{1 + i%2, float64(i) / 4, day, day.Add(8*time.Hour + 30*time.Minute), i%3 == 0})
	}
	style, err := f.NewStyle(&excelize.Style{NumFmt: 14})
	if err != nil {
		t.Fatal(err)
	}
	f.SetCellStyle("s", "C2", "C99", style)
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// A workbook's dates are read as the dates they show, not as day numbers:
// used as a number they are refused as a CSV file's and a Parquet date
// column's are, with the same message; declared categorical, the dates are
// the levels, as in those formats.
func TestWorkbookDatesAsDates(t *testing.T) {
	raw := dateBook(t, 6)
	opt := Options{Outcome: "y", Predictors: []string{"a", "day"}, Dialect: Dialect{Sheet: "s"}}
	_, err := readBytes(raw, "d.xlsx", opt)
	want := `column "day": value "2024-01-01" is not a number; it is a date: a predictor must be a number`
	if err == nil || !strings.Contains(err.Error(), "d.xlsx:2: "+want) {
		t.Errorf("a date used as a number: %v", err)
	}
	csvText := "y,a,day\n1,0,2024-01-01\n2,0.25,2024-01-02\n"
	if _, err := readBytes([]byte(csvText), "d.csv", opt); err == nil || !strings.Contains(err.Error(), "d.csv:2: "+want) {
		t.Errorf("the same as CSV: %v", err)
	}
	var pb bytes.Buffer
	schema := parquet.NewSchema("rows", parquet.Group{"y": parquet.Int(64), "a": parquet.Leaf(parquet.DoubleType), "day": parquet.Date()})
	w := parquet.NewWriter(&pb, schema)
	for i, day := range []int32{19723, 19724} { // days since 1970-01-01: 2024-01-01 and 2024-01-02
		vals := map[string]parquet.Value{"y": parquet.Int64Value(int64(1 + i)), "a": parquet.DoubleValue(float64(i) / 4), "day": parquet.Int32Value(day)}
		var row parquet.Row
		for ci, path := range schema.Columns() {
			row = append(row, vals[path[0]].Level(0, 0, ci))
		}
		if _, err := w.WriteRows([]parquet.Row{row}); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if _, err := readBytes(pb.Bytes(), "d.parquet", opt); err == nil || !strings.Contains(err.Error(), "d.parquet:2: "+want) {
		t.Errorf("the same as Parquet: %v", err)
	}
	opt.Predictors = []string{"a", "at"}
	if _, err := readBytes(raw, "d.xlsx", opt); err == nil || !strings.Contains(err.Error(), `d.xlsx:2: column "at": value "2024-01-01T08:30:00" is not a number; it is a date and time`) {
		t.Errorf("a date and time used as a number: %v", err)
	}
	opt.Predictors = []string{"a", "day"}
	opt.PredictorLevels = map[string][]string{"day": {"2024-01-01", "2024-01-02", "2024-01-03"}}
	d, err := readBytes(raw, "d.xlsx", opt)
	if err != nil || d.N != 6 || d.X[1] != 0 || d.X[3] != 1 || d.X[5] != 2 || d.X[7] != 0 {
		t.Errorf("dates as levels: %v %+v", err, d)
	}
	// Booleans are 1 and 0, as a Parquet boolean column's.
	d, err = readBytes(raw, "d.xlsx", Options{Outcome: "y", Predictors: []string{"yes"}, Dialect: Dialect{Sheet: "s"}})
	if err != nil || d.N != 6 || d.X[0] != 1 || d.X[1] != 0 || d.X[3] != 1 {
		t.Errorf("booleans: %v %+v", err, d)
	}
}

// A workbook in the 1904 date system counts its days from 1904-01-01.
func TestWorkbookDates1904(t *testing.T) {
	raw := dateBook(t, 2)
	// The same day numbers, read in the 1904 system, are 1462 days later.
	raw1904 := withBookXML(t, raw, "<workbookPr", `<workbookPr date1904="1"`)
	opt := Options{Outcome: "y", Predictors: []string{"day"}, PredictorLevels: map[string][]string{"day": {"2028-01-02", "2028-01-03"}}, Dialect: Dialect{Sheet: "s"}}
	if d, err := readBytes(raw1904, "d.xlsx", opt); err != nil || d.N != 2 || d.X[0] != 0 || d.X[1] != 1 {
		t.Errorf("1904 dates: %v %+v", err, d)
	}
}

// withBookXML is the workbook raw with old in its workbook.xml replaced by
// new.
func withBookXML(t *testing.T, raw []byte, old, new string) []byte {
	t.Helper()
	return withPartXML(t, raw, "xl/workbook.xml", old, new)
}

// Cells covered by merged cells (but the one holding their value) are
// refused in a used column, with what they are, rather than read as
// missing values; in a column no plan uses they are no matter, and a row
// empty but for them stays an empty row.
func TestWorkbookMergedCells(t *testing.T) {
	b := mergedBook(t)
	opt := Options{Outcome: "y", Predictors: []string{"a", "g"}, PredictorLevels: map[string][]string{"g": {"ctl", "trt"}}, Dialect: Dialect{Sheet: "s"}}
	want := `m.xlsx:3: column "g": cell C3 is one of the merged cells C2:C4, whose one value, held by C2, the sheet shows across them all: unmerge them and write each row's value in its own cell`
	// As a level, as a cluster and as a subset's column alike, also when
	// the plan declares the text read there as a level (it was then a
	// level, or a cluster, of its own, and a subset left the rows out).
	for name, o := range map[string]Options{
		"level":          opt,
		"declared level": {Outcome: "y", Predictors: []string{"a", "g"}, PredictorLevels: map[string][]string{"g": {"ctl", "trt", "(merged cells C2:C4)"}}, Dialect: Dialect{Sheet: "s"}},
		"cluster":        {Outcome: "y", Predictors: []string{"a"}, Cluster: "g", Dialect: Dialect{Sheet: "s"}},
	} {
		if _, err := readBytes(b, "m.xlsx", o); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("merged cells in a used column (%s): %v\nwant %s", name, err, want)
		}
	}
	d, err := readBytes(b, "m.xlsx", Options{Outcome: "y", Predictors: []string{"a"}, Dialect: Dialect{Sheet: "s"}})
	if err != nil || d.N != 5 || d.RowsRead != 5 {
		t.Errorf("merged cells in a column not used: %v %+v", err, d)
	}
}

// mergedBook is a workbook whose sheet "s" holds y, a, g and note, with
// merged cells C2:C4 (g) and D2:D8 (note, over two empty rows).
func mergedBook(t testing.TB) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	f.SetSheetName("Sheet1", "s")
	rows := [][]any{{"y", "a", "g", "note"}, {1, 0.5, "ctl", "x"}, {2, 1.5, nil, nil}, {1, 2.5, nil, nil}, {2, 0.0, "trt", "y"}, {1, 1.0, "trt", "z"}, {}, {}}
	for i, r := range rows {
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		f.SetSheetRow("s", cell, &r)
	}
	f.MergeCell("s", "C2", "C4")
	f.MergeCell("s", "D2", "D8")
	var b bytes.Buffer
	if err := f.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// A workbook whose ZIP container claims for a part more bytes than its
// compressed bytes can hold is refused before any room is made for them
// (excelize would set aside the claimed size: gigabytes from a file of a
// few kilobytes); the same workbook with honest claims reads.
func TestWorkbookPartClaims(t *testing.T) {
	raw := formulaBook(t)
	keep := func(_ string, body []byte) []byte { return body }
	lying := rezip(t, raw, keep, func(name string) uint64 {
		if name == "xl/worksheets/sheet1.xml" {
			return 8 << 30
		}
		return 0
	})
	_, err := readBytes(lying, "bomb.xlsx", Options{Outcome: "y", Dialect: Dialect{Sheet: "s", HeaderRow: 2}})
	want := `bomb.xlsx: is not a readable .xlsx workbook (its part "xl/worksheets/sheet1.xml" claims 8589934592 bytes, more than its `
	if err == nil || !strings.HasPrefix(err.Error(), want) || !strings.HasSuffix(err.Error(), " compressed bytes can hold): open and save it again as .xlsx, or export the sheet as CSV") {
		t.Errorf("lying claim: %v", err)
	}
	honest := rezip(t, raw, keep, nil)
	if d, err := readBytes(honest, "ok.xlsx", Options{Outcome: "y", Predictors: []string{"a"}, Dialect: Dialect{Sheet: "s", HeaderRow: 2}}); err != nil || d.N != 5 {
		t.Errorf("honest claims: %v", err)
	}
}

// A workbook whose ZIP container claims for a part more compressed bytes
// than the whole file holds (its expansion claim then looks possible) is
// refused as well: found by FuzzReadWorkbook (the corpus input
// 437f4685a8d05998, 6 kB claiming 3.7 GB, on which the reader took 20 s
// and 3.5 GB before this check).
func TestWorkbookPartClaimsPastTheFile(t *testing.T) {
	raw := append([]byte(nil), formulaBook(t)...)
	name := []byte("xl/worksheets/sheet1.xml")
	patched := false
	for i := 0; i+46 < len(raw); i++ {
		// A central directory header: signature, then the name at 46.
		if binary.LittleEndian.Uint32(raw[i:]) != 0x02014b50 || !bytes.HasPrefix(raw[i+46:], name) {
			continue
		}
		binary.LittleEndian.PutUint32(raw[i+20:], 1<<30) // compressed size
		binary.LittleEndian.PutUint32(raw[i+24:], 3<<30) // uncompressed size
		patched = true
	}
	if !patched {
		t.Fatal("no central directory header for the sheet")
	}
	_, err := readBytes(raw, "bomb.xlsx", Options{Outcome: "y", Dialect: Dialect{Sheet: "s", HeaderRow: 2}})
	want := fmt.Sprintf(`bomb.xlsx: is not a readable .xlsx workbook (its part "xl/worksheets/sheet1.xml" claims 1073741824 compressed bytes, more than the file's %d bytes hold): open and save it again as .xlsx, or export the sheet as CSV`, len(raw))
	if err == nil || err.Error() != want {
		t.Errorf("claim past the file:\n got %v\nwant %s", err, want)
	}
}
