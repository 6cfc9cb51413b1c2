package data

import (
	"bytes"
	"encoding/csv"
	"errors"
	"io"
	"runtime"
	"strings"
	"sync"
	"sync/atomic"
	"unsafe"
)

// Reading the rows of a CSV file in parallel. The bytes after the header
// are cut into chunks at line ends; each chunk is parsed on its own, by
// whichever worker takes it, into its own region of the data set's arrays
// (sized by the chunk's lines, so values are written where they stay) and
// its own tallies; then the chunks are joined in file order. A record is
// one line, which holds when no line has an odd number of quote
// characters: a quoted field left open at a line end needs an odd number
// on that line. A file with such a line is read record by record instead
// (ReadStream). The first error in file order is the one returned, so the
// result (data, counts, the message of a bad cell) does not depend on the
// chunks or the workers.
//
// A line is parsed in one of two ways. The fast way (fastRow) reads the
// used cells straight from the text: plain decimal numbers (decimal),
// integer codes, declared labels and levels; it gives up on anything else,
// such as a missing value, a bad cell or a field count that is not the
// header's. The general way splits the line into cells (lineRecords.fields:
// at the delimiters, or through the CSV reader when the line has quotes or
// the delimiter is white space) and goes through the same record path as
// the record-by-record reader.

var (
	// chunkBytes is the size chunks are cut at (tests make it small).
	chunkBytes = 1 << 20
	// chunkWorkers is the number of parsing goroutines (0: GOMAXPROCS).
	chunkWorkers = 0
)

// chunk is one piece of the file's rows and what parsing it gave.
type chunk struct {
	lo, hi int  // bytes of the file
	line   int  // file line of its first line
	lines  int  // its lines (a bound on its records)
	ends   int  // its line feeds
	quotes bool // it has a quote character
	row0   int  // its first row slot in the arrays
	d      *Dataset
	t      *rowTally
	err    error
}

// forEach runs f(0), ..., f(n-1) on the workers.
func forEach(n int, f func(i int)) {
	w := chunkWorkers
	if w <= 0 {
		w = runtime.GOMAXPROCS(0)
	}
	w = min(w, n)
	if w <= 1 {
		for i := 0; i < n; i++ {
			f(i)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for range w {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := int(next.Add(1) - 1); i < n; i = int(next.Add(1) - 1) {
				f(i)
			}
		}()
	}
	wg.Wait()
}

// chunked reads the rows after the header, which end at byte body of raw.
// done is false when the file must be read record by record: a line with
// an odd number of quote characters, or a delimiter the line splitting
// does not handle.
func (r *reader) chunked(raw []byte, body int) (d *Dataset, done bool, err error) {
	chunks, ok := r.lineChunks(raw, body)
	if !ok {
		return nil, false, nil
	}
	rows := 0
	for i := range chunks {
		chunks[i].row0 = rows
		rows += chunks[i].lines
	}
	return r.chunkRows(raw, chunks, rows)
}

// lineChunks cuts the rows after the header (which end at byte body of
// raw) into chunks, with their lines counted; false when the file must be
// read record by record: a line with an odd number of quote characters,
// or a delimiter the line splitting does not handle.
func (r *reader) lineChunks(raw []byte, body int) ([]chunk, bool) {
	delim := r.opt.Dialect.delim()
	if delim >= 0x80 || delim == '"' || delim == '\r' || delim == '\n' {
		return nil, false
	}
	chunks := cutChunks(raw, body)
	var odd atomic.Bool
	forEach(len(chunks), func(i int) {
		c := &chunks[i]
		b := raw[c.lo:c.hi]
		c.ends = bytes.Count(b, []byte{'\n'})
		c.lines = c.ends
		if len(b) > 0 && b[len(b)-1] != '\n' {
			c.lines++
		}
		if c.quotes = bytes.IndexByte(b, '"') >= 0; c.quotes && oddQuotes(b) {
			odd.Store(true)
		}
	})
	if odd.Load() {
		return nil, false
	}
	line := 1 + bytes.Count(raw[:body], []byte{'\n'})
	for i := range chunks {
		chunks[i].line = line
		line += chunks[i].ends
	}
	return chunks, true
}

// chunkRows reads the rows of the chunks (rows slots in all) into the
// data set.
func (r *reader) chunkRows(raw []byte, chunks []chunk, rows int) (*Dataset, bool, error) {
	out := r.newDataset()
	t := r.newRowTally(out.K)
	a := r.newArrays(rows, out.K)
	for i := range chunks {
		c := &chunks[i]
		c.d, c.t = a.region(c.row0, c.lines), t.fork()
		c.t.codes = a.codes[c.row0:c.row0:(c.row0 + c.lines)]
	}
	fast := r.newFastPlan(t)
	if fast != nil && !fast.delimEndsNumbers() {
		fast = nil
	}
	if f := forEachUntil(len(chunks), func(i int) error {
		chunks[i].err = r.parseChunk(&chunks[i], raw, fast)
		return chunks[i].err
	}); f >= 0 {
		return nil, true, chunks[f].err
	}
	a.join(out, t, chunks)
	d, err := r.finish(t, out)
	return d, true, err
}

// forEachUntil runs f(0), ..., f(n-1) on the workers, skipping those after
// one that failed, and returns the first i (in order) whose f failed, or
// -1: what f(i) did for that i and all before it is complete, so the
// result does not depend on the workers.
func forEachUntil(n int, f func(i int) error) int {
	var first atomic.Int64
	first.Store(int64(n))
	forEach(n, func(i int) {
		if int64(i) > first.Load() {
			return // an earlier one failed: this one cannot matter
		}
		if f(i) != nil {
			for {
				at := first.Load()
				if int64(i) >= at || first.CompareAndSwap(at, int64(i)) {
					break
				}
			}
		}
	})
	if at := int(first.Load()); at < n {
		return at
	}
	return -1
}

// cutChunks cuts raw[body:] into pieces of about chunkBytes that end at a
// line end (the last one at the end of the file).
func cutChunks(raw []byte, body int) []chunk {
	var out []chunk
	for lo := body; lo < len(raw); {
		hi := min(lo+chunkBytes, len(raw))
		if j := bytes.IndexByte(raw[hi-1:], '\n'); j < 0 {
			hi = len(raw)
		} else {
			hi += j
		}
		out = append(out, chunk{lo: lo, hi: hi})
		lo = hi
	}
	return out
}

// oddQuotes reports whether a line of b has an odd number of quote
// characters.
func oddQuotes(b []byte) bool {
	for len(b) > 0 {
		q := bytes.IndexByte(b, '"')
		if q < 0 {
			return false
		}
		start := bytes.LastIndexByte(b[:q], '\n') + 1
		end := bytes.IndexByte(b[q:], '\n')
		if end < 0 {
			end = len(b)
		} else {
			end += q
		}
		if bytes.Count(b[start:end], []byte{'"'})%2 == 1 {
			return true
		}
		b = b[min(end+1, len(b)):]
	}
	return false
}

// arrays are the data set's columns for every line of the file; each chunk
// appends its kept rows into its own region.
type arrays struct {
	K                     int
	x, weights, offset    []float64
	y, lines              []int
	codes                 []int64
	hasWeights, hasOffset bool
}

func (r *reader) newArrays(rows, K int) *arrays {
	a := &arrays{K: K, x: make([]float64, rows*K), y: make([]int, rows), lines: make([]int, rows), codes: make([]int64, rows)}
	adviseHuge(a.x)
	adviseHuge(a.y)
	adviseHuge(a.lines)
	adviseHuge(a.codes)
	if a.hasWeights = r.opt.Weights != ""; a.hasWeights {
		a.weights = make([]float64, rows)
	}
	if a.hasOffset = r.opt.Offset != ""; a.hasOffset {
		a.offset = make([]float64, rows)
	}
	return a
}

// region is the partial data set of a chunk whose rows take the slots
// row0 to row0+n-1: empty slices over those slots, so that keepRow's
// appends write into the arrays.
func (a *arrays) region(row0, n int) *Dataset {
	K := a.K
	d := &Dataset{
		K:     K,
		X:     a.x[row0*K : row0*K : (row0+n)*K],
		Y:     a.y[row0:row0:(row0 + n)],
		Lines: a.lines[row0:row0:(row0 + n)],
	}
	if a.hasWeights {
		d.Weights = a.weights[row0:row0:(row0 + n)]
	}
	if a.hasOffset {
		d.Offset = a.offset[row0:row0:(row0 + n)]
	}
	return d
}

// join moves the chunks' kept rows together, in file order, into out, and
// adds their tallies to t.
func (a *arrays) join(out *Dataset, t *rowTally, chunks []chunk) {
	K, w := a.K, 0
	for i := range chunks {
		c := &chunks[i]
		n := len(c.d.Y)
		if c.row0 != w {
			copy(a.x[w*K:], a.x[c.row0*K:(c.row0+n)*K])
			copy(a.y[w:], a.y[c.row0:c.row0+n])
			copy(a.lines[w:], a.lines[c.row0:c.row0+n])
			copy(a.codes[w:], a.codes[c.row0:c.row0+n])
			if a.hasWeights {
				copy(a.weights[w:], a.weights[c.row0:c.row0+n])
			}
			if a.hasOffset {
				copy(a.offset[w:], a.offset[c.row0:c.row0+n])
			}
		}
		w += n
		out.RowsRead += c.d.RowsRead
		out.Incomplete += c.d.Incomplete
		out.Cluster = append(out.Cluster, c.d.Cluster...)
		t.join(c.t)
	}
	out.X, out.Y, out.Lines, t.codes = a.x[:w*K], a.y[:w], a.lines[:w], a.codes[:w]
	if a.hasWeights {
		out.Weights = a.weights[:w]
	}
	if a.hasOffset {
		out.Offset = a.offset[:w]
	}
}

// parseChunk reads the lines of a chunk.
func (r *reader) parseChunk(c *chunk, raw []byte, fast *fastPlan) error {
	lr := &lineRecords{
		s:      chunkText(raw, c),
		line:   c.line - 1,
		delim:  byte(r.opt.Dialect.delim()),
		quotes: c.quotes,
		width:  r.width,
	}
	cr := *r
	cr.cr = lr
	for {
		if fast != nil {
			cr.fastLines(fast, c, lr)
		}
		if !lr.next() {
			break
		}
		rec, err := lr.fields()
		if err != nil {
			return cr.csvErr(err, rec)
		}
		if blankRow(rec) {
			continue // delimiters alone: a blank line (blankRow)
		}
		c.d.RowsRead++
		if err := cr.record(c.t, c.d, rec); err != nil {
			return err
		}
	}
	return nil
}

// chunkText is the text of a chunk: its bytes of raw, not copied (the
// bytes of a file being read are never changed).
func chunkText(raw []byte, c *chunk) string {
	if c.hi == c.lo {
		return ""
	}
	return unsafe.String(&raw[c.lo], c.hi-c.lo)
}

// lineRecords are the records of a chunk, one per non-empty line.
type lineRecords struct {
	s      string // the chunk's text
	pos    int    // start of the next line
	line   int    // file line of the current line
	cur    string // the current line, without its end
	whole  string // the current line with its end, as the CSV reader sees it
	delim  byte
	quotes bool // the chunk has quote characters
	width  int  // fields of the header
	rec    []string
}

// next moves to the next line that is not empty (the CSV reader skips
// empty lines; a CR before the line end, or before the end of the file, is
// not part of the line).
func (l *lineRecords) next() bool {
	for l.pos < len(l.s) {
		start := l.pos
		end := strings.IndexByte(l.s[start:], '\n')
		if end < 0 {
			l.pos = len(l.s)
		} else {
			l.pos = start + end + 1
		}
		l.whole = l.s[start:l.pos]
		line := strings.TrimSuffix(l.whole, "\n")
		line = strings.TrimSuffix(line, "\r")
		l.line++
		if line != "" {
			l.cur = line
			return true
		}
	}
	return false
}

// fields splits the current line into its cells as the CSV reader would:
// at the delimiters when the line has no quote (the reader's skipping of
// leading white space is moot, as cells are trimmed where they are read),
// else through the CSV reader itself. A field count other than the
// header's is an error.
func (l *lineRecords) fields() ([]string, error) {
	if !l.quotes || strings.IndexByte(l.cur, '"') < 0 {
		rec, line := l.rec[:0], l.cur
		for {
			i := strings.IndexByte(line, l.delim)
			if i < 0 {
				rec = append(rec, line)
				break
			}
			rec = append(rec, line[:i])
			line = line[i+1:]
		}
		l.rec = rec
		return rec, l.count(rec)
	}
	cr := csv.NewReader(strings.NewReader(l.whole))
	cr.Comma = rune(l.delim)
	cr.TrimLeadingSpace = trimsLeadingSpace(cr.Comma)
	cr.FieldsPerRecord = -1
	rec, err := cr.Read()
	var pe *csv.ParseError
	switch {
	case errors.As(err, &pe):
		pe.StartLine += l.line - 1
		pe.Line += l.line - 1
		return rec, err
	case err == io.EOF:
		rec = nil
	case err != nil:
		return rec, err
	}
	return rec, l.count(rec)
}

// count is the CSV reader's error for a record whose field count is not
// the header's.
func (l *lineRecords) count(rec []string) error {
	if len(rec) == l.width {
		return nil
	}
	return &csv.ParseError{StartLine: l.line, Line: l.line, Column: 1, Err: csv.ErrFieldCount}
}

// Read returns the cells of the next line (records interface).
func (l *lineRecords) Read() ([]string, error) {
	if !l.next() {
		return nil, io.EOF
	}
	return l.fields()
}

// FieldPos gives the current line (records interface).
func (l *lineRecords) FieldPos(int) (int, int) { return l.line, 0 }
