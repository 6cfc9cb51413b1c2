package data

import (
	"archive/zip"
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"github.com/xuri/excelize/v2"
)

// records is what the reader takes from a file of any format: the header
// and then one record of cell texts at a time, with the line (for a
// workbook, the sheet's row number) where a field starts. A format only
// yields header and cells; everything else is one path.
type records interface {
	Read() ([]string, error)
	FieldPos(field int) (line, column int)
}

// IsWorkbook reports whether a data file is read as an .xlsx workbook
// (by its name).
func IsWorkbook(name string) bool {
	return strings.EqualFold(filepath.Ext(name), ".xlsx")
}

// sheetRecords are the rows of one worksheet, from the header row on.
type sheetRecords struct {
	rows  [][]string
	first int // sheet row number of rows[0]
	// formulas: cells whose formula has no saved value (read as empty by
	// excelize): sheet row -> column -> the formula's text (unsavedFormulas)
	formulas map[int]map[int]string
	next     int
	width    int // header width, once read
	line     int // row number of the last record read
}

// openSheet reads the workbook in raw and returns the records of the
// dialect's sheet (the first sheet when none is named), starting at its
// header row.
func openSheet(raw []byte, d Dialect) (*sheetRecords, string) {
	if !bytes.HasPrefix(raw, []byte("PK\x03\x04")) {
		return nil, "is not an .xlsx workbook (it does not start like one, a ZIP container): save it as .xlsx, or give the file a .csv name if it is CSV text"
	}
	if msg := zipSizes(raw); msg != "" {
		return nil, "is not a readable .xlsx workbook (" + msg + "): open and save it again as .xlsx, or export the sheet as CSV"
	}
	f, err := excelize.OpenReader(bytes.NewReader(raw))
	if err != nil {
		return nil, "is not a readable .xlsx workbook (" + err.Error() + "): open and save it again as .xlsx, or export the sheet as CSV"
	}
	defer f.Close()
	sheets := f.GetSheetList()
	if len(sheets) == 0 {
		return nil, "workbook has no worksheets"
	}
	sheet := d.Sheet
	if sheet == "" {
		sheet = sheets[0]
	} else if idx, _ := f.GetSheetIndex(sheet); idx < 0 {
		return nil, fmt.Sprintf("workbook has no sheet %s (data.sheet, or --sheet); its sheets: %s", quoteCell(sheet), quoteList(sheets))
	}
	rows, err := f.GetRows(sheet, excelize.Options{RawCellValue: true})
	if err != nil {
		return nil, fmt.Sprintf("sheet %s cannot be read: %v", quoteCell(sheet), err)
	}
	h := max(d.HeaderRow, 1)
	if h > len(rows) {
		return nil, fmt.Sprintf("sheet %s has %d rows, so no header in row %d (data.header_row, or --header-row)", quoteCell(sheet), len(rows), h)
	}
	sr := &sheetRecords{rows: rows[h-1:], first: h}
	if files, x := workbookParts(raw, sheet); x != nil {
		sr.formulas = scanFormulas(x)
		scanBoolCells(x, func(col, row int) {
			if row <= len(rows) && col <= len(rows[row-1]) {
				switch rows[row-1][col-1] {
				case "1":
					rows[row-1][col-1] = boolText(true)
				case "0":
					rows[row-1][col-1] = boolText(false)
				}
			}
		})
		if styles, date1904 := timeStyles(files); styles != nil {
			scanTimeCells(x, styles, func(col, row int, k timeKind) {
				if row <= len(rows) && col <= len(rows[row-1]) {
					rows[row-1][col-1] = timeText(rows[row-1][col-1], k, date1904)
				}
			})
		}
	}
	merged, err := f.GetMergeCells(sheet, true)
	if err != nil {
		return nil, fmt.Sprintf("sheet %s cannot be read: %v", quoteCell(sheet), err)
	}
	markMerged(rows, h, merged)
	return sr, ""
}

// markMerged writes into the cells of data rows (below the header row h)
// that merged cells cover, but for the first (top left) one that holds
// their value, a text saying so (mergedText), which no column takes as a
// number, a level or a missing-value marker: a spreadsheet shows the
// value across the merged cells, but the others are empty, and read as
// missing values they would drop rows nobody left incomplete. Rows empty
// but for such cells stay empty; columns beyond the header are left alone.
func markMerged(rows [][]string, h int, merged []excelize.MergeCell) {
	if len(merged) == 0 {
		return
	}
	width := len(rows[h-1])
	blank := map[int]bool{}
	for _, m := range merged {
		c1, r1, err1 := excelize.CellNameToCoordinates(m.GetStartAxis())
		c2, r2, err2 := excelize.CellNameToCoordinates(m.GetEndAxis())
		if err1 != nil || err2 != nil {
			continue
		}
		text := mergedText(m.GetStartAxis() + ":" + m.GetEndAxis())
		for r := max(r1, h+1); r <= min(r2, len(rows)); r++ {
			empty, seen := blank[r]
			if !seen {
				empty = blankRow(rows[r-1])
				blank[r] = empty
			}
			if empty {
				continue
			}
			for c := c1; c <= min(c2, width); c++ {
				if r == r1 && c == c1 {
					continue
				}
				for len(rows[r-1]) < c {
					rows[r-1] = append(rows[r-1], "")
				}
				rows[r-1][c-1] = text
			}
		}
	}
}

// mergedText is what a cell covered by the merged cells ref (C2:C4) but
// not holding their value is read as.
func mergedText(ref string) string { return "(merged cells " + ref + ")" }

// blankRow reports whether a record has no filled cell: an empty sheet
// row, or a CSV line of delimiters alone (as a spreadsheet exports rows
// it holds empty), which is read as the blank line it is, as the CSV
// reader skips those, not as a row of missing values. (A Parquet row of
// nulls is a row of the data frame that wrote it, and counts.)
func blankRow(rec []string) bool {
	for _, c := range rec {
		if strings.TrimSpace(c) != "" {
			return false
		}
	}
	return true
}

// zipSizes checks the sizes a workbook's ZIP container gives its parts
// before excelize makes room for them: a part whose compressed bytes would
// run past the end of the file, or that claims more bytes than its
// compressed bytes can hold (deflate expands at most about 1032 times), is
// a broken or hostile file, whose claim would have the reader set aside
// gigabytes; "" when every claim can be true, or the container is not read
// here (excelize then says why).
func zipSizes(raw []byte) string {
	zr, err := zip.NewReader(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		return ""
	}
	for _, f := range zr.File {
		// The compressed bytes themselves must lie inside the file: a
		// claim beyond its end is believed by the expansion check below
		// (gigabytes claimed from a file of a few kilobytes).
		if start, err := f.DataOffset(); err == nil && (start > int64(len(raw)) || f.CompressedSize64 > uint64(int64(len(raw))-start)) {
			return fmt.Sprintf("its part %s claims %d compressed bytes, more than the file's %d bytes hold", quoteCell(f.Name), f.CompressedSize64, len(raw))
		}
		if f.UncompressedSize64 > 1<<16 && (f.UncompressedSize64-1<<16)/1100 > f.CompressedSize64 {
			return fmt.Sprintf("its part %s claims %d bytes, more than its %d compressed bytes can hold", quoteCell(f.Name), f.UncompressedSize64, f.CompressedSize64)
		}
	}
	return ""
}

// Read returns the next non-empty row, padded with empty cells to the
// header's width (a workbook leaves trailing empty cells out); a row with
// a filled cell beyond the header is an error, as in CSV.
func (s *sheetRecords) Read() ([]string, error) {
	for s.next < len(s.rows) {
		rec := s.rows[s.next]
		s.line = s.first + s.next
		s.next++
		for col, text := range s.formulas[s.line] {
			for len(rec) < col {
				rec = append(rec, "")
			}
			rec[col-1] = text
		}
		if blankRow(rec) {
			continue
		}
		if s.width == 0 {
			for len(rec) > 0 && strings.TrimSpace(rec[len(rec)-1]) == "" {
				rec = rec[:len(rec)-1]
			}
			s.width = len(rec)
			return rec, nil
		}
		if len(rec) > s.width {
			for _, c := range rec[s.width:] {
				if strings.TrimSpace(c) != "" {
					return rec, &csv.ParseError{StartLine: s.line, Line: s.line, Err: csv.ErrFieldCount}
				}
			}
			rec = rec[:s.width]
		}
		for len(rec) < s.width {
			rec = append(rec, "")
		}
		return rec, nil
	}
	return nil, io.EOF
}

// FieldPos gives the sheet row of the last record read.
func (s *sheetRecords) FieldPos(int) (int, int) { return s.line, 0 }
