package data

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/parquet-go/parquet-go"
)

// IsParquet reports whether a data file is read as Parquet (by its name).
func IsParquet(name string) bool {
	return strings.EqualFold(filepath.Ext(name), ".parquet")
}

// columnRecords are the rows of a Parquet file as cell texts: the header
// (the flat columns' names), then one record per row; a null is an empty
// cell (missing), numbers are written back exactly (shortest round-trip).
type columnRecords struct {
	header []string
	rows   []parquet.Row
	next   int
}

// openParquet reads a whole Parquet file into records. Only flat files
// (no nested or repeated columns) are read.
func openParquet(raw []byte) (rec *columnRecords, msg string) {
	defer func() {
		if p := recover(); p != nil {
			rec, msg = nil, fmt.Sprintf("is not a readable Parquet file (%v)", p)
		}
	}()
	if !bytes.HasPrefix(raw, []byte("PAR1")) || !bytes.HasSuffix(raw, []byte("PAR1")) {
		return nil, "is not a Parquet file (it does not start and end with PAR1): convert it to Parquet, or give the file a .csv name if it is CSV text"
	}
	f, err := parquet.OpenFile(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		return nil, "is not a readable Parquet file (" + err.Error() + ")"
	}
	cols := f.Schema().Columns()
	rec = &columnRecords{}
	for _, path := range cols {
		if len(path) != 1 {
			return nil, fmt.Sprintf("column %s is nested; only flat Parquet files (one value per column and row) are read", quoteCell(strings.Join(path, ".")))
		}
		rec.header = append(rec.header, path[0])
	}
	r := parquet.NewReader(f)
	defer r.Close()
	buf := make([]parquet.Row, 1024)
	for {
		n, err := r.ReadRows(buf)
		for _, row := range buf[:n] {
			rec.rows = append(rec.rows, row.Clone())
		}
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, "is not a readable Parquet file (" + err.Error() + ")"
		}
		if n == 0 {
			break
		}
	}
	return rec, ""
}

// Read returns the header first, then each row's cells.
func (c *columnRecords) Read() ([]string, error) {
	if c.header != nil {
		h := c.header
		c.header = nil
		return h, nil
	}
	if c.next >= len(c.rows) {
		return nil, io.EOF
	}
	row := c.rows[c.next]
	c.next++
	cells := make([]string, 0, len(row))
	for _, v := range row {
		if v.Column() != len(cells) {
			return nil, &Error{Line: c.next + 1, Msg: "row has a repeated or nested value; only flat Parquet files are read"}
		}
		cells = append(cells, cellText(v))
	}
	return cells, nil
}

// cellText writes a value as the CSV reader would see it.
func cellText(v parquet.Value) string {
	if v.IsNull() {
		return ""
	}
	switch v.Kind() {
	case parquet.Boolean:
		if v.Boolean() {
			return "1"
		}
		return "0"
	case parquet.Int32:
		return strconv.FormatInt(int64(v.Int32()), 10)
	case parquet.Int64:
		return strconv.FormatInt(v.Int64(), 10)
	case parquet.Float:
		return fmtNum(float64(v.Float()), 32)
	case parquet.Double:
		return fmtNum(v.Double(), 64)
	default:
		return string(v.ByteArray())
	}
}

func fmtNum(x float64, bits int) string {
	if math.IsNaN(x) {
		return "NaN"
	}
	return strconv.FormatFloat(x, 'g', -1, bits)
}

// FieldPos gives the row number counting the header as line 1, as in CSV.
func (c *columnRecords) FieldPos(int) (int, int) { return c.next + 1, 0 }
