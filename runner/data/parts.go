package data

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"slices"
	"sort"
	"strings"
)

// A data set may be held as parts: several files (of any format, each
// with its own header) with the same columns, read as one data set, in
// order, as if their rows were one file. The reader sees one stream of
// records (partRecords) whose lines are numbered through the parts: part
// k's line l is Offset_k + l, so that every row of the data set has its
// own line number (Dataset.Lines); PartSpan maps a number back to the
// part's file and its own line, and every message names those.

// PartSpan is one part of a data set read from several files: the file,
// and the numbers its lines have in the data set (Offset + the line in the
// file, up to Offset + Last).
type PartSpan struct {
	File   string
	Offset int
	Last   int
	// Sheet names the worksheet a workbook part was read from, as
	// Dataset.Sheet does for one file; nil for a part of another format.
	Sheet *SheetRead
}

// PartsName names a data set held as parts in messages: the files when
// there are two or three, else the first and the last with their number.
func PartsName(files []string) string {
	switch {
	case len(files) == 1:
		return files[0]
	case len(files) <= 3:
		return "parts " + strings.Join(files, ", ")
	}
	return fmt.Sprintf("%d parts %s, ..., %s", len(files), files[0], files[len(files)-1])
}

// LoadFiles reads a data set held in one file (Load) or as parts, files
// with the same columns read as one data set in order. A part's header
// may list the columns in another order; a part with other columns, or
// without data rows, is refused naming it. Messages about a row name its
// part's file and line.
func LoadFiles(paths []string, opt Options) (*Dataset, error) {
	switch len(paths) {
	case 0:
		return nil, &Error{File: "<data>", Msg: "no data file given"}
	case 1:
		return Load(paths[0], opt)
	}
	pr := &partRecords{paths: paths, dialect: opt.Dialect}
	r := &reader{file: PartsName(paths), opt: opt, missing: opt.missingSet(), cr: pr}
	cols, err := r.opt.plan()
	if err != nil {
		return nil, &Error{File: r.file, Msg: err.Error()}
	}
	if err := r.header(cols); err != nil {
		return nil, pr.local(err)
	}
	pr.whole = r
	if err := pr.checkPart(); err != nil {
		return nil, pr.local(err)
	}
	d, err := r.rows()
	if err != nil {
		return nil, pr.local(err)
	}
	d.Parts = pr.spans
	return d, nil
}

// Files lists the files a data set was read from: its parts, or its file.
func (d *Dataset) Files() []string {
	if len(d.Parts) == 0 {
		return []string{d.File}
	}
	out := make([]string, len(d.Parts))
	for i, p := range d.Parts {
		out[i] = p.File
	}
	return out
}

// Place gives the file and the file's own line of a line number of the
// data set (Dataset.Lines): for one file, the file and the number itself.
func (d *Dataset) Place(line int) (string, int) {
	return placeOf(d.Parts, d.File, line)
}

// Where writes a line number of the data set as "file:line".
func (d *Dataset) Where(line int) string {
	f, l := d.Place(line)
	return fmt.Sprintf("%s:%d", f, l)
}

func placeOf(spans []PartSpan, file string, line int) (string, int) {
	if len(spans) == 0 || line <= 0 {
		return file, line
	}
	k := sort.Search(len(spans), func(i int) bool { return spans[i].Offset+spans[i].Last >= line })
	if k == len(spans) {
		k = len(spans) - 1
	}
	return spans[k].File, line - spans[k].Offset
}

// partRecords are the records of several parts as one stream: the first
// part's header, then every part's rows in the first header's column
// order, each part opened (and its header checked) when the previous one
// ends. Lines are numbered through the parts (see PartSpan).
type partRecords struct {
	paths   []string
	dialect Dialect
	spans   []PartSpan
	header  []string // the first part's names
	cur     *reader  // the part being read
	perm    []int    // field of the part's record for each column of the header
	next    int      // the next part to open
	line    int      // the line (in the part) of the last record read
	// whole is the reader of the data set, once its header has given the
	// used columns (checkPart); noted: by column, the parts whose points
	// may separate thousands, and its note in whole.pointNotes
	whole *reader
	noted map[string]*partNote
}

// partNote is a note on the points of a column (thousandsPoints) over the
// parts that give it: the first part's words, the index of the note in
// the data set's notes, and the parts.
type partNote struct {
	text  string
	at    int
	files []string
}

// checkPart makes the checks of the used columns before the rows
// (reader.columnChecks: the columns a worksheet hides, points that may
// separate thousands) on the part being read, as on a file of its own,
// its used columns found in its header's order: a refusal names the
// part's file and line, a note the parts it holds for; the part's sheet
// is recorded (PartSpan.Sheet).
func (p *partRecords) checkPart() error {
	sub := *p.cur
	sub.opt, sub.missing, sub.numCodes, sub.pointNotes, sub.pointCols = p.whole.opt, p.whole.missing, p.whole.numCodes, nil, nil
	sub.cols = make([]usedCol, len(p.whole.cols))
	for i, c := range p.whole.cols {
		c.index = p.perm[c.index]
		sub.cols[i] = c
	}
	if err := sub.columnChecks(); err != nil {
		return inPart(err)
	}
	if sr, ok := sub.cr.(*sheetRecords); ok {
		// Read on: its hidden rows are counted as the part's rows are.
		p.spans[len(p.spans)-1].Sheet = &sr.read
	}
	path := p.paths[p.next-1]
	for i, n := range sub.pointNotes {
		col := sub.pointCols[i]
		if p.noted == nil {
			p.noted = map[string]*partNote{}
		}
		pn := p.noted[col]
		if pn == nil {
			pn = &partNote{text: n, at: len(p.whole.pointNotes)}
			p.noted[col] = pn
			p.whole.pointNotes = append(p.whole.pointNotes, "")
			p.whole.pointCols = append(p.whole.pointCols, col)
		}
		pn.files = append(pn.files, path)
		where := "In the part " + pn.files[0]
		switch n := len(pn.files); {
		case n > 3:
			where = fmt.Sprintf("In %d parts (%s, ..., %s)", n, pn.files[0], pn.files[n-1])
		case n > 1:
			where = "In the parts " + strings.Join(pn.files, ", ")
		}
		p.whole.pointNotes[pn.at] = where + ", " + strings.ToLower(pn.text[:1]) + pn.text[1:] // "Column w: ..."
	}
	return nil
}

// partError is a problem with a part as a whole: its file, what is wrong.
type partError struct{ err *Error }

func (e *partError) Error() string { return e.err.Error() }

// inPart makes err, when it is (or wraps) an *Error, a problem with the
// part as a whole; any other error is returned as it is.
func inPart(err error) error {
	var de *Error
	if errors.As(err, &de) {
		return &partError{de}
	}
	return err
}

// open starts part k: its reader, its header, the order of its columns.
func (p *partRecords) open(k int) error {
	path := p.paths[k]
	for _, s := range p.spans {
		if s.File == path {
			return &partError{&Error{File: path, Msg: "is listed twice among the parts; every part is read once"}}
		}
	}
	raw, err := ReadFile(path)
	if err != nil {
		if !errors.As(err, new(*Error)) {
			err = &Error{File: path, Msg: err.Error(), Err: err}
		}
		return inPart(err)
	}
	sub := &reader{file: path, opt: Options{Dialect: p.dialect}, raw: raw}
	if err := sub.start(bytes.NewReader(raw)); err != nil {
		return inPart(err)
	}
	names, where, err := sub.names()
	if err != nil {
		return inPart(err)
	}
	offset := 0
	if n := len(p.spans); n > 0 {
		offset = p.spans[n-1].Offset + p.spans[n-1].Last
	}
	p.spans = append(p.spans, PartSpan{File: path, Offset: offset, Last: 1})
	if k == 0 {
		p.header = names
	} else if msg := PartColumns(p.header, p.paths[0], names, raw, p.dialect); msg != "" {
		return &partError{&Error{File: path, Line: 1, Msg: msg}}
	}
	p.perm = make([]int, len(p.header))
	for i, n := range p.header {
		p.perm[i] = where[ColumnKey(n)]
	}
	p.cur, p.next = sub, k+1
	if p.whole != nil {
		return p.checkPart()
	}
	return nil
}

// OtherColumns says how names differ from the header as a set ("" when
// they do not): "it lacks ...; it has ... besides".
func OtherColumns(header, names []string) string {
	var lack, extra []string
	for _, h := range header {
		if !HasColumn(names, h) {
			lack = append(lack, h)
		}
	}
	for _, n := range names {
		if !HasColumn(header, n) {
			extra = append(extra, n)
		}
	}
	var parts []string
	if len(lack) > 0 {
		parts = append(parts, "it lacks "+quoteList(lack))
	}
	if len(extra) > 0 {
		parts = append(parts, "it has "+quoteList(extra)+" besides")
	}
	return strings.Join(parts, "; ")
}

// Read gives the first part's header, then the rows of every part.
func (p *partRecords) Read() ([]string, error) {
	if p.header == nil {
		if err := p.open(0); err != nil {
			return nil, err
		}
		p.line, _ = p.cur.cr.FieldPos(0) // the header's line, which messages name
		return slices.Clone(p.header), nil
	}
	for {
		rec, err := p.cur.cr.Read()
		if err == nil {
			p.line, _ = p.cur.cr.FieldPos(0)
			span := &p.spans[len(p.spans)-1]
			span.Last = max(span.Last, p.line)
			out := make([]string, len(p.perm))
			for i, j := range p.perm {
				out[i] = rec[j]
			}
			return out, nil
		}
		if err != io.EOF {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				// Lines through the parts, like FieldPos.
				q := *pe
				off := p.spans[len(p.spans)-1].Offset
				q.StartLine += off
				q.Line += off
				return rec, &q
			}
			return rec, &partError{p.cur.csvErr(err, rec)}
		}
		if p.spans[len(p.spans)-1].Last == 1 {
			return nil, &partError{&Error{File: p.paths[p.next-1], Msg: emptyPart}}
		}
		if p.next == len(p.paths) {
			return nil, io.EOF
		}
		if err := p.open(p.next); err != nil {
			return nil, err
		}
	}
}

// FieldPos gives the line of the last record read, numbered through the
// parts.
func (p *partRecords) FieldPos(int) (int, int) {
	if len(p.spans) == 0 {
		return 0, 0
	}
	return p.spans[len(p.spans)-1].Offset + p.line, 0
}

// local rewrites an error of the reader over the parts: a problem with a
// part as a whole as it is; a line numbered through the parts as the
// part's file and its own line; an error on no line names the parts.
func (p *partRecords) local(err error) error {
	var pe *partError
	if errors.As(err, &pe) {
		return pe.err
	}
	var de *Error
	if !errors.As(err, &de) {
		return err
	}
	e := *de
	if e.Line > 0 {
		e.File, e.Line = placeOf(p.spans, e.File, e.Line)
	}
	return &e
}

// emptyPart is the error of a part with a header and no rows, read with
// the others (LoadFiles) or alone (Options.Part: a queue's parts).
const emptyPart = "no data rows after the header; every part needs rows (leave an empty part out of data.parts or --parts)"

// PartsSummary gathers what the parts of data read part by part
// (Options.Part) keep, so that the checks a reading of the whole data
// makes of its kept rows (some row kept; at least two outcome categories)
// are made once, over all parts, in the same words: a part may keep no
// row, or rows of one category, as a stretch of one file may.
type PartsSummary struct {
	d Dataset
	w WeightTotal
	// miss: the parts' missing values by used column, and the rows their
	// tables describe, summed (the notes of mostly missing columns, W34,
	// that say why few rows remain: Check)
	miss MissingTable
}

// Add counts one part's rows, kept and dropped, and the weights as read
// (a part read with Options.Unscaled), after the parts before it.
func (s *PartsSummary) Add(ds *Dataset) {
	s.w.add(ds.Weights)
	s.d.Outcome = ds.Outcome
	s.d.RowsRead += ds.RowsRead
	s.d.N += ds.N
	s.d.RowsOutside += ds.RowsOutside
	s.d.RowsUndecided += ds.RowsUndecided
	s.d.RowsDropped += ds.RowsDropped
	for _, dc := range ds.Dropped {
		i := slices.IndexFunc(s.d.Dropped, func(c DropCount) bool { return c.Column == dc.Column })
		if i < 0 {
			s.d.Dropped = append(s.d.Dropped, dc)
			continue
		}
		s.d.Dropped[i].Rows += dc.Rows
	}
	if mt := ds.Missing; mt != nil {
		if s.miss.ByColumn == nil {
			s.miss.Columns = mt.Columns
			s.miss.ByColumn = make([]int, len(mt.ByColumn))
		}
		s.miss.Rows += mt.Rows
		for j, n := range mt.ByColumn {
			if j < len(s.miss.ByColumn) {
				s.miss.ByColumn[j] += n
			}
		}
	}
}

// Weights is the rows kept and the weights' sum of all parts, summed in
// the order of their rows, as one data set reads them: the total by which
// sampling weights are rescaled in every part (Options.WholeWeights).
func (s *PartsSummary) Weights() *WeightTotal {
	t := s.w
	return &t
}

// RowsRead is the number of data rows of all parts.
func (s *PartsSummary) RowsRead() int { return s.d.RowsRead }

// DropSummary describes the rows the parts dropped, in the words of
// Dataset.DropSummary for the data read as one.
func (s *PartsSummary) DropSummary() string { return s.d.DropSummary() }

// FewRowsSentence says why few rows remain, as Dataset.FewRowsSentence
// for the data read as one (the notes of mostly missing columns once
// Check has judged the whole data).
func (s *PartsSummary) FewRowsSentence() string {
	if s == nil {
		return ""
	}
	return s.d.FewRowsSentence()
}

// Check judges the whole data as reading it as one data set does: name
// names it in messages (PartsName), opt are the options the parts were
// read with, categories and counts the whole data's outcome categories
// and their (weighted) counts.
func (s *PartsSummary) Check(name string, opt Options, categories []string, counts []float64) error {
	r := &reader{file: name, opt: opt}
	r.opt.Part = false
	if cols, err := r.opt.plan(); err == nil {
		s.d.MostlyMissing = mostlyMissing(cols, &s.miss, opt.KeepIncomplete)
	}
	if err := r.noneKept(&s.d, true); err != nil {
		return err
	}
	if err := r.noneKept(&s.d, false); err != nil {
		return err
	}
	d := s.d
	d.Categories, d.Counts = categories, counts
	return r.twoCategories(&d)
}

// PartColumns is the message for a part whose header names differ from
// the first part's (first, of the part firstFile), "" when they do not:
// a part whose first lines (raw) look written in another dialect than d,
// the one every part is read in, is said so (a part saved with
// semicolons among parts saved with commas); else the columns that
// differ.
func PartColumns(first []string, firstFile string, names []string, raw []byte, d Dialect) string {
	msg := OtherColumns(first, names)
	if msg == "" {
		return ""
	}
	if want, ok := guessDialect(raw, d); ok && (want.delim() != d.delim() || want.DecimalComma != d.DecimalComma) {
		return fmt.Sprintf("looks %s-separated with a decimal %s, but every part is read as the first part %s is, %s-separated with a decimal %s (data.delimiter and data.decimal; ordplan fit: --delimiter and --decimal): save every part in one dialect",
			want.DelimiterWord(), want.DecimalWord(), firstFile, d.DelimiterWord(), d.DecimalWord())
	}
	return fmt.Sprintf("has other columns than the first part %s (%s); every part must have the same columns", firstFile, msg)
}
