package data

import (
	"bytes"
	"math"
	"math/big"
	"strconv"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/deprecated"
	"github.com/parquet-go/parquet-go/format"
)

// logicalRows are the rows of typedParquet: each column's stored value
// and the number or text it means.
var logicalRows = []struct {
	d32        int32  // decimal(9, 2) as INT32
	d64        int64  // decimal(18, 3) as INT64
	dfix       string // decimal(20, 2) as a 9-byte FIXED_LEN_BYTE_ARRAY, its unscaled integer in decimal
	u32        uint32
	u64        uint64
	day        int32 // days since 1970-01-01
	ts         int64 // milliseconds since 1970-01-01, UTC
	want       [5]float64
	dayT, tsT  string
	y, ylabels string
}{
	{12345, -1, "-5", 7, 1 << 63, 0, 1, [5]float64{123.45, -0.001, -0.05, 7, 9223372036854775808}, "1970-01-01", "1970-01-01T00:00:00.001Z", "a", ""},
	{-7, 2500, "123456789012345678", 4294967295, 18446744073709551615, 19000, -1, [5]float64{-0.07, 2.5, 1234567890123456.78, 4294967295, 18446744073709551615}, "2022-01-08", "1969-12-31T23:59:59.999Z", "b", ""},
	{0, 1000, "1", 0, 3, -1, 1700000000000, [5]float64{0, 1, 0.01, 0, 3}, "1969-12-31", "2023-11-14T22:13:20Z", "a", ""},
}

// typedParquet writes logicalRows as a Parquet file whose columns carry
// logical types: decimals stored three ways, unsigned integers, a date
// and a timestamp, and a legacy INT96 timestamp.
func typedParquet(t *testing.T) []byte {
	t.Helper()
	schema := parquet.NewSchema("rows", parquet.Group{
		"y":    parquet.String(),
		"d32":  parquet.Decimal(2, 9, parquet.Int32Type),
		"d64":  parquet.Decimal(3, 18, parquet.Int64Type),
		"dfix": parquet.Decimal(2, 20, parquet.FixedLenByteArrayType(9)),
		"u32":  parquet.Uint(32),
		"u64":  parquet.Uint(64),
		"day":  parquet.Date(),
		"ts":   parquet.Timestamp(parquet.Millisecond),
		"i96":  parquet.Leaf(parquet.Int96Type),
	})
	var buf bytes.Buffer
	w := parquet.NewWriter(&buf, schema)
	for _, r := range logicalRows {
		n, _ := new(big.Int).SetString(r.dfix, 10)
		if n.Sign() < 0 {
			n.Add(n, new(big.Int).Lsh(big.NewInt(1), 72))
		}
		fix := n.FillBytes(make([]byte, 9))
		// INT96: nanoseconds of the day, then the Julian day.
		sec := r.ts / 1000
		days := sec / 86400
		if sec%86400 < 0 {
			days--
		}
		nanos := uint64((r.ts - days*86400000) * 1e6)
		i96 := deprecated.Int96{uint32(nanos), uint32(nanos >> 32), uint32(days + 2440588)}
		vals := map[string]parquet.Value{
			"y": parquet.ByteArrayValue([]byte(r.y)), "d32": parquet.Int32Value(r.d32), "d64": parquet.Int64Value(r.d64),
			"dfix": parquet.FixedLenByteArrayValue(fix), "u32": parquet.Int32Value(int32(r.u32)), "u64": parquet.Int64Value(int64(r.u64)),
			"day": parquet.Int32Value(r.day), "ts": parquet.Int64Value(r.ts), "i96": parquet.Int96Value(i96),
		}
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
	return buf.Bytes()
}

// A Parquet column with a logical type is read as what it means: a
// decimal as its unscaled integer over 10^scale (not the integer), an
// unsigned integer unsigned; a date or timestamp as its text, refused as
// a number (with its value shown) and read as a level when declared
// categorical; the same rows read through the texts as CSV.
func TestParquetLogicalTypes(t *testing.T) {
	raw := typedParquet(t)
	preds := []string{"d32", "d64", "dfix", "u32", "u64"}
	var csv strings.Builder
	csv.WriteString("y," + strings.Join(preds, ",") + "\n")
	for _, r := range logicalRows {
		csv.WriteString(r.y)
		for _, x := range r.want {
			csv.WriteString("," + strconv.FormatFloat(x, 'g', -1, 64))
		}
		csv.WriteString("\n")
	}
	for _, mark := range []bool{false, true} {
		opt := Options{Outcome: "y", Categories: []string{"a", "b"}, Predictors: preds, Dialect: Dialect{DecimalComma: mark}}
		d, err := readBytes(raw, "t.parquet", opt)
		if err != nil {
			t.Fatal(err)
		}
		for i, r := range logicalRows {
			for k, want := range r.want {
				if got := d.X[i*d.K+k]; got != want {
					t.Errorf("row %d, column %s (decimal comma %v): %v, want %v", i+1, preds[k], mark, got, want)
				}
			}
		}
	}
	c, err := readBytes([]byte(csv.String()), "t.csv", Options{Outcome: "y", Categories: []string{"a", "b"}, Predictors: preds})
	if err != nil {
		t.Fatal(err)
	}
	d, _ := readBytes(raw, "t.parquet", Options{Outcome: "y", Categories: []string{"a", "b"}, Predictors: preds})
	for i := range c.X {
		if c.X[i] != d.X[i] {
			t.Errorf("value %d: Parquet %v, CSV %v", i, d.X[i], c.X[i])
		}
	}
	// Dates and timestamps: not numbers, but levels.
	for _, col := range []string{"day", "ts", "i96"} {
		_, err := readBytes(raw, "t.parquet", Options{Outcome: "y", Categories: []string{"a", "b"}, Predictors: []string{col}})
		want := logicalRows[0].dayT
		if col != "day" {
			want = logicalRows[0].tsT
		}
		if err == nil || !strings.Contains(err.Error(), `t.parquet:2: column "`+col+`": value "`+want+`" is not a number`) {
			t.Errorf("%s as a number: %v", col, err)
		}
		var levels []string
		for _, r := range logicalRows {
			if col == "day" {
				levels = append(levels, r.dayT)
			} else {
				levels = append(levels, r.tsT)
			}
		}
		d, err := readBytes(raw, "t.parquet", Options{Outcome: "y", Categories: []string{"a", "b"}, Predictors: []string{col},
			PredictorLevels: map[string][]string{col: levels}})
		if err != nil {
			t.Fatalf("%s as levels: %v", col, err)
		}
		for i := range logicalRows {
			if d.X[i] != float64(i) {
				t.Errorf("%s, row %d: level %v, want %d", col, i+1, d.X[i], i)
			}
		}
	}
}

// decimalText puts the point back exactly, whatever the scale and sign.
func TestDecimalText(t *testing.T) {
	for _, c := range []struct {
		n     int64
		scale int
		want  string
	}{
		{12345, 2, "123.45"}, {-5, 2, "-0.05"}, {5, 0, "5"}, {0, 3, "0.000"}, {-100, 1, "-10.0"}, {7, -2, "700"},
	} {
		if got := decimalText(big.NewInt(c.n), c.scale, '.'); got != c.want {
			t.Errorf("decimalText(%d, %d) = %s, want %s", c.n, c.scale, got, c.want)
		}
	}
}

// A date, a time of day or both in a column used as a number is refused
// saying what it is and how to write it as a number; other text keeps
// its own hints.
func TestDateUsedAsNumber(t *testing.T) {
	for cell, want := range map[string]string{
		"2022-01-08":           `value "2022-01-08" is not a number; it is a date: a predictor must be a number, so write it as one in a column of its own, such as the days or years since a start date, or declare the column categorical with its values as levels`,
		"1969-12-31T23:59:59Z": `value "1969-12-31T23:59:59Z" is not a number; it is a date and time: a predictor must be a number, so write it as one in a column of its own, such as the days or years since a start date, or declare the column categorical with its values as levels`,
		"13:45:00.5":           `value "13:45:00.5" is not a number; it is a time of day: a predictor must be a number, so write it as one in a column of its own, such as the hours since midnight, or declare the column categorical with its values as levels`,
		"1.2.3":                `value "1.2.3" is not a number`,
		"2022-13-08":           `value "2022-13-08" is not a number`,
	} {
		_, err := Read(strings.NewReader("y,a\n1,0.5\n2,"+cell+"\n"), "t.csv", Options{Outcome: "y", Predictors: []string{"a"}})
		if err == nil || err.Error() != `t.csv:3: column "a": `+want {
			t.Errorf("%s: %v\nwant %s", cell, err, want)
		}
	}
}

// halfType is a two-byte FIXED_LEN_BYTE_ARRAY carrying the FLOAT16
// logical type, as writers of half-precision columns store them (the
// library writes the type to the file but reads it back without it).
type halfType struct{ parquet.Type }

func (halfType) LogicalType() *format.LogicalType {
	return &format.LogicalType{Value: &format.Float16Type{}}
}

// halfParquet writes a Parquet file of an outcome y and a FLOAT16
// column h holding the bit patterns given (little-endian, as the format
// stores them).
func halfParquet(t *testing.T, bits []uint16) []byte {
	t.Helper()
	schema := parquet.NewSchema("rows", parquet.Group{
		"y": parquet.String(),
		"h": parquet.Leaf(halfType{parquet.FixedLenByteArrayType(2)}),
	})
	var buf bytes.Buffer
	w := parquet.NewWriter(&buf, schema)
	for i, b := range bits {
		vals := map[string]parquet.Value{
			"y": parquet.ByteArrayValue([]byte([]string{"a", "b"}[i%2])),
			"h": parquet.FixedLenByteArrayValue([]byte{byte(b), byte(b >> 8)}),
		}
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
	return buf.Bytes()
}

// A Parquet FLOAT16 column is read as the numbers it holds: it was read
// as its two bytes, text that no column takes as a number ("value
// \"\\x00<\" is not a number; the column holds text"). The values are
// those of the IEEE 754-2008 binary16 format for these bit patterns:
// 1, -2, the largest finite 65504, the smallest normal 2^-14, the
// smallest subnormal 2^-24, 1/3 rounded (0x3555 = 0.333251953125), and
// -0; a NaN is a missing value, as a NaN double is, and infinity is
// refused as a double's is.
func TestParquetFloat16(t *testing.T) {
	bits := []uint16{0x3c00, 0xc000, 0x7bff, 0x0400, 0x0001, 0x3555, 0x8000, 0x7e00}
	want := []float64{1, -2, 65504, 6.103515625e-05, 5.9604644775390625e-08, 0.333251953125, 0}
	for _, comma := range []bool{false, true} {
		d, err := readBytes(halfParquet(t, bits), "h.parquet", Options{Outcome: "y", Categories: []string{"a", "b"}, Predictors: []string{"h"}, Dialect: Dialect{DecimalComma: comma}})
		if err != nil {
			t.Fatalf("decimal comma %v: %v", comma, err)
		}
		if len(d.X) != len(want) || d.RowsDropped != 1 {
			t.Fatalf("decimal comma %v: %d values, %d rows dropped; want %d values, the NaN's row dropped", comma, len(d.X), d.RowsDropped, len(want))
		}
		for i, w := range want {
			if d.X[i] != w {
				t.Errorf("decimal comma %v, row %d (bits %#04x): %v, want %v", comma, i+1, bits[i], d.X[i], w)
			}
		}
		if !math.Signbit(d.X[6]) {
			t.Errorf("0x8000 read as %v, want -0", d.X[6])
		}
	}
	_, err := readBytes(halfParquet(t, []uint16{0x3c00, 0xfc00}), "h.parquet", Options{Outcome: "y", Categories: []string{"a", "b"}, Predictors: []string{"h"}})
	if err == nil || !strings.Contains(err.Error(), `h.parquet:3: column "h": value "-Inf" is infinite`) {
		t.Errorf("a FLOAT16 infinity: %v", err)
	}
}

// A Parquet null is read as an empty cell: missing under the default
// markers, refused as one under markers that leave the empty text out,
// the message saying that a null is such a cell.
func TestParquetNullUnderMarkers(t *testing.T) {
	type row struct {
		Y string   `parquet:"y"`
		A *float64 `parquet:"a,optional"`
	}
	one, two := 1.0, 2.0
	var buf bytes.Buffer
	if err := parquet.Write(&buf, []row{{"a", &one}, {"b", nil}, {"a", &two}, {"b", &one}}); err != nil {
		t.Fatal(err)
	}
	opt := Options{Outcome: "y", Categories: []string{"a", "b"}, Predictors: []string{"a"}}
	d, err := readBytes(buf.Bytes(), "n.parquet", opt)
	if err != nil || d.N != 3 {
		t.Fatalf("default markers: %v", err)
	}
	opt.MissingTokens = []string{"-99"}
	_, err = readBytes(buf.Bytes(), "n.parquet", opt)
	if want := `n.parquet:3: column "a": value "" is not a number; an empty cell (or a Parquet file's null) is not a missing value here`; err == nil || !strings.HasPrefix(err.Error(), want) {
		t.Errorf("markers without the empty text: %v", err)
	}
}
