package data

import (
	"bytes"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
)

// nestedParquet is a Parquet file whose flat columns y and x have nested
// columns beside them: a list, a struct and a map, as data pipelines
// write them. Two row groups of three rows.
func nestedParquet(t *testing.T) []byte {
	t.Helper()
	type meta struct {
		Source string `parquet:"source"`
		Wave   int32  `parquet:"wave"`
	}
	type row struct {
		Y    int64            `parquet:"y"`
		Tags []string         `parquet:"tags,list"`
		Meta meta             `parquet:"meta"`
		X    float64          `parquet:"x"`
		Kv   map[string]int32 `parquet:"kv"`
	}
	var b bytes.Buffer
	w := parquet.NewGenericWriter[row](&b, parquet.MaxRowsPerRowGroup(3))
	rows := []row{
		{Y: 1, Tags: []string{"a", "b"}, Meta: meta{"s", 1}, X: 0.5, Kv: map[string]int32{"k": 1}},
		{Y: 2, Meta: meta{"s", 2}, X: 1.5},
		{Y: 3, Tags: []string{"c"}, Meta: meta{"t", 1}, X: 2.25, Kv: map[string]int32{"k": 2, "l": 3}},
		{Y: 1, Tags: []string{"d", "e", "f"}, X: -1},
		{Y: 2, Tags: []string{}, X: 4},
		{Y: 3, Tags: []string{"g"}, X: 8},
	}
	if _, err := w.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// A Parquet file with nested columns is read when the plan reads only its
// flat columns, in units and through the cells alike; a nested column read
// is refused, naming the file, the column, what it is and what to do.
func TestNestedParquetColumns(t *testing.T) {
	raw := nestedParquet(t)
	wantX := []float64{0.5, 1.5, 2.25, -1, 4, 8}
	for _, units := range []int64{1 << 16, 2} {
		old := unitRows
		unitRows = units
		d, err := readBytes(raw, "n.parquet", Options{Outcome: "y", Predictors: []string{"x"}})
		unitRows = old
		if err != nil {
			t.Fatalf("flat columns beside nested ones: %v", err)
		}
		if d.N != 6 || !slicesEqual(d.X, wantX) || !slicesEqual(intsFloat(d.Y), []float64{0, 1, 2, 0, 1, 2}) {
			t.Errorf("read N=%d X=%v Y=%v, want X=%v", d.N, d.X, d.Y, wantX)
		}
	}
	// The record path (Read: header, then cells) gives the flat columns'
	// texts at their header positions, nested ones empty.
	c, msg, _ := openParquet(raw)
	if msg != "" {
		t.Fatal(msg)
	}
	hdr, _ := c.Read()
	if strings.Join(hdr, ",") != "y,tags,meta,x,kv" {
		t.Errorf("header %v", hdr)
	}
	for i, want := range []string{"1,,,0.5,", "2,,,1.5,", "3,,,2.25,"} {
		rec, err := c.Read()
		if err != nil || strings.Join(rec, ",") != want {
			t.Errorf("row %d: %q, %v; want %q", i+1, rec, err, want)
		}
	}
	for col, what := range map[string]string{"tags": "a list", "meta": "a struct", "kv": "a map"} {
		_, err := readBytes(raw, "n.parquet", Options{Outcome: "y", Predictors: []string{"x", col}})
		want := `n.parquet: column "` + col + `": is ` + what + `, a nested Parquet column, which ordplan does not read (it reads columns of one value per row): write "` + col + `" as a flat column (one number or text per row), or leave it out of the plan`
		if err == nil || err.Error() != want {
			t.Errorf("reading %s: %v\nwant %s", col, err, want)
		}
	}
}

func slicesEqual(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func intsFloat(y []int) []float64 {
	out := make([]float64, len(y))
	for i, v := range y {
		out[i] = float64(v)
	}
	return out
}
