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
// Rows are read a batch at a time, as they are used.
type columnRecords struct {
	header []string
	rows   int64 // rows in the file, as its metadata says
	size   int64 // bytes of the file
	rd     *parquet.Reader
	batch  []parquet.Row // rows read and not yet used: batch[at:]
	at     int
	next   int  // rows returned
	done   bool // the file is read to its end
}

// openParquet opens a Parquet file read whole into raw. Only flat files
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
	rec.rd = parquet.NewReader(f)
	rec.rows, rec.size = f.NumRows(), int64(len(raw))
	rec.batch = make([]parquet.Row, 0, 1024)
	return rec, ""
}

// row returns the next row's values, valid until the next call; io.EOF
// after the last. A file that cannot be read is an *Error.
func (c *columnRecords) row() (row parquet.Row, err error) {
	if c.at == len(c.batch) {
		if c.done {
			c.rd.Close()
			return nil, io.EOF
		}
		if err := c.fill(); err != nil {
			return nil, err
		}
		if len(c.batch) == 0 {
			return nil, io.EOF
		}
	}
	row = c.batch[c.at]
	c.at++
	c.next++
	return row, nil
}

// fill reads the next batch of rows.
func (c *columnRecords) fill() (err error) {
	defer func() {
		if p := recover(); p != nil {
			err = &Error{Msg: fmt.Sprintf("is not a readable Parquet file (%v)", p)}
		}
	}()
	n, rerr := c.rd.ReadRows(c.batch[:cap(c.batch)])
	c.batch, c.at = c.batch[:n], 0
	switch {
	case errors.Is(rerr, io.EOF) || n == 0 && rerr == nil:
		c.done = true
	case rerr != nil:
		c.done = true
		return &Error{Msg: "is not a readable Parquet file (" + rerr.Error() + ")"}
	}
	return nil
}

// Read returns the header first, then each row's cells.
func (c *columnRecords) Read() ([]string, error) {
	if c.header != nil {
		h := c.header
		c.header = nil
		return h, nil
	}
	row, err := c.row()
	if err != nil {
		return nil, err
	}
	return c.cells(row)
}

// cells are the texts of a row's values.
func (c *columnRecords) cells(row parquet.Row) ([]string, error) {
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

// columnRows reads the rows of a Parquet file: a row whose used values are
// plain (numbers as numbers, labels and levels as text; see valueRow) is
// taken from the values, any other through the cell texts and the same
// record path as CSV.
func (r *reader) columnRows(c *columnRecords) (*Dataset, error) {
	d := r.newDataset()
	t := r.newRowTally(d.K)
	// The arrays for the rows the metadata announces, unless that would
	// take more than 64 bytes per byte of the file (a damaged count).
	if n := int(min(c.rows, 8*c.size/int64(d.K+3))); n > 0 {
		a := r.newArrays(n, d.K)
		d.X, d.Y, d.Lines, t.codes = a.x[:0], a.y[:0], a.lines[:0], a.codes[:0]
		if a.hasWeights {
			d.Weights = a.weights[:0]
		}
		if a.hasOffset {
			d.Offset = a.offset[:0]
		}
	}
	fast := r.newFastPlan(t)
	if r.opt.Dialect.DecimalComma {
		fast = nil // the texts of numbers have a point, which the general way refuses
	}
	for {
		row, err := c.row()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, r.csvErr(err, nil)
		}
		d.RowsRead++
		if fast != nil {
			if cl, ok := r.valueRow(fast, t, row); ok {
				r.settle(t, d, cl)
				continue
			}
		}
		rec, err := c.cells(row)
		if err != nil {
			return nil, r.csvErr(err, rec)
		}
		if err := r.record(t, d, rec); err != nil {
			return nil, err
		}
	}
	return r.finish(t, d)
}

// valueRow reads a Parquet row the fast way, from its values; false when
// the row needs the general way, which would give the same row from the
// values' texts whenever this one does.
func (r *reader) valueRow(p *fastPlan, t *rowTally, row parquet.Row) (cells, bool) {
	out := cells{miss: -1, w: 1}
	if len(row) != len(p.fields) {
		return out, false
	}
	for fi := range p.fields {
		f := &p.fields[fi]
		v := row[fi]
		if f.kind == fastSkip {
			continue
		}
		if v.Column() != fi || v.IsNull() {
			return out, false
		}
		var ok bool
		switch f.kind {
		case fastNumber, fastWeight, fastOffset:
			var x float64
			if x, ok = plainNumber(v); !ok || f.check {
				return out, false
			}
			switch f.kind {
			case fastNumber:
				t.xs[f.pos] = x
			case fastWeight:
				out.w, ok = x, x >= 0
			default:
				out.off = x
			}
		case fastCode:
			switch v.Kind() {
			case parquet.Int32:
				out.code, ok = int64(v.Int32()), !f.check
			case parquet.Int64:
				out.code, ok = v.Int64(), !f.check
			}
		case fastLabel, fastLevel:
			var l int
			if v.Kind() == parquet.ByteArray && !f.check {
				if b := v.ByteArray(); len(b) > 0 && b[0] > ' ' && b[0] < 0x80 && b[len(b)-1] > ' ' && b[len(b)-1] < 0x80 {
					l, ok = f.levels[string(b)] // no white space to trim
				}
			}
			if f.kind == fastLabel {
				out.y = l
			} else {
				t.xs[f.pos] = float64(l)
			}
		case fastCluster:
			cell := strings.TrimSpace(cellText(v))
			out.cl, ok = cell, !r.missingIn(f.name, cell)
		}
		if !ok {
			return out, false
		}
	}
	return out, true
}

// plainNumber is a value's number when its text (cellText) reads as that
// number: a finite double (written back exactly), an integer (the text of
// an int64 reads as the nearest float64, as the conversion rounds it) or a
// boolean (0 or 1). Floats are left to their text, which reads as a
// float64 other than the float32's.
func plainNumber(v parquet.Value) (float64, bool) {
	switch v.Kind() {
	case parquet.Double:
		x := v.Double()
		return x, !math.IsNaN(x) && !math.IsInf(x, 0)
	case parquet.Int32:
		return float64(v.Int32()), true
	case parquet.Int64:
		return float64(v.Int64()), true
	case parquet.Boolean:
		if v.Boolean() {
			return 1, true
		}
		return 0, true
	}
	return 0, false
}
