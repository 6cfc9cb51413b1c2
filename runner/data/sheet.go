package data

import (
	"archive/zip"
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/xuri/excelize/v2"

	"ordplan/internal/words"
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
	rows  [][]string // from the header row on, without the lead columns
	first int        // sheet row number of rows[0]
	// lead is the number of leading columns, empty in every row, left out
	// of rows (emptyLead): rows[i][j] is the cell of sheet column lead+j+1
	lead int
	// formulas: cells whose formula has no saved value (read as empty by
	// excelize): sheet row -> column -> the formula's text
	// (unsavedFormulas), written into the rows in their place
	formulas map[int]map[int]string
	// totals: cells below the header row whose formula aggregates their
	// own column, as a totals row's do: sheet row -> column -> the
	// formula (totalFormulas), refused in a used column (totalsRow)
	totals map[int]map[int]string
	next   int
	width  int // header width, once read
	line   int // row number of the last record read
	// hiddenRows are the sheet rows hidden from view (scanHiddenRows);
	// read.HiddenRows counts those among the records read
	hiddenRows map[int]bool
	// hiddenCols are the sheet columns (1-based) of the header hidden
	// from view (excelize's GetColVisible); usedHidden names the used ones
	hiddenCols map[int]bool
	read       SheetRead
	header     []string // the header's names, once read
	headerLine int      // its sheet row
	// merged are the sheet's merged ranges, for the messages about a
	// header cell they cover (coveredHeader)
	merged []excelize.MergeCell
	// used are the used columns, once found (markHidden)
	used []usedCol
}

// coveredHeader says, of the header row's cell of field (0-based), that
// merged cells cover it, their one value held by another cell, and what
// to do; "" when they do not: the sheet shows one name across the merged
// columns, while every column needs a name of its own.
func (s *sheetRecords) coveredHeader(field int) string {
	col, row := s.lead+field+1, s.headerLine
	for _, m := range s.merged {
		c1, r1, err1 := excelize.CellNameToCoordinates(m.GetStartAxis())
		c2, r2, err2 := excelize.CellNameToCoordinates(m.GetEndAxis())
		if err1 != nil || err2 != nil || col < c1 || col > c2 || row < r1 || row > r2 || col == c1 && row == r1 {
			continue
		}
		return fmt.Sprintf("; the cell is one of the merged cells %s:%s, whose one value, held by %s, the sheet shows across them all: unmerge them and name each column in the header row", m.GetStartAxis(), m.GetEndAxis(), m.GetStartAxis())
	}
	return ""
}

// SheetRead names the worksheet a workbook's data were read from.
type SheetRead struct {
	Name string
	// Hidden: a hidden sheet, read because data.sheet (--sheet) named it
	// (chooseSheet never picks one).
	Hidden bool
	// HiddenRows counts the data rows read that the sheet hides from view
	// (hidden rows, or rows a filter hides): they are read as the data
	// they are, but nobody looking at the sheet sees them.
	HiddenRows int
	// HiddenColumns are the columns read (the used ones) that the sheet
	// hides from view, in the sheet's order: read as the data they are,
	// as hidden rows are.
	HiddenColumns []HiddenColumn
	// Sheets is the number of the workbook's sheets, hidden ones too.
	Sheets int
}

// chooseSheet is the worksheet to read, in the workbook's spelling of its
// name, and whether it is hidden; msg says why there is none. A sheet
// named (data.sheet, --sheet) is read, hidden or not. With none named, the
// one visible sheet that holds a filled cell is read: a hidden sheet (an
// old draft, a lookup table) is never read unless named, and when several
// visible sheets hold cells the program does not guess which are the data
// (the first is often notes or a summary): msg lists them and asks for
// data.sheet. `ordplan init` reads the sheet this picks (ProfileFile).
func chooseSheet(f *excelize.File, named string) (sheet string, hidden bool, msg string) {
	sheets := f.GetSheetList()
	if len(sheets) == 0 {
		return "", false, "workbook has no worksheets"
	}
	visible := func(s string) bool { v, err := f.GetSheetVisible(s); return err == nil && v }
	if named != "" {
		for _, s := range sheets {
			if s == named {
				return s, !visible(s), ""
			}
		}
		for _, s := range sheets {
			if strings.EqualFold(s, named) {
				return s, !visible(s), ""
			}
		}
		return "", false, fmt.Sprintf("workbook has no sheet %s (data.sheet, or --sheet); its sheets: %s", quoteCell(named), quoteList(sheets))
	}
	var filled, shown, hiddenFilled []string
	for _, s := range sheets {
		switch v := visible(s); {
		case v && holdsCells(f, s):
			filled = append(filled, s)
		case v:
			shown = append(shown, s)
		case holdsCells(f, s):
			hiddenFilled = append(hiddenFilled, s)
		}
	}
	switch {
	case len(filled) == 1:
		return filled[0], false, ""
	case len(filled) > 1:
		return "", false, fmt.Sprintf("workbook has %d visible sheets with cells filled (%s): name the sheet of the data with data.sheet (ordplan fit and ordplan init: --sheet)", len(filled), quoteList(filled))
	case len(hiddenFilled) > 0:
		return "", false, fmt.Sprintf("workbook's visible sheets are empty; only hidden sheets hold cells (%s), and a hidden sheet is read only when named: if it holds the data, name it with data.sheet (ordplan fit and ordplan init: --sheet)", quoteList(hiddenFilled))
	}
	return "", false, fmt.Sprintf("workbook is empty: no sheet has a filled cell (its sheets: %s)", quoteList(sheets))
}

// holdsCells reports whether a worksheet has a filled cell (a formatted
// cell without a value is not one), reading its rows up to the first
// such.
func holdsCells(f *excelize.File, sheet string) bool {
	rows, err := f.Rows(sheet)
	if err != nil {
		return false
	}
	defer rows.Close()
	for rows.Next() {
		cols, err := rows.Columns(excelize.Options{RawCellValue: true})
		if err != nil {
			return false
		}
		if !blankRow(cols) {
			return true
		}
	}
	return false
}

// otherSheets is, for a message about sheet, the workbook's other sheets
// ("; the workbook's other sheets: ..."), the hidden ones said to be so;
// "" when it has none.
func otherSheets(f *excelize.File, sheet string) string {
	var others []string
	for _, s := range f.GetSheetList() {
		if s == sheet {
			continue
		}
		q := quoteCell(s)
		if v, err := f.GetSheetVisible(s); err == nil && !v {
			q += " (hidden)"
		}
		others = append(others, q)
	}
	if len(others) == 0 {
		return ""
	}
	return "; the workbook's other sheets: " + strings.Join(others, ", ") + " (data.sheet, or --sheet, names the one to read)"
}

// workbookPart is the folder of a ZIP container's entries that makes it
// an .xlsx workbook (xl/workbook.xml and the sheets), as "[Content_Types].xml"
// makes it an Office file.
const workbookPart = "xl/"

// zipHolds says whether the ZIP container in raw holds an entry named
// name, or under the folder name (ending in /); false when it cannot be
// read as one.
func zipHolds(raw []byte, name string) bool {
	zr, err := zip.NewReader(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		return false
	}
	for _, f := range zr.File {
		if f.Name == name || strings.HasSuffix(name, "/") && strings.HasPrefix(f.Name, name) {
			return true
		}
	}
	return false
}

// zipWorkbook says whether b, a ZIP container or its first bytes, holds
// an .xlsx workbook: an entry under xl/ (zipHolds), or, when only its
// first bytes are at hand, a first entry under xl/ or the name
// xl/workbook.xml among them (a local header names its entry in plain
// text).
func zipWorkbook(b []byte) bool {
	if zipHolds(b, workbookPart) {
		return true
	}
	const nameAt = 30 // the name follows the local header's 30 bytes
	if len(b) > nameAt && bytes.HasPrefix(b[nameAt:], []byte(workbookPart)) {
		return true
	}
	return bytes.Contains(b[:min(len(b), 4096)], []byte(workbookPart+"workbook.xml"))
}

// zipEntries lists the first names of the ZIP container in raw, for a
// message.
func zipEntries(raw []byte) string {
	zr, err := zip.NewReader(bytes.NewReader(raw), int64(len(raw)))
	if err != nil || len(zr.File) == 0 {
		return "no file"
	}
	var names []string
	for _, f := range zr.File {
		names = append(names, f.Name)
	}
	return "its files: " + quoteList(names)
}

// workbookFormat says what keeps raw, the bytes of a file named .xlsx,
// from being read as a workbook at all: compressed, not a ZIP container,
// a ZIP container cut short (its directory, kept at its end, missing) or
// holding no workbook, or one whose parts claim impossible sizes
// (zipSizes); "" when excelize may open it.
func workbookFormat(raw []byte) string {
	const again = ": open and save it again as .xlsx, or export the sheet as CSV"
	if !bytes.HasPrefix(raw, []byte("PK\x03\x04")) {
		if msg := sniff(raw); strings.Contains(msg, "-compressed; ") {
			return msg
		}
		return "is not an .xlsx workbook (it does not start like one, a ZIP container): save it as .xlsx, or give the file a .csv name if it is CSV text"
	}
	// The end of central directory record: 22 bytes and a comment of at
	// most 65535, at the end of the container.
	if bytes.LastIndex(raw[max(0, len(raw)-(22+65535)):], []byte("PK\x05\x06")) < 0 {
		return "starts like an .xlsx workbook (a ZIP container) but does not end like one (the container's directory, kept at its end, is missing): it is cut short, as by a copy or download that stopped; copy or save it again"
	}
	if _, err := zip.NewReader(bytes.NewReader(raw), int64(len(raw))); err == nil && !zipHolds(raw, workbookPart) && !zipHolds(raw, "[Content_Types].xml") {
		return "is a ZIP archive but not an .xlsx workbook (it holds no workbook, xl/workbook.xml; " + zipEntries(raw) + "): extract the data file from it, or save the sheet as .xlsx"
	}
	if msg := zipSizes(raw); msg != "" {
		return "is not a readable .xlsx workbook (" + msg + ")" + again
	}
	return ""
}

// openSheet reads the workbook in raw and returns the records of the
// dialect's sheet (chooseSheet: the one visible sheet with cells when
// none is named), starting at its header row. format says that msg is
// about the file as a whole: no workbook, or one broken or cut short
// (workbookFormat).
func openSheet(raw []byte, d Dialect) (*sheetRecords, string, bool) {
	if msg := workbookFormat(raw); msg != "" {
		return nil, msg, true
	}
	f, err := excelize.OpenReader(bytes.NewReader(raw))
	if err != nil {
		return nil, "is not a readable .xlsx workbook (" + err.Error() + "): open and save it again as .xlsx, or export the sheet as CSV", true
	}
	defer f.Close()
	sr, msg := readSheet(f, raw, d)
	return sr, msg, false
}

// readSheet is openSheet once the workbook f (of bytes raw) is open.
func readSheet(f *excelize.File, raw []byte, d Dialect) (*sheetRecords, string) {
	sheet, hidden, msg := chooseSheet(f, d.Sheet)
	if msg != "" {
		return nil, msg
	}
	rows, err := f.GetRows(sheet, excelize.Options{RawCellValue: true})
	if err != nil {
		return nil, fmt.Sprintf("sheet %s cannot be read: %v", quoteCell(sheet), err)
	}
	if len(rows) == 0 {
		return nil, fmt.Sprintf("sheet %s is empty%s", quoteCell(sheet), otherSheets(f, sheet))
	}
	h := max(d.HeaderRow, 1)
	if h > len(rows) {
		return nil, fmt.Sprintf("sheet %s has %d rows, so no header in row %d (data.header_row, or --header-row)", quoteCell(sheet), len(rows), h)
	}
	sr := &sheetRecords{first: h, read: SheetRead{Name: sheet, Hidden: hidden, Sheets: len(f.GetSheetList())}}
	files, x := workbookParts(raw, sheet)
	if x != nil {
		sr.formulas = scanFormulas(x)
		sr.totals = totalFormulas(f, sheet, x, h)
		sr.hiddenRows = scanHiddenRows(x)
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
		if d.DecimalComma {
			scanNumberCells(x, func(col, row int) {
				if row <= len(rows) && col <= len(rows[row-1]) {
					rows[row-1][col-1] = commaNumber(rows[row-1][col-1])
				}
			})
		}
	}
	if x != nil {
		if part := sheetPart(files, sheet); part != nil {
			withoutRows(f, part.Name, x)
		}
	}
	merged, err := f.GetMergeCells(sheet, true)
	if err != nil {
		return nil, fmt.Sprintf("sheet %s cannot be read: %v", quoteCell(sheet), err)
	}
	markMerged(rows, h, merged)
	sr.merged = merged
	for row, cols := range sr.formulas {
		for ; row > len(rows); rows = append(rows, nil) {
		}
		for col, text := range cols {
			for len(rows[row-1]) < col {
				rows[row-1] = append(rows[row-1], "")
			}
			rows[row-1][col-1] = text
		}
	}
	sr.hiddenCols = hiddenColumns(f, sheet, len(rows[h-1]))
	sr.rows = rows[h-1:]
	sr.lead = emptyLead(sr.rows)
	for i, r := range sr.rows {
		sr.rows[i] = r[min(sr.lead, len(r)):]
	}
	return sr, ""
}

// emptyLead is the number of leading columns empty in every row: a table
// that starts at a later column (B2) leaves them so, and, holding nothing,
// they are no columns of it.
func emptyLead(rows [][]string) int {
	lead := -1
	for _, r := range rows {
		n := 0
		for n < len(r) && strings.TrimSpace(r[n]) == "" {
			n++
		}
		if n == len(r) {
			continue // an empty row
		}
		if lead < 0 || n < lead {
			lead = n
		}
	}
	return max(lead, 0)
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
		if blankRow(rec) {
			continue
		}
		if s.width > 0 && s.hiddenRows[s.line] {
			s.read.HiddenRows++
		}
		if s.width == 0 {
			for len(rec) > 0 && strings.TrimSpace(rec[len(rec)-1]) == "" {
				rec = rec[:len(rec)-1]
			}
			s.width, s.header = len(rec), rec
			s.headerLine = s.line
			return rec, nil
		}
		if len(rec) > s.width {
			for j, c := range rec[s.width:] {
				if strings.TrimSpace(c) != "" {
					return rec, &Error{Line: s.line, Msg: s.beyondHeader(s.width+j, c), Err: &csv.ParseError{StartLine: s.line, Line: s.line, Err: csv.ErrFieldCount}}
				}
			}
			rec = rec[:s.width]
		}
		for len(rec) < s.width {
			rec = append(rec, "")
		}
		if len(s.merged) > 0 {
			if e := s.mergedUsed(rec); e != nil {
				return rec, e
			}
		}
		return rec, nil
	}
	return nil, io.EOF
}

// beyondHeader says what is wrong with the last row read, whose field
// (0-based) holds cell, right of the header's last name: a note beside
// the table, or, when the header holds one name (a title above the
// table), a header lower down than the row read as it.
func (s *sheetRecords) beyondHeader(field int, cell string) string {
	last := cellName(s, s.width-1)
	last = last[:len(last)-len(strconv.Itoa(s.line))] // its column's letters
	msg := fmt.Sprintf("cell %s holds %s, right of the table, whose header (row %d) names %d columns, up to column %s", cellName(s, field), quoteCell(strings.TrimSpace(cell)), s.headerLine, s.width, last)
	if s.width == 1 {
		msg = fmt.Sprintf("cell %s holds %s, right of the header read from row %d, which holds one name, %s: if that is a title above the table, give the row of the column names with data.header_row (ordplan fit and ordplan init: --header-row); if the cell is a note beside the data, move or delete it", cellName(s, field), quoteCell(strings.TrimSpace(cell)), s.headerLine, quoteCell(strings.TrimSpace(s.header[0])))
		return msg
	}
	if h := s.coveredHeader(field); h != "" {
		// The header's last names were merged cells, read as empty.
		top, _ := excelize.CoordinatesToCellName(s.lead+field+1, s.headerLine)
		return msg + "; its column's header cell " + top + h[len("; the cell"):]
	}
	return msg + ": if it is a note beside the data, move or delete it; if it is data, give its column a name in the header row"
}

// FieldPos gives the sheet row of the last record read.
func (s *sheetRecords) FieldPos(int) (int, int) { return s.line, 0 }

// cellName is the reference (E2) of field (0-based) of the last record a
// worksheet's records gave, "" for any other records (CSV, Parquet, parts,
// whose fields follow the first part's order).
func cellName(cr records, field int) string {
	s, ok := cr.(*sheetRecords)
	if !ok || s.line == 0 {
		return ""
	}
	name, err := excelize.CoordinatesToCellName(s.lead+field+1, s.line)
	if err != nil {
		return ""
	}
	return name
}

// scanHiddenRows finds the rows of a worksheet's XML hidden from view
// (<row r="5" hidden="1">: hidden by hand, by a filter or by a collapsed
// outline).
func scanHiddenRows(x []byte) map[int]bool {
	var out map[int]bool
	eachTag(x, "row", func(tag []byte) {
		h, ok := attr(tag, "hidden")
		if !ok || !(h == "1" || h == "true") {
			return
		}
		r, ok := attr(tag, "r")
		if !ok {
			return
		}
		if n, err := strconv.Atoi(r); err == nil && n > 0 {
			if out == nil {
				out = map[int]bool{}
			}
			out[n] = true
		}
	})
	return out
}

// HiddenColumn is a column of the header a sheet hides from view: its
// name, and its letters in the sheet (C).
type HiddenColumn struct{ Name, Letters string }

// HiddenNames are the names of the columns read that the sheet hides.
func (s *SheetRead) HiddenNames() []string {
	var out []string
	for _, c := range s.HiddenColumns {
		out = append(out, c.Name)
	}
	return out
}

// withoutRows gives excelize, for its parse of the worksheet stored as
// part name (its XML x), the worksheet without its rows: <sheetData>
// emptied. The cells are read by then (GetRows streams them, and the
// scans of the XML in openSheet read x), and what is asked of excelize
// after (GetMergeCells, GetColVisible: the merged ranges and the columns'
// settings lie outside <sheetData>) is then a parse of a few kilobytes,
// not of every cell again, with excelize's own reading of those elements
// (overlapping ranges joined, a range's spelling, the last <col> that
// covers a column). When the rows cannot be told apart for sure (no
// <sheetData> element, or markup before or in it that could hide a tag:
// a comment, a CDATA section), nothing changes, and excelize parses the
// whole worksheet as before.
func withoutRows(f *excelize.File, name string, x []byte) {
	root := bytes.Index(x, []byte("worksheet"))
	lt := bytes.LastIndexByte(x[:max(root, 0)], '<')
	if root < 0 || lt < 0 {
		return
	}
	prefix := string(x[lt+1 : root]) // the namespace prefix, "x:" or ""
	open := []byte("<" + prefix + "sheetData")
	start := bytes.Index(x, open)
	if start < 0 || bytes.Contains(x[:start], []byte("<!")) {
		return
	}
	end := bytes.IndexByte(x[start:], '>')
	if end < 0 {
		return
	}
	end += start + 1 // just past the start tag
	if c := x[start+len(open)]; c != '>' && c != '/' && c != ' ' && c != '\t' && c != '\r' && c != '\n' {
		return // another element whose name begins so
	}
	if x[end-2] == '/' {
		return // <sheetData/>: no rows to leave out
	}
	// The first closing tag ends the rows unless a comment or CDATA
	// section among them could hold one; a later one (in a comment after
	// the rows) must not be taken: what lies between, the merged ranges,
	// would be cut.
	closing := bytes.Index(x[end:], []byte("</"+prefix+"sheetData>"))
	if closing < 0 || bytes.Contains(x[end:end+closing], []byte("<!")) {
		return
	}
	closing += end
	out := make([]byte, 0, end+len(x)-closing)
	out = append(append(out, x[:end]...), x[closing:]...)
	f.Pkg.Store(strings.ReplaceAll(name, "\\", "/"), out)
}

// hiddenColumns finds the columns 1 to width of a worksheet hidden from
// view (hidden by hand, or by a collapsed outline: <col hidden="1">).
// GetColVisible reads the worksheet's structure, which excelize parses
// once and keeps: openSheet asks after GetMergeCells has parsed it (the
// worksheet without its rows, withoutRows), so the columns cost nothing
// more.
func hiddenColumns(f *excelize.File, sheet string, width int) map[int]bool {
	var out map[int]bool
	for c := 1; c <= width; c++ {
		name, err := excelize.ColumnNumberToName(c)
		if err != nil {
			break
		}
		if v, err := f.GetColVisible(sheet, name); err == nil && !v {
			if out == nil {
				out = map[int]bool{}
			}
			out[c] = true
		}
	}
	return out
}

// mergedUsed refuses a record of the current row whose cell in a used
// column (the first by column) is covered by merged cells but for the
// one holding their value (markMerged): the sheet shows their one value
// there, but the row holds none, and read as a text of its own it would
// be a level, a category, a cluster or a subset's value apart from the
// value shown (a cluster per merged block beside the first row's).
func (s *sheetRecords) mergedUsed(rec []string) *Error {
	var hit *usedCol
	for i, c := range s.used {
		if c.index < len(rec) && mergedRange(rec[c.index]) != "" && (hit == nil || c.index < hit.index) {
			hit = &s.used[i]
		}
	}
	if hit == nil {
		return nil
	}
	ref, _ := excelize.CoordinatesToCellName(s.lead+hit.index+1, s.line)
	return &Error{Line: s.line, Column: hit.name, Msg: "cell " + ref + " is " + mergedWords(mergedRange(rec[hit.index]))}
}

// markHidden names, in SheetRead.HiddenColumns, the used columns the
// sheet hides from view, in the sheet's order; the used columns are kept
// for mergedUsed.
func (s *sheetRecords) markHidden(cols []usedCol) {
	s.used = cols
	s.read.HiddenColumns = nil
	if len(s.hiddenCols) == 0 {
		return
	}
	cols = slices.Clone(cols)
	slices.SortFunc(cols, func(a, b usedCol) int { return a.index - b.index })
	for i, c := range cols {
		if s.hiddenCols[s.lead+c.index+1] && (i == 0 || cols[i-1].index != c.index) {
			letters, _ := excelize.ColumnNumberToName(s.lead + c.index + 1)
			s.read.HiddenColumns = append(s.read.HiddenColumns, HiddenColumn{Name: c.name, Letters: letters})
		}
	}
}

// Where names the sheet for a summary: `sheet "data"`, with, for a hidden
// sheet, that it is hidden and read because it was named.
func (s *SheetRead) Where() string {
	w := "sheet " + strconv.Quote(s.Name)
	if s.Hidden {
		w += " (a hidden sheet, read because data.sheet or --sheet names it)"
	}
	return w
}

// PartSheets says, for data held as parts, the worksheet each workbook
// part was read from and what of it is hidden, in the words Where and
// HiddenNote give one workbook: `p1.xlsx, sheet "data"; p2.xlsx, sheet
// "data" (...)`, each part named by names (as the plan names it), or by
// its file when names has none for it; "" when no part is a workbook.
func PartSheets(parts []PartSpan, names []string) string {
	var out []string
	for i, p := range parts {
		if p.Sheet == nil {
			continue
		}
		name := p.File
		if i < len(names) && names[i] != "" {
			name = names[i]
		}
		s := name + ", " + p.Sheet.Where()
		if n := p.Sheet.HiddenNote(); n != "" {
			s += " (" + n + ")"
		}
		out = append(out, s)
	}
	return strings.Join(out, "; ")
}

// HiddenNote says how many of the rows read the sheet hides from view,
// and which of the columns read it hides ("" when none): they are data,
// read as the others are.
func (s *SheetRead) HiddenNote() string {
	var out []string
	switch s.HiddenRows {
	case 0:
	case 1:
		out = append(out, "1 of the rows read is hidden in the sheet (a hidden row, or one a filter hides); it was read as data like the others (delete it, or leave it out with a subset condition, if it should not count)")
	default:
		out = append(out, fmt.Sprintf("%d of the rows read are hidden in the sheet (hidden rows, or rows a filter hides); they were read as data like the others (delete them, or leave them out with a subset condition, if they should not count)", s.HiddenRows))
	}
	cols := make([]string, len(s.HiddenColumns))
	for i, c := range s.HiddenColumns {
		cols[i] = fmt.Sprintf("%s (column %s)", quoteCell(c.Name), c.Letters)
	}
	switch len(cols) {
	case 0:
	case 1:
		out = append(out, fmt.Sprintf("column %s, which is read, is hidden in the sheet; it was read as data like the others (a hidden column is often an old version kept out of view: check that it is the column meant)", cols[0]))
	default:
		out = append(out, fmt.Sprintf("columns %s, which are read, are hidden in the sheet; they were read as data like the others (a hidden column is often an old version kept out of view: check that they are the columns meant)", words.AndList(cols)))
	}
	return strings.Join(out, "; ")
}

// scanNumberCells calls at for every numeric cell (no type, or type n) of
// a worksheet's XML, with its column and row (both 1-based).
func scanNumberCells(x []byte, at func(col, row int)) {
	eachCellTag(x, func(tag []byte) {
		if t, ok := attr(tag, "t"); ok && t != "n" {
			return
		}
		if col, row, ok := cellRef(append([]byte(" "), tag...)); ok {
			at(col, row)
		}
	})
}

// commaNumber is a number cell's stored text (always with a decimal
// point, whatever the spreadsheet shows) written with a decimal comma, so
// that a workbook read under data.decimal: comma (the setting of the CSV
// files beside it) reads its number cells as the numbers they are; a text
// that is not a stored number (a date or time read as its text) is
// returned as it is. Text cells are not numbers: they follow the setting.
func commaNumber(cell string) string {
	if _, err := strconv.ParseFloat(cell, 64); err != nil {
		return cell
	}
	return strings.Replace(cell, ".", ",", 1)
}
