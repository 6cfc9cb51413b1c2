package data

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/parquet-go/parquet-go"
	parquetformat "github.com/parquet-go/parquet-go/format"
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
	file   *parquet.File
	mark   byte // the dialect's decimal mark, for the texts of numbers
	header []string
	texts  []columnText // by column: the text of a value with a logical type (nil: cellText)
	// nested, by column: what a nested column is ("a list", ...; "" when
	// flat); leaf, by column: its (first) leaf column in the file; byLeaf,
	// by leaf column: the flat column it is (-1: part of a nested one)
	nested []string
	leaf   []int
	byLeaf []int
	rows   int64 // rows in the file, as its metadata says
	size   int64 // bytes of the file
	rd     *parquet.Reader
	batch  []parquet.Row // rows read and not yet used: batch[at:]
	at     int
	next   int  // rows returned
	done   bool // the file is read to its end
}

// openParquet opens a Parquet file read whole into raw. Its columns are
// its top-level fields: a nested one (a list, a map, a struct or a
// repeated value) is named in the header and never read (nested says what
// it is; a plan reading it is refused, nestedUsed). format says that msg
// is about the file as a whole: not a Parquet file, or one broken or cut
// short.
func openParquet(raw []byte) (rec *columnRecords, msg string, format bool) {
	defer func() {
		if p := recover(); p != nil {
			rec, msg, format = nil, fmt.Sprintf("is not a readable Parquet file (%v): it is damaged; write it again", p), true
		}
	}()
	switch {
	case !bytes.HasPrefix(raw, []byte("PAR1")):
		if msg := sniff(raw); strings.Contains(msg, "-compressed; ") {
			return nil, msg, true
		}
		return nil, "is not a Parquet file (it does not start and end with PAR1): convert it to Parquet, or give the file a .csv name if it is CSV text", true
	case !bytes.HasSuffix(raw, []byte("PAR1")):
		return nil, "starts like a Parquet file but does not end like one (no PAR1 at its end, before which a Parquet file keeps the description of its columns): it is cut short, as by a copy or download that stopped; copy or write it again", true
	}
	f, err := parquet.OpenFile(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		return nil, "is not a readable Parquet file (" + err.Error() + "): it is damaged; write it again", true
	}
	cols := f.Schema().Columns()
	rec = &columnRecords{}
	// The logical types as the file's metadata states them, by column
	// name: the schema read back leaves some out (FLOAT16).
	stated := map[string]*parquetformat.LogicalType{}
	for i := range f.Metadata().Schema {
		if e := &f.Metadata().Schema[i]; e.LogicalType.Value != nil {
			stated[e.Name] = &e.LogicalType
		}
	}
	for li, path := range cols {
		if len(rec.header) > 0 && rec.header[len(rec.header)-1] == path[0] && rec.nested[len(rec.header)-1] != "" {
			continue // another leaf of the nested column just named
		}
		leaf, _ := f.Schema().Lookup(path...)
		rec.header = append(rec.header, path[0])
		rec.leaf = append(rec.leaf, li)
		rec.nested = append(rec.nested, nestedKind(f.Root().Column(path[0]), leaf))
		if rec.nested[len(rec.nested)-1] != "" {
			rec.texts = append(rec.texts, nil)
			continue
		}
		rec.texts = append(rec.texts, logicalText(leaf.Node.Type(), stated[path[0]]))
	}
	rec.byLeaf = make([]int, len(cols))
	for li := range rec.byLeaf {
		rec.byLeaf[li] = -1
	}
	for ci, li := range rec.leaf {
		if rec.nested[ci] == "" {
			rec.byLeaf[li] = ci
		}
	}
	rec.file, rec.mark = f, '.'
	rec.rd = parquet.NewReader(f)
	rec.rows, rec.size = f.NumRows(), int64(len(raw))
	rec.batch = make([]parquet.Row, 0, 1024)
	return rec, "", false
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
	cells := make([]string, len(c.nested))
	for _, v := range row {
		if li := v.Column(); li >= 0 && li < len(c.byLeaf) && c.byLeaf[li] >= 0 {
			cells[c.byLeaf[li]] = c.text(c.byLeaf[li], v)
		}
	}
	return cells, nil
}

// text is the text of a value of column ci: through the column's logical
// type when it has one that changes what the stored value means, else
// cellText.
func (c *columnRecords) text(ci int, v parquet.Value) string {
	if ci < len(c.texts) && c.texts[ci] != nil && !v.IsNull() {
		return c.texts[ci](v, c.mark)
	}
	return cellText(v, c.mark)
}

// typedSlow sends the used columns with a logical type (c.texts) the
// general way: their stored values are not the numbers or texts they
// mean.
func (c *columnRecords) typedSlow(p *fastPlan) {
	if p == nil {
		return
	}
	for ci := range p.fields {
		if ci < len(c.texts) && c.texts[ci] != nil && p.fields[ci].kind != fastSkip {
			p.fields[ci].typed = true
			p.plain = false
		}
	}
}

// cellText writes a value as the CSV reader would see it, numbers with
// the dialect's decimal mark (a Parquet number has none of its own: the
// dialect's mark must not make it unreadable). A float (32 bits) is
// widened exactly to a float64 and written as that float64 (0.1 stored as
// a float reads as 0.10000000149011612, the value the file holds), so that
// its text reads back as the number valueRow takes.
func cellText(v parquet.Value, mark byte) string {
	if v.IsNull() {
		return ""
	}
	switch v.Kind() {
	case parquet.Boolean:
		return boolText(v.Boolean())
	case parquet.Int32:
		return strconv.FormatInt(int64(v.Int32()), 10)
	case parquet.Int64:
		return strconv.FormatInt(v.Int64(), 10)
	case parquet.Float:
		return fmtNum(float64(v.Float()), mark)
	case parquet.Double:
		return fmtNum(v.Double(), mark)
	default:
		return string(v.ByteArray())
	}
}

func fmtNum(x float64, mark byte) string {
	if math.IsNaN(x) {
		return "NaN"
	}
	s := strconv.FormatFloat(x, 'g', -1, 64)
	if mark != '.' {
		s = strings.Replace(s, ".", string(mark), 1)
	}
	return s
}

// nestedKind says what a top-level field of a Parquet file is when it is
// not one value per row (a list, a map, a struct, a repeated value), ""
// when it is flat; first is its first leaf column.
func nestedKind(field *parquet.Column, first parquet.LeafColumn) string {
	var lt parquetformat.LogicalTypeValue
	if t := field.Type().LogicalType(); t != nil {
		lt = t.Value
	}
	_, list := lt.(*parquetformat.ListType)
	_, isMap := lt.(*parquetformat.MapType)
	switch {
	case list:
		return "a list"
	case isMap:
		return "a map"
	case !field.Leaf() && field.Repeated():
		return "a repeated group (a list of structs)"
	case !field.Leaf():
		return "a struct"
	case field.Repeated() || first.MaxRepetitionLevel > 0:
		return "a repeated value (a list)"
	}
	return ""
}

// nestedUsed refuses reading column index of the header, named name,
// when it is a nested column of a Parquet file: its file, its name, what
// it is and what to do. The one place that decides which columns of a
// Parquet file ordplan reads (every other column is flat).
func (r *reader) nestedUsed(name string, index int) error {
	if c, ok := r.cr.(*columnRecords); ok && index < len(c.nested) && c.nested[index] != "" {
		return r.fail(0, name, "is %s, a nested Parquet column, which ordplan does not read (it reads columns of one value per row): write %s as a flat column (one number or text per row), or leave it out of the plan", c.nested[index], quoteCell(name))
	}
	return nil
}

// FieldPos gives the row number counting the header as line 1, as in CSV.
func (c *columnRecords) FieldPos(int) (int, int) { return c.next + 1, 0 }

// columnRows reads the rows of a Parquet file: a row whose used values are
// plain (numbers as numbers, labels and levels as text; see valueRow) is
// taken from the values, any other through the cell texts and the same
// record path as CSV.
func (r *reader) columnRows(c *columnRecords) (*Dataset, error) {
	if d, done, err := r.parallelRows(c); done {
		return d, err
	}
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
	c.typedSlow(fast)
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
		if f.kind == fastSkip {
			continue
		}
		if row[fi].Column() != fi || !r.valueCell(p, f, &row[fi], &out, t.xs) {
			return out, false
		}
	}
	return out, true
}

// valueCell reads one used value of a row the fast way into the row (and
// its predictor values xs); false when the row needs the general way.
func (r *reader) valueCell(p *fastPlan, f *fastField, v *parquet.Value, out *cells, xs []float64) bool {
	if v.IsNull() || f.typed {
		return false
	}
	var ok bool
	switch f.kind {
	case fastNumber, fastWeight, fastOffset:
		var x float64
		if x, ok = plainNumber(v); !ok || f.check {
			return false
		}
		switch f.kind {
		case fastNumber:
			xs[f.pos] = x
		case fastWeight:
			out.w, ok = x, weightInRange(x)
		default:
			out.off, ok = x, offsetInRange(x)
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
			xs[f.pos] = float64(l)
		}
	case fastCluster:
		cell := strings.TrimSpace(cellText(*v, p.mark))
		out.cl, ok = cell, !r.missingIn(f.name, cell)
	}
	return ok
}

// plainNumber is a value's number when its text (cellText) reads as that
// number: a finite double (written back exactly), a finite float widened
// exactly to a float64 (written back as that float64), an integer (the
// text of an int64 reads as the nearest float64, as the conversion rounds
// it) or a boolean (0 or 1).
func plainNumber(v *parquet.Value) (float64, bool) {
	switch v.Kind() {
	case parquet.Double:
		x := v.Double()
		return x, !math.IsNaN(x) && !math.IsInf(x, 0)
	case parquet.Float:
		x := float64(v.Float())
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

// Reading a Parquet file in parallel: the rows are cut into units (a row
// group, or a range of about unitRows of its rows when its column chunks
// have an offset index to seek with), each read by whichever worker takes
// it, column by column (only the used columns are decoded), into its own
// region of the arrays, then joined in file order, as CSV chunks are
// (chunks.go): the data, the counts and the first error do not depend on
// the units or the workers.

// unitRows is the size of a unit's row range (tests make it small).
var unitRows int64 = 1 << 16

// columnUnit is a range of rows of one row group.
type columnUnit struct {
	rg     parquet.RowGroup
	lo, hi int64 // rows of the row group
	first  int   // the file's row index of lo
}

// units cuts the file's rows into units; false when the file must be read
// row by row (a used column repeated, or row counts that do not add up).
func (c *columnRecords) units(used []int) ([]columnUnit, bool) {
	paths := c.file.Schema().Columns()
	for _, ci := range used {
		if leaf, ok := c.file.Schema().Lookup(paths[c.leaf[ci]]...); !ok || leaf.MaxRepetitionLevel > 0 {
			return nil, false
		}
	}
	var out []columnUnit
	first := int64(0)
	for _, rg := range c.file.RowGroups() {
		n := rg.NumRows()
		step := n
		chunks := rg.ColumnChunks()
		if n > unitRows {
			step = unitRows
			for _, ci := range used {
				if c.leaf[ci] >= len(chunks) {
					return nil, false
				}
				if _, err := chunks[c.leaf[ci]].OffsetIndex(); err != nil {
					step = n // no page locations: seeking would decode every page before
				}
			}
		}
		for lo := int64(0); lo < n; lo += step {
			out = append(out, columnUnit{rg: rg, lo: lo, hi: min(lo+step, n), first: int(first + lo)})
		}
		first += n
	}
	if first != c.rows {
		return nil, false
	}
	return out, true
}

// unitCursor gives the line of the row being read (records interface, for
// FieldPos): rows count from line 2, the header being line 1.
type unitCursor struct{ line int }

func (u *unitCursor) Read() ([]string, error) { return nil, io.EOF }
func (u *unitCursor) FieldPos(int) (int, int) { return u.line, 0 }
func (c *columnRecords) usedColumns(r *reader) []int {
	var used []int
	for _, col := range r.cols {
		if !slices.Contains(used, col.index) {
			used = append(used, col.index)
		}
	}
	slices.Sort(used)
	return used
}

// parallelRows reads the rows of a flat Parquet file in units on the
// workers; done is false when the file must be read row by row.
func (r *reader) parallelRows(c *columnRecords) (d *Dataset, done bool, err error) {
	used := c.usedColumns(r)
	units, ok := c.units(used)
	K := len(r.opt.Predictors)
	// The arrays for the rows the metadata announces, unless that would
	// take more than 64 bytes per byte of the file (a damaged count).
	if !ok || len(units) == 0 || c.rows > 8*c.size/int64(K+3) {
		return nil, false, nil
	}
	out := r.newDataset()
	t := r.newRowTally(out.K)
	a := r.newArrays(int(c.rows), out.K)
	chunks := make([]chunk, len(units))
	for i, u := range units {
		n := int(u.hi - u.lo)
		chunks[i].row0 = u.first
		chunks[i].d, chunks[i].t = a.region(u.first, n), t.fork()
		chunks[i].t.codes = a.codes[u.first:u.first:(u.first + n)]
	}
	fast := r.newFastPlan(t)
	c.typedSlow(fast)
	if f := forEachUntil(len(units), func(i int) error {
		chunks[i].err = r.readUnit(c, units[i], used, &chunks[i], fast)
		return chunks[i].err
	}); f >= 0 {
		return nil, true, chunks[f].err
	}
	a.join(out, t, chunks)
	d, err = r.finish(t, out)
	return d, true, err
}

// columnValues reads the values of one column chunk from a row on, page
// after page.
type columnValues struct {
	pages   parquet.Pages
	page    parquet.Page   // the page being read
	done    []parquet.Page // pages read to their end, whose values the batch may still hold
	vr      parquet.ValueReader
	doubles []float64 // a required double column read as numbers: the batch's values (else nil)
}

// fill reads the next n values through take, which reads values [from,
// to) of the batch from a page's reader; a chunk that ends early is an
// *Error.
func (cv *columnValues) fill(n int, take func(vr parquet.ValueReader, from, to int) (int, error)) error {
	for at := 0; at < n; {
		if cv.vr == nil {
			p, err := cv.pages.ReadPage()
			if err != nil {
				if errors.Is(err, io.EOF) {
					return &Error{Msg: "is not a readable Parquet file (a column has fewer values than the rows its row group announces)"}
				}
				return &Error{Msg: "is not a readable Parquet file (" + err.Error() + ")"}
			}
			cv.page, cv.vr = p, p.Values()
		}
		k, err := take(cv.vr, at, n)
		at += k
		switch {
		case errors.Is(err, io.EOF):
			cv.done = append(cv.done, cv.page)
			cv.page, cv.vr = nil, nil
		case err != nil:
			return &Error{Msg: "is not a readable Parquet file (" + err.Error() + ")"}
		}
	}
	return nil
}

// release gives the pages read to their end back to parquet-go's buffers,
// once the values read from them are no longer used.
func (cv *columnValues) release() {
	for _, p := range cv.done {
		parquet.Release(p)
	}
	cv.done = cv.done[:0]
}

// close releases every page and closes the chunk's pages.
func (cv *columnValues) close() {
	cv.release()
	if cv.page != nil {
		parquet.Release(cv.page)
	}
	cv.pages.Close()
}

// read fills buf with the next values: as numbers into cv.doubles for a
// required double column (straight from the page when its reader gives
// numbers; buf is then scratch), else as values into buf.
func (cv *columnValues) read(buf []parquet.Value) error {
	if cv.doubles == nil {
		return cv.fill(len(buf), func(vr parquet.ValueReader, from, to int) (int, error) {
			return vr.ReadValues(buf[from:to])
		})
	}
	return cv.fill(len(buf), func(vr parquet.ValueReader, from, to int) (int, error) {
		if dr, ok := vr.(parquet.DoubleReader); ok {
			return dr.ReadDoubles(cv.doubles[from:to])
		}
		k, err := vr.ReadValues(buf[from:to])
		for i := from; i < from+k; i++ {
			cv.doubles[i] = buf[i].Double()
		}
		return k, err
	})
}

// requiredDouble reports whether column ci of the file is a required
// (never null) double.
func (c *columnRecords) requiredDouble(ci int) bool {
	leaf, ok := c.file.Schema().Lookup(c.file.Schema().Columns()[c.leaf[ci]]...)
	return ok && leaf.MaxDefinitionLevel == 0 && leaf.MaxRepetitionLevel == 0 && leaf.Node.Type().Kind() == parquet.Double
}

// readUnit reads the rows of a unit into its chunk's region and tally: a
// row whose used values are plain the fast way (valueRow), any other
// through the texts of its used cells and the same record path as CSV.
func (r *reader) readUnit(c *columnRecords, u columnUnit, used []int, ch *chunk, fast *fastPlan) (err error) {
	defer func() {
		if p := recover(); p != nil {
			err = &Error{Msg: fmt.Sprintf("is not a readable Parquet file (%v)", p)}
		}
		if err != nil {
			err = r.csvErr(err, nil)
		}
	}()
	const batch = 1024
	chunks := u.rg.ColumnChunks()
	cols := make([]columnValues, len(used))
	vals := make([][]parquet.Value, len(used))
	for k, ci := range used {
		cols[k].pages = chunks[c.leaf[ci]].Pages()
		defer cols[k].close()
		if err := cols[k].pages.SeekToRow(u.lo); err != nil {
			return &Error{Msg: "is not a readable Parquet file (" + err.Error() + ")"}
		}
		vals[k] = make([]parquet.Value, batch)
		if fast != nil && c.requiredDouble(ci) {
			if f := fast.fields[ci]; !f.check && (f.kind == fastNumber || f.kind == fastWeight || f.kind == fastOffset) {
				cols[k].doubles = make([]float64, batch)
			}
		}
	}
	cur := &unitCursor{}
	cr := *r
	cr.cr = cur
	K := len(ch.t.xs)
	rows := make([]cells, batch)
	xb := make([]float64, batch*K)
	slow := make([]bool, batch)
	rec := make([]string, r.width)
	for at := u.lo; at < u.hi; {
		b := int(min(batch, u.hi-at))
		for k := range cols {
			cols[k].release() // the previous batch is done with
			if err := cols[k].read(vals[k][:b]); err != nil {
				return err
			}
		}
		// Column by column, the fast way while it can.
		for j := 0; j < b; j++ {
			rows[j], slow[j] = cells{miss: -1, w: 1}, fast == nil
		}
		if fast != nil {
			for k, ci := range used {
				f := &fast.fields[ci]
				if xk := cols[k].doubles; xk != nil {
					for j, x := range xk[:b] {
						switch {
						case math.IsNaN(x) || math.IsInf(x, 0):
							slow[j] = true
						case f.kind == fastNumber:
							xb[j*K+f.pos] = x
						case f.kind == fastWeight:
							rows[j].w = x
							slow[j] = slow[j] || !weightInRange(x)
						default:
							rows[j].off = x
							slow[j] = slow[j] || !offsetInRange(x)
						}
					}
					continue
				}
				vk := vals[k][:b]
				for j := range vk {
					if !slow[j] && !cr.valueCell(fast, f, &vk[j], &rows[j], xb[j*K:(j+1)*K]) {
						slow[j] = true
					}
				}
			}
		}
		for j := 0; j < b; j++ {
			ch.d.RowsRead++
			cur.line = u.first + int(at-u.lo) + j + 2
			if !slow[j] {
				copy(ch.t.xs, xb[j*K:(j+1)*K])
				cr.settle(ch.t, ch.d, rows[j])
				continue
			}
			for k, ci := range used {
				if xk := cols[k].doubles; xk != nil {
					rec[ci] = fmtNum(xk[j], c.mark) // cellText of the double
				} else {
					rec[ci] = c.text(ci, vals[k][j])
				}
			}
			if err := cr.record(ch.t, ch.d, rec); err != nil {
				return err
			}
		}
		at += int64(b)
	}
	return nil
}
