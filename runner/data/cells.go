package data

import (
	"io"
	"strings"
)

// ColumnCells reads the data file at path in the given dialect (any
// format: CSV text, workbook, Parquet) through the same header and records
// path as Load, and calls each with the line (the sheet row of a workbook)
// and the trimmed cell of the named column of every data row, stopping at
// the first error each returns. A column missing from the header is an
// *Error naming the file and the columns it has.
func ColumnCells(path string, d Dialect, column string, each func(line int, cell string) error) error {
	f, err := openData(path)
	if err != nil {
		return err
	}
	defer f.Close()
	r := &reader{file: path, opt: Options{Dialect: d}}
	if err := r.start(f); err != nil {
		return err
	}
	names, where, err := r.names()
	if err != nil {
		return err
	}
	col, ok := where[ColumnKey(column)]
	if !ok {
		return r.fail(0, column, "%s", notInHeader("", column, names))
	}
	for {
		rec, err := r.cr.Read()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return r.csvErr(err, rec)
		}
		if r.repeatsHeader(rec) {
			return r.headerAgain()
		}
		line, _ := r.cr.FieldPos(col)
		if err := each(line, strings.TrimSpace(rec[col])); err != nil {
			return err
		}
	}
}
