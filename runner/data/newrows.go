package data

import (
	"bytes"
	"fmt"
	"io"
	"strings"
)

// Rows are new covariate rows to predict: predictor values (and offsets)
// without an outcome.
type Rows struct {
	File       string
	Predictors []string
	X          []float64 // N x K
	Offset     []float64 // nil when no offset column
	N          int
	Lines      []int // line of each kept row
	// Header is the file's header; Cells the trimmed cells of each kept
	// row, so that outputs can carry the rows' identifying columns.
	Header   []string
	Cells    [][]string
	RowsRead int
	Skipped  []int // lines skipped for a missing value
	// SkippedColumns are, per skipped line, the columns read whose cells
	// are missing there (in the order of the columns read).
	SkippedColumns [][]string
	SHA256         string // hex SHA-256 of the file's bytes
	// Sheet names the worksheet of a workbook the rows come from (nil for
	// other files).
	Sheet *SheetRead
	// Fails lists, per kept row, the subset conditions (Options.Keep, by
	// index) the row fails, as the data's reader decides; Undecided those
	// it cannot be checked against (its cell there is missing); Unchecked
	// the conditions whose column the file lacks, which no row is checked
	// against. A row failing a condition is kept: it is predicted and
	// flagged (the caller says so), not refused.
	Fails, Undecided [][]int
	Unchecked        []int
}

// LoadRows reads a file of rows to predict: a header naming at least
// the predictors (and the offset column when offset is not ""). Rows with a
// missing value are skipped and their lines listed; bad values are errors
// naming the line and column.
func LoadRows(path string, predictors []string, offset string, missingTokens []string) (*Rows, error) {
	return LoadRowsLevels(path, predictors, nil, offset, missingTokens)
}

// LoadRowsLevels is LoadRows with categorical columns: the cells of a
// column in levels must be one of its levels and are stored as the level's
// index; a level not listed is an error naming the line and column.
func LoadRowsLevels(path string, predictors []string, levels map[string][]string, offset string, missingTokens []string) (*Rows, error) {
	return LoadRowsMissing(path, predictors, levels, offset, missingTokens, nil, Dialect{})
}

// LoadRowsMissing is LoadRowsLevels with columns' own missing-value codes
// (a data dictionary's), besides missingTokens, and the data file's
// dialect: the new rows are written like the data (delimiter, decimal mark;
// the sheet and header row of a workbook). The file is read through the
// same header and records path as data files, so it may be CSV text, an
// .xlsx workbook or a Parquet file.
func LoadRowsMissing(path string, predictors []string, levels map[string][]string, offset string, missingTokens []string, columnMissing map[string][]string, dialect Dialect) (*Rows, error) {
	return LoadNewRows(path, predictors, levels, Options{Offset: offset, MissingTokens: missingTokens, ColumnMissing: columnMissing, Dialect: dialect})
}

// LoadNewRows is LoadRowsMissing with the data's reading options in opt
// (Offset, MissingTokens, ColumnMissing, Dialect; the other fields are not
// read) and the subset conditions opt.Keep, which each row is checked
// against (Rows.Fails) but not dropped for.
func LoadNewRows(path string, predictors []string, levels map[string][]string, opt Options) (*Rows, error) {
	offset, dialect := opt.Offset, opt.Dialect
	raw, err := ReadFile(path)
	if err != nil {
		return nil, err
	}
	hash := HashBytes(raw)
	r := &reader{file: path, opt: Options{MissingTokens: opt.MissingTokens, ColumnMissing: opt.ColumnMissing, Dialect: dialect}}
	r.missing = r.opt.missingSet()
	if err := r.start(bytes.NewReader(raw)); err != nil {
		return nil, err
	}
	head, index, err := r.names()
	if err != nil {
		return nil, err
	}
	cols := append([]string(nil), predictors...)
	if offset != "" {
		cols = append(cols, offset)
	}
	pos := make([]int, len(cols))
	for j, c := range cols {
		i, ok := index[ColumnKey(c)]
		if !ok {
			return nil, &Error{File: path, Column: c, Msg: notInHeader("", c, head) + newRowsDialectHint(r.head, dialect)}
		}
		if err := r.nestedUsed(c, i); err != nil {
			return nil, err
		}
		pos[j] = i
		if _, cat := levels[c]; !cat || j >= len(predictors) {
			r.readNumbers(c)
		}
	}
	r.raw = raw
	for j, c := range cols {
		r.cols = append(r.cols, usedCol{name: c, index: pos[j]})
	}
	if err := r.tableChecks(); err != nil {
		return nil, err
	}
	keep := make([]int, len(opt.Keep)) // the column of each condition, -1: absent
	var unchecked []int
	for k, c := range opt.Keep {
		i, ok := index[c.Column]
		if !ok {
			i = -1
			unchecked = append(unchecked, k)
		}
		keep[k] = i
	}
	cr := r.cr
	K := len(predictors)
	rs := &Rows{File: path, Predictors: predictors, SHA256: hash, Header: head, Unchecked: unchecked}
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, r.csvErr(err, rec)
		}
		if r.repeatsHeader(rec) {
			return nil, r.headerAgain()
		}
		rs.RowsRead++
		line, _ := cr.FieldPos(0)
		vals := make([]float64, len(cols))
		var missing []string
		for j, c := range cols {
			cell := strings.TrimSpace(rec[pos[j]])
			if r.missingIn(c, cell) {
				missing = append(missing, c)
				continue
			}
			if missing != nil {
				continue // a skipped row: its other cells are not read
			}
			var v float64
			var msg string
			if lv, cat := levels[c]; cat && j < K {
				l := -1
				for i, x := range lv {
					if sameText(x, cell) {
						l = i
					}
				}
				if l < 0 {
					hint := formulaHint(cell, cellName(cr, pos[j]))
					if hint == "" {
						hint = levelHint(cell, lv, "level", "write the new rows' values as the levels are written")
					}
					msg = "value " + quoteCell(cell) + " is not one of the declared levels of this categorical predictor: " + quoteList(lv) + hint
				}
				v = float64(l)
			} else {
				v, msg = dialect.number(cell)
				msg += r.notNumberHint(c, cell, msg, cellName(cr, pos[j]))
			}
			if msg != "" {
				return nil, &Error{File: path, Line: line, Column: c, Msg: msg}
			}
			vals[j] = v
		}
		if missing != nil {
			rs.Skipped = append(rs.Skipped, line)
			rs.SkippedColumns = append(rs.SkippedColumns, missing)
			continue
		}
		rs.X = append(rs.X, vals[:K]...)
		if offset != "" {
			rs.Offset = append(rs.Offset, vals[K])
		}
		rs.Lines = append(rs.Lines, line)
		cells := make([]string, len(head))
		for i := range cells {
			if i < len(rec) {
				cells[i] = strings.TrimSpace(rec[i])
			}
		}
		rs.Cells = append(rs.Cells, cells)
		var fails, undecided []int
		for k, c := range opt.Keep {
			if keep[k] < 0 {
				continue
			}
			cell := cells[keep[k]]
			if r.missingIn(c.Column, cell) {
				undecided = append(undecided, k)
			} else if ok, _ := c.keeps(cell, dialect); !ok {
				fails = append(fails, k)
			}
		}
		rs.Fails = append(rs.Fails, fails)
		rs.Undecided = append(rs.Undecided, undecided)
		rs.N++
	}
	if rs.RowsRead == 0 {
		return nil, &Error{File: path, Msg: "no data rows after the header"}
	}
	if sr, ok := cr.(*sheetRecords); ok {
		read := sr.read
		rs.Sheet = &read
	}
	return rs, nil
}

// newRowsDialectHint says, of a CSV file of new rows whose header does
// not name a column and whose first lines look written in another
// dialect than the one they are read in (guessDialect), that new rows are
// read as data.delimiter and data.decimal say; "" otherwise.
func newRowsDialectHint(head []byte, d Dialect) string {
	want, ok := guessDialect(head, d)
	if head == nil || !ok || want.delim() == d.delim() && want.DecimalComma == d.DecimalComma {
		return ""
	}
	return fmt.Sprintf("; the file looks %s-separated with a decimal %s, but new rows are read as the plan's data.delimiter and data.decimal say, %s-separated with a decimal %s: write the file so (or, when the data are a workbook or a Parquet file, whose reading those keys do not change, set them: delimiter: %s, decimal: %s)",
		want.DelimiterWord(), want.DecimalWord(), d.DelimiterWord(), d.DecimalWord(), want.DelimiterWord(), want.DecimalWord())
}
