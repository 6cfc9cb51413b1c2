package data

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"ordplan/internal/words"
	"strings"
	"unicode"
)

var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// Load reads the data file at path. See Read.
func Load(path string, opt Options) (*Dataset, error) {
	raw, err := fileBytes(path)
	if err != nil {
		return nil, err
	}
	return readBytes(raw, path, opt)
}

func osReason(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// Read reads a comma-separated file with a header line from r and builds
// the data set the options ask for. The name is used in messages. A UTF-8
// byte order mark and CRLF line endings are accepted. The input is read
// whole, then parsed in chunks on every core (see chunks.go).
func Read(r io.Reader, name string, opt Options) (*Dataset, error) {
	if name == "" {
		name = "<input>"
	}
	raw, err := io.ReadAll(r)
	if err != nil {
		return nil, &Error{File: name, Msg: "cannot read file: " + osReason(err), Err: err}
	}
	return readBytes(raw, name, opt)
}

// ReadStream is Read one record at a time, without holding the whole
// input: the reader Read falls back to when a quoted field spans lines.
// It gives the same data set and the same errors as Read.
func ReadStream(r io.Reader, name string, opt Options) (*Dataset, error) {
	if name == "" {
		name = "<input>"
	}
	rd := &reader{file: name, opt: opt, missing: opt.missingSet()}
	if rs, ok := r.(io.ReadSeeker); ok {
		rd.again = rs
	}
	return rd.read(r)
}

// readBytes reads a whole file: the header, then the rows in parallel
// chunks when the file is CSV text whose quoted fields (if any) stay
// within their lines, else record by record.
func readBytes(raw []byte, name string, opt Options) (*Dataset, error) {
	if name == "" {
		name = "<input>"
	}
	r := &reader{file: name, opt: opt, missing: opt.missingSet(), raw: raw}
	cols, err := r.opt.plan()
	if err != nil {
		return nil, &Error{File: r.file, Msg: err.Error()}
	}
	if err := r.start(bytes.NewReader(raw)); err != nil {
		return nil, err
	}
	if err := r.header(cols); err != nil {
		return nil, err
	}
	if err := r.columnChecks(); err != nil {
		return nil, err
	}
	if r.opt.OnlyLevels != nil {
		return r.sheetRows() // row by row: rows of other levels are passed over (record)
	}
	if cr, ok := r.cr.(*columnRecords); ok {
		return r.columnRows(cr)
	}
	if cr, ok := r.cr.(*csv.Reader); ok {
		body := int(cr.InputOffset())
		if bytes.HasPrefix(raw, utf8BOM) {
			body += len(utf8BOM)
		}
		if d, done, err := r.chunked(raw, body); done {
			return d, err
		}
	}
	return r.sheetRows()
}

// sheetRows reads the rows (r.rows), and names the worksheet they come
// from when the file is a workbook (Dataset.Sheet).
func (r *reader) sheetRows() (*Dataset, error) {
	d, err := r.rows()
	if sr, ok := r.cr.(*sheetRecords); ok && d != nil {
		read := sr.read
		d.Sheet = &read
	}
	return d, err
}

// reader holds the state of one Read.
type reader struct {
	file    string
	opt     Options
	missing map[string]bool
	cr      records
	cols    []usedCol
	width   int
	named   int    // the header's fields up to its last name
	raw     []byte // the whole input, when read before (readBytes)
	// again is the input of ReadStream when it can be read again from its
	// start, for the text of a line an error names (quoteField).
	again io.ReadSeeker
	// numCodes: by column read as numbers, its missing-value markers that
	// are numbers (readNumbers; read only once the rows are read)
	numCodes map[string][]float64
	head     []byte // the first bytes of CSV text, for SuggestDialect
	// pointNotes: the notes on columns whose points may separate
	// thousands (thousandsPoints), for Dataset.Notes and PointNotes, and
	// pointCols the columns they are of
	pointNotes, pointCols []string
	// headerNames: the column names and the line they are on, once read
	// (names), to know a data line that repeats them
	headerNames []string
	headerLine  int
}

func (r *reader) fail(line int, column, format string, args ...any) *Error {
	return &Error{File: r.file, Line: line, Column: column, Msg: fmt.Sprintf(format, args...)}
}

// csvErr converts an error from the CSV reader (or another records
// source: its *Error gets the file's name).
func (r *reader) csvErr(err error, rec []string) *Error {
	var de *Error
	if errors.As(err, &de) {
		e := *de
		e.File = r.file
		return &e
	}
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		if errors.Is(pe.Err, csv.ErrFieldCount) {
			e := r.fail(pe.StartLine, "", "row has %d fields but the header has %d%s", len(rec), r.width, r.unnamedTail(len(rec)))
			if pe.StartLine == r.headerLine+1 {
				e.Msg += r.titleHint()
			}
			e.Err = err
			return e
		}
		if errors.Is(pe.Err, csv.ErrQuote) && pe.StartLine > 0 && pe.StartLine < pe.Line {
			// A quote opened and never closed: the error shows where the
			// reader gave up (often the end of the file); the record
			// starts where the quote was opened.
			e := r.fail(pe.StartLine, "", "malformed CSV: a quoted field of the row that starts on this line is not closed where it should be (an extraneous or missing \" in a quoted field), and the row runs on to line %d: check the quotes of this row", pe.Line)
			e.Err = err
			return e
		}
		e := r.fail(pe.Line, "", "malformed CSV at character %d: %v", pe.Column, pe.Err)
		e.Err = err
		r.quoteField(e, pe)
		return e
	}
	return &Error{File: r.file, Msg: "cannot read file: " + osReason(err), Err: err}
}

// sepLine refuses a CSV file whose first line (head, its first bytes) is
// "sep=;", the line a spreadsheet program writes to name the delimiter:
// read as the header it hides the real one. "" for any other file.
func sepLine(head []byte, d Dialect) string {
	head = bytes.TrimPrefix(head, utf8BOM)
	first, _, _ := bytes.Cut(head, []byte("\n"))
	first = bytes.TrimSuffix(first, []byte("\r"))
	if len(first) != 5 || !bytes.HasPrefix(bytes.ToLower(first), []byte("sep=")) {
		return ""
	}
	msg := fmt.Sprintf("line 1 is %s, the line a spreadsheet program writes to name the delimiter, not the header: delete the line, so that the header is the first line", quoteCell(string(first)))
	if word, ok := map[byte]string{',': "comma", ';': "semicolon", '\t': "tab"}[first[4]]; !ok {
		msg += " (ordplan reads files separated by commas, semicolons or tabs)"
	} else if want, err := ParseDialect(word, ""); err == nil && want.delim() != d.delim() {
		msg += fmt.Sprintf(", and read the file as %s-separated (data.delimiter: %s; ordplan fit and ordplan init: --delimiter %s)", want.DelimiterWord(), want.DelimiterWord(), want.DelimiterWord())
	}
	return msg
}

// titleHint says, of a CSV file whose header line is one field while the
// line after it has more, that the first line may be a title above the
// table; "" otherwise.
func (r *reader) titleHint() string {
	if r.head == nil || r.width != 1 {
		return ""
	}
	_, rest, ok := bytes.Cut(bytes.TrimPrefix(r.head, utf8BOM), []byte("\n"))
	if !ok {
		return ""
	}
	next, _, _ := bytes.Cut(rest, []byte("\n"))
	cr := csv.NewReader(bytes.NewReader(next))
	cr.Comma = r.opt.Dialect.delim()
	cr.LazyQuotes = true
	rec, err := cr.Read()
	if err != nil || len(rec) < 2 {
		return ""
	}
	return fmt.Sprintf("; the first line holds one field and the next %d: if the first line is a title above the table, delete it (a CSV file's header is its first line)", len(rec))
}

// unnamedTail says, of a row of n fields that the header outnumbers by
// its unnamed fields after the last named one alone (a header line that
// ends with a delimiter the rows do not have), that this is so; "" for
// any other row.
func (r *reader) unnamedTail(n int) string {
	if n >= r.width || n < r.named || r.named == 0 {
		return ""
	}
	if _, sheet := r.cr.(*sheetRecords); sheet {
		return ""
	}
	k := r.width - r.named
	them := "it"
	if k > 1 {
		them = "them"
	}
	return fmt.Sprintf(" (the last %d unnamed: the header line ends with %s after its last name, which this row does not have: remove %s from the header line)", k, words.Count(k, "delimiter", "delimiters"), them)
}

func (r *reader) read(in io.Reader) (*Dataset, error) {
	cols, err := r.opt.plan()
	if err != nil {
		return nil, &Error{File: r.file, Msg: err.Error()}
	}
	if err := r.start(in); err != nil {
		return nil, err
	}
	if err := r.header(cols); err != nil {
		return nil, err
	}
	if err := r.columnChecks(); err != nil {
		return nil, err
	}
	return r.sheetRows()
}

// columnChecks are the checks of the used columns (r.cols, found in the
// header) made before the rows are read, on a file, or on each part of
// data held as parts (partRecords.checkPart): the used columns a
// worksheet hides from view (markHidden), a row of totals in a worksheet
// (totalsRow), a nested column of a Parquet file (nestedUsed), and points
// that may separate thousands (thousandsPoints).
func (r *reader) columnChecks() error {
	if err := r.tableChecks(); err != nil {
		return err
	}
	for _, c := range r.cols {
		if err := r.nestedUsed(c.name, c.index); err != nil {
			return err
		}
	}
	return r.thousandsPoints()
}

// tableChecks are the checks of the table as a whole made before its
// rows are read, on data and on new rows to predict alike: the used
// columns a worksheet hides (markHidden, which also gives mergedUsed the
// used columns), and a row of totals at the foot of a worksheet's table
// (totalsRow) or of a CSV file read whole (csvTotals).
func (r *reader) tableChecks() error {
	if sr, ok := r.cr.(*sheetRecords); ok {
		sr.markHidden(r.cols)
		if e := sr.totalsRow(r.cols, r.opt.Dialect); e != nil {
			e.File = r.file
			return e
		}
	}
	if cr, ok := r.cr.(*csv.Reader); ok && r.raw != nil {
		body := int(cr.InputOffset())
		if bytes.HasPrefix(r.raw, utf8BOM) {
			body += len(utf8BOM)
		}
		if e := r.csvTotals(r.raw, body); e != nil {
			return e
		}
	}
	return nil
}

// header reads the header line and finds the used columns in it.
func (r *reader) header(cols []usedCol) error {
	names, where, err := r.names()
	if err != nil {
		return err
	}
	for i := range cols {
		j, ok := where[ColumnKey(cols[i].name)]
		if !ok {
			// A header read whole as one name is most often a file in
			// another dialect than the one asked for: say which.
			e := r.dialectHint(r.fail(0, cols[i].name, "%s", notInHeader(cols[i].role.String(), cols[i].name, names)))
			if !strings.Contains(e.Msg, "; the file looks") {
				e.Msg += r.titleHint()
			}
			if sr, ok := r.cr.(*sheetRecords); ok {
				e.Msg += fmt.Sprintf("; the header was read from row %d of the sheet %s: if the column names are in another row, give it with data.header_row (ordplan fit and ordplan init: --header-row)", sr.headerLine, quoteCell(sr.read.Name))
			}
			return e
		}
		cols[i].index = j
	}
	r.cols = cols
	for _, c := range cols {
		if r.asNumbers(c) {
			r.readNumbers(c.name)
		}
	}
	return nil
}

// asNumbers reports whether a used column's cells are read as numbers: a
// predictor not declared categorical, weights, an offset, a column a
// subset condition compares with a number.
func (r *reader) asNumbers(c usedCol) bool {
	return c.role == rolePredictor && r.opt.PredictorLevels[c.name] == nil || c.role == roleWeights || c.role == roleOffset || r.comparedAsNumbers(c.name)
}

// names reads the header line: the column names, trimmed, and where each
// one is. Every column needs a distinct, non-empty name, but for columns
// after the last named one: a file whose lines all end in a delimiter
// (as spreadsheets export a stray empty column) has unnamed columns there,
// which no plan can name; they are not among the names, and the rows keep
// the header's width. where is keyed by ColumnKey: a name is found in
// either Unicode form, and two names that are one in composed form are
// refused as a name given twice.
func (r *reader) names() ([]string, map[string]int, error) {
	hdr, err := r.cr.Read()
	if err == io.EOF {
		return nil, nil, &Error{File: r.file, Msg: "file is empty (a header line naming the columns is needed)", Err: ErrEmptyFile}
	}
	if err != nil {
		// Quoted names in another dialect (a semicolon file's "a";"b"
		// read as comma-separated) break the header's quoting.
		return nil, nil, r.dialectHint(r.csvErr(err, hdr))
	}
	line, _ := r.cr.FieldPos(0)
	if msg := sepLine(r.head, r.opt.Dialect); msg != "" {
		return nil, nil, r.fail(line, "", "%s", msg)
	}
	r.width = len(hdr)
	for len(hdr) > 1 && strings.TrimSpace(hdr[len(hdr)-1]) == "" {
		hdr = hdr[:len(hdr)-1]
	}
	r.named = len(hdr)
	names := make([]string, len(hdr))
	where := make(map[string]int, len(hdr))
	for i, h := range hdr {
		n := strings.TrimSpace(h)
		if n == "" {
			if ref := cellName(r.cr, i); ref != "" {
				if h := r.cr.(*sheetRecords).coveredHeader(i); h != "" {
					return nil, nil, r.fail(line, "", "header: column %d (cell %s) has no name%s", i+1, ref, h)
				}
				return nil, nil, r.fail(line, "", "header: column %d (cell %s) has no name: name it (or, if the column holds nothing, delete it)", i+1, ref)
			}
			return nil, nil, r.fail(line, "", "header: column %d has no name: name it (or, if the column holds nothing, delete it)", i+1)
		}
		if j, dup := where[ColumnKey(n)]; dup {
			if names[j] != n {
				return nil, nil, r.fail(line, "", "header: column names %s (column %d) and %s (column %d) are one name written in two Unicode forms (one with composed letters, one with letters and combining accents), which a plan cannot tell apart: rename one", quoteCell(names[j]), j+1, quoteCell(n), i+1)
			}
			cells := ""
			if a, b := cellName(r.cr, j), cellName(r.cr, i); a != "" && b != "" {
				cells = ", cells " + a + " and " + b
			}
			return nil, nil, r.fail(line, "", "header: column name %s appears twice (columns %d and %d%s): rename one, since a plan finds a column by its name", quoteCell(n), j+1, i+1, cells)
		}
		where[ColumnKey(n)] = i
		names[i] = n
	}
	r.headerNames, r.headerLine = names, line
	return names, where, nil
}

// repeatsHeader reports whether a data record is the header line again
// (every named column's cell its name, spaces aside), as when files were
// joined each with its header: the first cell is compared first, so that
// a data row costs one comparison.
func (r *reader) repeatsHeader(rec []string) bool {
	if len(r.headerNames) == 0 || len(rec) < len(r.headerNames) || strings.TrimSpace(rec[0]) != r.headerNames[0] {
		return false
	}
	for i, n := range r.headerNames {
		if strings.TrimSpace(rec[i]) != n {
			return false
		}
	}
	return true
}

// headerAgain is the error of a data record that repeats the header.
func (r *reader) headerAgain() *Error {
	line, _ := r.cr.FieldPos(0)
	shown := strings.Join(r.headerNames, ",")
	if len(shown) > 60 {
		shown = shown[:57] + "..."
	}
	return r.fail(line, "", "this line repeats the header (%s) of line %d: a data file has one header line; remove the repeated one (files joined together with their headers, or a table written twice?)", shown, r.headerLine)
}

// dialectHint is e with, when the first lines of the CSV text look
// written in another dialect than the one asked for, which one.
func (r *reader) dialectHint(e *Error) *Error {
	if hint := SuggestDialect(r.head, r.opt.Dialect); r.head != nil && hint != "" {
		e.Msg += "; " + hint
	}
	return e
}

// Header reads only the header line of the CSV file at path and returns
// the column names as Load sees them (spaces around names removed). It
// fails, with an *Error, where Load would fail on the header.
func Header(path string) ([]string, error) {
	return HeaderDialect(path, Dialect{})
}

// HeaderDialect is Header for a file in the given dialect.
func HeaderDialect(path string, d Dialect) ([]string, error) {
	f, err := openData(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return readHeader(f, path, d)
}

// HeaderWithRows is HeaderDialect for a file that needs data rows: a
// header that no data row follows (blank lines aside) is an Error whose
// Err is ErrNoRows. A broken first row is left to the reader of the rows,
// which names its line.
func HeaderWithRows(path string, d Dialect) ([]string, error) {
	f, err := openData(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	r := &reader{file: path, opt: Options{Dialect: d}}
	if err := r.start(f); err != nil {
		return nil, err
	}
	names, _, err := r.names()
	if err != nil {
		return nil, err
	}
	for {
		rec, err := r.cr.Read()
		if err == io.EOF {
			return nil, &Error{File: path, Msg: "no data rows after the header", Err: ErrNoRows}
		}
		if err != nil || !blankRow(rec) {
			return names, nil
		}
	}
}

// ReadHeader is Header for a reader; name is used in messages.
func ReadHeader(in io.Reader, name string) ([]string, error) {
	return readHeader(in, name, Dialect{})
}

func readHeader(in io.Reader, name string, d Dialect) ([]string, error) {
	if name == "" {
		name = "<input>"
	}
	r := &reader{file: name, opt: Options{Dialect: d}}
	if err := r.start(in); err != nil {
		return nil, err
	}
	names, _, err := r.names()
	return names, err
}

// trimsLeadingSpace says whether the CSV reader skips white space at the
// start of fields (so that a quote after a space still opens a quoted
// field): not when the delimiter is itself white space, such as a tab,
// which the skipping would swallow, merging an empty cell into the next.
// Cells are trimmed at both ends where they are read anyway.
func trimsLeadingSpace(delim rune) bool {
	return !unicode.IsSpace(delim)
}

// whole returns the bytes of the input: those readBytes was given, or all
// of in.
func (r *reader) whole(in io.Reader) ([]byte, error) {
	if r.raw != nil {
		return r.raw, nil
	}
	raw, err := io.ReadAll(in)
	if err != nil {
		return nil, &Error{File: r.file, Msg: "cannot read file: " + osReason(err), Err: err}
	}
	return raw, nil
}

// formatErr is ErrFileFormat for a file that as a whole is not in a form
// ordplan reads (format), else nil.
func formatErr(format bool) error {
	if format {
		return ErrFileFormat
	}
	return nil
}

// start sets up the CSV reader, skipping a UTF-8 byte order mark. A
// compressed, UTF-16, binary or CR-only file is refused, named as such.
func (r *reader) start(in io.Reader) error {
	if IsParquet(r.file) {
		raw, err := r.whole(in)
		if err != nil {
			return err
		}
		cr, msg, format := openParquet(raw)
		if msg != "" {
			return &Error{File: r.file, Msg: msg, Err: formatErr(format)}
		}
		if r.opt.Dialect.DecimalComma {
			cr.mark = ','
		}
		r.cr = cr
		return nil
	}
	if IsWorkbook(r.file) {
		raw, err := r.whole(in)
		if err != nil {
			return err
		}
		sr, msg, format := openSheet(raw, r.opt.Dialect)
		if msg != "" {
			return &Error{File: r.file, Msg: msg, Err: formatErr(format)}
		}
		r.cr = sr
		return nil
	}
	br := bufio.NewReaderSize(in, 64<<10)
	head, _ := br.Peek(4096)
	if msg := sniff(head); msg != "" {
		return &Error{File: r.file, Msg: msg, Err: ErrFileFormat}
	}
	if msg := checkUTF8(head); msg != "" {
		return &Error{File: r.file, Msg: msg}
	}
	r.head = bytes.Clone(head)
	if b, err := br.Peek(len(utf8BOM)); err == nil && bytes.Equal(b, utf8BOM) {
		br.Discard(len(utf8BOM))
	}
	cr := csv.NewReader(br)
	cr.Comma = r.opt.Dialect.delim()
	cr.FieldsPerRecord = 0 // the header sets the width
	cr.TrimLeadingSpace = trimsLeadingSpace(cr.Comma)
	r.cr = cr
	return nil
}

// quoteField adds to e, the error of a quote out of place on a data line
// (a bare quote inside a field, or text after a quoted field's closing
// quote), the column and the field it is in and how to write it: the
// quote may be in a column no plan reads (a note of 12" in a free-text
// column, as tab-separated exports often write one), which the message
// said nothing of.
func (r *reader) quoteField(e *Error, pe *csv.ParseError) {
	if pe.Line <= r.headerLine || pe.StartLine != pe.Line || len(r.headerNames) == 0 ||
		!errors.Is(pe.Err, csv.ErrBareQuote) && !errors.Is(pe.Err, csv.ErrQuote) {
		return
	}
	var in io.Reader
	switch {
	case r.raw != nil:
		in = bytes.NewReader(r.raw)
	case r.again != nil:
		if _, err := r.again.Seek(0, io.SeekStart); err != nil {
			return
		}
		in = r.again
	default:
		return
	}
	text := lineOf(in, pe.Line)
	k, field, ok := fieldAt(text, pe.Column-1, byte(r.opt.Dialect.delim()))
	if !ok || k >= len(r.headerNames) {
		return
	}
	if len(field) > maxShown || strings.ContainsFunc(field, unicode.IsControl) {
		return
	}
	e.Column = r.headerNames[k]
	// The field as written, not as a quoted text: its quotes are the
	// point.
	e.Msg += fmt.Sprintf("; the field is: %s ; a quote is read inside a field only when the whole field is enclosed in quotes and the quote is written twice, as %s ; correct the field, or remove the quote", field, `"`+strings.ReplaceAll(field, `"`, `""`)+`"`)
}

// lineOf is line n (1-based) of the text, without its line end.
func lineOf(in io.Reader, n int) string {
	br := bufio.NewReader(in)
	for ; n > 1; n-- {
		if _, err := br.ReadSlice('\n'); err == bufio.ErrBufferFull {
			n++ // a long line: read on
		} else if err != nil {
			return ""
		}
	}
	line, _ := br.ReadString('\n')
	return strings.TrimSuffix(strings.TrimSuffix(line, "\n"), "\r")
}

// fieldAt finds the field of a CSV line that byte at lies in: its index
// and its text as written (quotes kept). A field that starts with a quote
// runs to its closing quote, the quotes doubled inside it read as one.
func fieldAt(line string, at int, delim byte) (int, string, bool) {
	if at < 0 || at >= len(line) {
		return 0, "", false
	}
	start, k := 0, 0
	for start <= len(line) {
		end := start
		if end < len(line) && line[end] == '"' {
			end++
			for end < len(line) {
				if line[end] == '"' {
					if end+1 < len(line) && line[end+1] == '"' {
						end += 2
						continue
					}
					end++
					break
				}
				end++
			}
		}
		for end < len(line) && line[end] != delim {
			end++
		}
		if at < end || end == len(line) {
			return k, strings.TrimSpace(line[start:end]), true
		}
		start, k = end+1, k+1
	}
	return 0, "", false
}
