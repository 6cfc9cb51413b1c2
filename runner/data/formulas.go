package data

import (
	"archive/zip"
	"bytes"
	"encoding/csv"
	"encoding/xml"
	"fmt"
	"html"
	"io"
	"math"
	"path"
	"regexp"
	"slices"
	"strings"

	"github.com/xuri/excelize/v2"
)

// A workbook written by a program that does not compute formulas (most
// libraries) saves a formula cell without its value; excelize reads such
// a cell as empty, which would be a missing value nobody typed. Such cells
// are read as their formula's text instead ("=B2*2"), which no column
// takes as a number, a level or a missing-value marker, and the message
// says what it is (formulaHint).

// unsavedFormulas finds the cells of the sheet whose formula has no saved
// value: sheet row -> column (1-based) -> "=" and the formula. Nil when
// there are none or the sheet's XML cannot be found (excelize has read it
// by then, so a workbook it reads but this does not is left as excelize
// reads it).
func unsavedFormulas(raw []byte, sheet string) map[int]map[int]string {
	_, x := workbookParts(raw, sheet)
	if x == nil {
		return nil
	}
	return scanFormulas(x)
}

// workbookParts are the workbook's ZIP entries by name and the XML of the
// worksheet named sheet (nil when it cannot be found or read: excelize
// has read the workbook by then, so one that it reads but this does not
// is left as excelize reads it).
func workbookParts(raw []byte, sheet string) (map[string]*zip.File, []byte) {
	zr, err := zip.NewReader(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		return nil, nil
	}
	files := map[string]*zip.File{}
	for _, f := range zr.File {
		files[strings.TrimPrefix(f.Name, "/")] = f
	}
	part := sheetPart(files, sheet)
	if part == nil {
		return files, nil
	}
	rc, err := part.Open()
	if err != nil {
		return files, nil
	}
	defer rc.Close()
	x, err := io.ReadAll(rc)
	if err != nil {
		return files, nil
	}
	return files, x
}

// sheetPart is the ZIP entry of the worksheet named sheet, through the
// workbook's list of sheets and its relationships.
func sheetPart(files map[string]*zip.File, sheet string) *zip.File {
	var book struct {
		Sheets []struct {
			Name string `xml:"name,attr"`
			ID   string `xml:"http://schemas.openxmlformats.org/officeDocument/2006/relationships id,attr"`
		} `xml:"sheets>sheet"`
	}
	var rels struct {
		Rel []struct {
			ID     string `xml:"Id,attr"`
			Target string `xml:"Target,attr"`
		} `xml:"Relationship"`
	}
	bookPath := "xl/workbook.xml"
	if !readXML(files[bookPath], &book) || !readXML(files["xl/_rels/workbook.xml.rels"], &rels) {
		return nil
	}
	for _, s := range book.Sheets {
		if s.Name != sheet {
			continue
		}
		for _, r := range rels.Rel {
			if r.ID == s.ID {
				target := r.Target
				if strings.HasPrefix(target, "/") {
					target = strings.TrimPrefix(target, "/")
				} else {
					target = path.Join(path.Dir(bookPath), target)
				}
				return files[target]
			}
		}
	}
	return nil
}

// readXML decodes a small XML entry into v.
func readXML(f *zip.File, v any) bool {
	if f == nil {
		return false
	}
	rc, err := f.Open()
	if err != nil {
		return false
	}
	defer rc.Close()
	return xml.NewDecoder(io.LimitReader(rc, 64<<20)).Decode(v) == nil
}

// scanFormulas finds the formula cells of a worksheet's XML without a
// saved value (no <v> element, or an empty one in a cell that is not of
// type str: savedValue), by the bytes: a sheet without formulas costs one
// search.
func scanFormulas(x []byte) map[int]map[int]string {
	var out map[int]map[int]string
	eachFormula(x, func(col, row int, tag, cell []byte, prefix string) {
		if t, _ := attr(tag[1:], "t"); savedValue(cell, []byte("<"+prefix+"v"), t == "str") {
			return
		}
		if out == nil {
			out = map[int]map[int]string{}
		}
		if out[row] == nil {
			out[row] = map[int]string{}
		}
		out[row][col] = "=" + strings.TrimPrefix(formulaBody(cell, prefix), "=")
	})
	return out
}

// eachFormula calls at for every formula cell of a worksheet's XML, by
// the bytes: its column and row, the cell's start tag, its XML from the
// formula on, and the namespace prefix ("" or such as "x:").
func eachFormula(x []byte, at func(col, row int, tag, cell []byte, prefix string)) {
	root := bytes.Index(x, []byte("worksheet"))
	lt := bytes.LastIndexByte(x[:max(root, 0)], '<')
	if root < 0 || lt < 0 {
		return
	}
	prefix := string(x[lt+1 : root]) // "" or a namespace prefix such as "x:"
	openF, openC, endC := []byte("<"+prefix+"f"), []byte("<"+prefix+"c "), []byte("</"+prefix+"c>")
	for next := 0; ; {
		i := bytes.Index(x[next:], openF)
		if i < 0 {
			return
		}
		i += next
		next = i + len(openF)
		if next >= len(x) || !(x[next] == '>' || x[next] == ' ' || x[next] == '/') {
			continue // another element, such as <family>
		}
		e := bytes.Index(x[next:], endC)
		s := bytes.LastIndex(x[:i], openC)
		if e < 0 || s < 0 {
			return
		}
		cell := x[i : next+e]
		tag := x[s:i]
		if gt := bytes.IndexByte(tag, '>'); gt >= 0 {
			tag = tag[:gt]
		}
		if col, row, ok := cellRef(tag); ok {
			at(col, row, tag, cell, prefix)
		}
	}
}

// formulaBody is the text of the formula element that starts cell (its
// XML from the formula on), "" for an empty one (<f/>, as a cell sharing
// another's formula has).
func formulaBody(cell []byte, prefix string) string {
	gt := bytes.IndexByte(cell, '>')
	if gt <= 0 || cell[gt-1] == '/' {
		return ""
	}
	end := bytes.Index(cell, []byte("</"+prefix+"f>"))
	if end <= gt {
		return ""
	}
	return html.UnescapeString(string(cell[gt+1 : end]))
}

// savedValue reports whether a cell's XML (from its formula on) holds
// the formula's saved result: a <v> element with a value, or an empty one
// (<v></v>, <v/>) in a cell of type str (text), a saved empty text, as a
// formula such as =IF(C2="","",C2) gives: that cell is empty, as excelize
// reads it, not a formula without its value. An empty <v> in a cell of
// any other type (a number's, by default) holds nothing: programs that do
// not compute formulas write their formulas so.
func savedValue(cell, openV []byte, text bool) bool {
	v := bytes.Index(cell, openV)
	if v < 0 || v+len(openV) >= len(cell) {
		return false
	}
	rest := cell[v+len(openV):]
	switch rest[0] {
	case '/':
		return text // <v/>
	case '>', ' ':
	default:
		return false // another element, such as <vm>
	}
	gt := bytes.IndexByte(rest, '>')
	if gt < 0 {
		return false
	}
	if gt > 0 && rest[gt-1] == '/' {
		return text // <v xml:space="preserve"/>
	}
	end := bytes.IndexByte(rest[gt+1:], '<')
	return text || (end < 0 || len(bytes.TrimSpace(rest[gt+1:gt+1+end])) > 0)
}

// cellRef reads the r="C12" attribute of a cell's start tag.
func cellRef(tag []byte) (col, row int, ok bool) {
	i := bytes.Index(tag, []byte(` r="`))
	if i < 0 {
		return 0, 0, false
	}
	ref := tag[i+4:]
	j := bytes.IndexByte(ref, '"')
	if j < 0 {
		return 0, 0, false
	}
	col, row, err := excelize.CellNameToCoordinates(string(ref[:j]))
	return col, row, err == nil
}

// formulaHint says what a cell that is not a number is, when a
// spreadsheet made it so: a formula without a saved value, one of merged
// cells other than the one holding their value (markMerged), or an error
// value; "" for any other text. ref is the cell's reference (E2), "" when
// unknown (cellName).
func formulaHint(cell, ref string) string {
	switch {
	case strings.HasPrefix(cell, "="):
		if ref != "" {
			ref += " "
		}
		return "; the cell " + ref + "holds a formula without its value (the workbook was saved by a program that does not compute formulas): open the workbook in a spreadsheet program that computes formulas and save it, or export the sheet's values as CSV"
	case mergedRange(cell) != "":
		return "; the cell is " + mergedWords(mergedRange(cell))
	case spreadsheetErrors[cell]:
		return "; it is a spreadsheet's error value: correct the formula that gave it, or list " + quoteCell(cell) + " among the missing-value markers (data.missing_values)"
	}
	return ""
}

// mergedRange is the range (C2:C4) of the merged cells a cell's text
// says it is covered by (mergedText), "" for any other text.
func mergedRange(cell string) string {
	if !strings.HasPrefix(cell, "(merged cells ") || !strings.HasSuffix(cell, ")") {
		return ""
	}
	return strings.TrimSuffix(strings.TrimPrefix(cell, "(merged cells "), ")")
}

// mergedWords says of a cell covered by the merged cells rng (C2:C4),
// other than the one holding their value, what it is and what to do.
func mergedWords(rng string) string {
	first, _, _ := strings.Cut(rng, ":")
	return "one of the merged cells " + rng + ", whose one value, held by " + first + ", the sheet shows across them all: unmerge them and write each row's value in its own cell"
}

// spreadsheetErrors are the error values a spreadsheet cell can hold.
var spreadsheetErrors = map[string]bool{
	"#N/A": true, "#DIV/0!": true, "#VALUE!": true, "#REF!": true, "#NAME?": true, "#NUM!": true, "#NULL!": true,
	"#SPILL!": true, "#CALC!": true, "#GETTING_DATA": true,
}

// A row of totals at the foot of a table (=SUM(B2:B41) under column B)
// is no data row: its cells hold sums, means or counts of the column, and
// read as a case they would be predictors far out of range (an empty
// outcome cell then imputed). Its cells are found by their formulas, not
// their values.

// totalFormulas finds the cells of the sheet below row h (the header
// row asked for) whose formula aggregates a range of the cell's own
// column (aggregateOver): sheet row -> column -> "=" and the formula.
// A cell's own formula is read from the sheet's XML x, by the bytes (one
// search when the sheet has no formulas); a cell that shares another's
// formula (<f t="shared" si="0"/>), as a formula filled along a row is
// saved, has it read through excelize, which spells it out for the cell
// (GetCellFormula: =SUM(C2:C41) beside =SUM(B2:B41)), when the shared
// formula's text calls an aggregating function over a range. A cell's own
// formula that aggregates a defined name or a table's column covering
// the cell's column (=SUM(Scores), =SUBTOTAL(109,Table1[score]):
// namedRanges.aggregate) is one too. Call it before withoutRows.
func totalFormulas(f *excelize.File, sheet string, x []byte, h int) map[int]map[int]string {
	var out map[int]map[int]string
	add := func(col, row int, formula string) {
		if out == nil {
			out = map[int]map[int]string{}
		}
		if out[row] == nil {
			out[row] = map[int]string{}
		}
		out[row][col] = "=" + strings.TrimPrefix(formula, "=")
	}
	type shared struct {
		col, row int
		si       string
	}
	var sharing []shared
	aggregates := map[string]bool{} // shared formulas that may aggregate a range
	names := sheetNames(f, sheet)
	eachFormula(x, func(col, row int, tag, cell []byte, prefix string) {
		gt := bytes.IndexByte(cell, '>')
		if gt < 1 {
			return
		}
		t, _ := attr(cell[1:gt], "t")
		si, _ := attr(cell[1:gt], "si")
		switch body := formulaBody(cell, prefix); {
		case body != "":
			if t == "shared" && sharedAggregate(body, col) {
				aggregates[si] = true
			}
			if row > h && (aggregateOver(body, col) || names.aggregate(body, col)) {
				add(col, row, body)
			}
		case t == "shared" && row > h:
			sharing = append(sharing, shared{col, row, si})
		}
	})
	for _, c := range sharing {
		if !aggregates[c.si] {
			continue
		}
		ref, err := excelize.CoordinatesToCellName(c.col, c.row)
		if err != nil {
			continue
		}
		if formula, err := f.GetCellFormula(sheet, ref); err == nil && aggregateOver(formula, c.col) {
			add(c.col, c.row, formula)
		}
	}
	return out
}

// aggregateCall finds a call of a function that sums, averages, counts
// or otherwise aggregates a range.
var aggregateCall = regexp.MustCompile(`(?i)(?:^|[^A-Z0-9_.])(?:_xlfn\.)?(?:SUM|SUBTOTAL|AGGREGATE|AVERAGE|AVERAGEA|COUNT|COUNTA|MIN|MAX|MEDIAN|PRODUCT|STDEV|STDEV\.S|STDEV\.P|VAR|VAR\.S|VAR\.P)\s*\(`)

// cellRange finds a range of cells (B2:B41, $B$2:$B$41) or of whole
// columns (B:B).
var cellRange = regexp.MustCompile(`(?i)\$?([A-Z]{1,3})(\$?[0-9]+)?:\$?([A-Z]{1,3})(\$?[0-9]+)?`)

// aggregateOver reports whether formula (as excelize reads it, with or
// without its "=") calls an aggregating function (aggregateCall) and
// holds a range of the sheet's own column col (1-based), not of another
// sheet: the formula of a totals row's cell.
func aggregateOver(formula string, col int) bool {
	letters, ok := aggregating(formula, col)
	if !ok {
		return false
	}
	for _, m := range cellRange.FindAllStringSubmatchIndex(formula, -1) {
		if m[0] > 0 && strings.ContainsRune("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789_.!'$", rune(formula[m[0]-1])) {
			continue // part of a longer name, or of another sheet (Other!B2:B9)
		}
		if m[1] < len(formula) && strings.ContainsRune("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789_.!(", rune(formula[m[1]])) {
			continue
		}
		if (m[4] < 0) != (m[8] < 0) {
			continue // B2:C, not a range
		}
		if strings.EqualFold(formula[m[2]:m[3]], letters) && strings.EqualFold(formula[m[6]:m[7]], letters) {
			return true
		}
	}
	return false
}

// namedRanges are the names a sheet's formulas may aggregate its columns
// by: the workbook's defined names that refer to one column of the sheet
// (upper case -> column, 1-based), and the sheet's tables, each with the
// name of each of its columns (its header row's cells).
type namedRanges struct {
	defined map[string]int
	tables  []namedTable
}

// namedTable is a table of a sheet: its name, first column and row, and
// its columns' names in order.
type namedTable struct {
	name      string
	col, row  int
	lastCol   int
	lastRow   int
	colNames  []string
	hasHeader bool
}

// sheetNames reads the defined names of workbook f that refer to a range
// of one column of sheet (Sheet1!$B$2:$B$41, scoped to the workbook or to
// the sheet) and the sheet's tables; nil when there are none.
func sheetNames(f *excelize.File, sheet string) *namedRanges {
	var n namedRanges
	for _, d := range f.GetDefinedName() {
		if d.Scope != "" && d.Scope != "Workbook" && d.Scope != sheet {
			continue
		}
		ref := strings.TrimPrefix(strings.TrimSpace(d.RefersTo), "=")
		i := strings.LastIndexByte(ref, '!')
		if i < 0 || strings.ContainsAny(ref[i+1:], ",( ") {
			continue
		}
		on := ref[:i]
		if len(on) > 1 && on[0] == '\'' && on[len(on)-1] == '\'' {
			on = strings.ReplaceAll(on[1:len(on)-1], "''", "'")
		}
		cells := strings.ReplaceAll(ref[i+1:], "$", "")
		m := cellRange.FindStringSubmatch(cells)
		if on != sheet || m == nil || m[0] != cells || !strings.EqualFold(m[1], m[3]) {
			continue
		}
		col, err := excelize.ColumnNameToNumber(m[1])
		if err != nil {
			continue
		}
		if n.defined == nil {
			n.defined = map[string]int{}
		}
		n.defined[strings.ToUpper(d.Name)] = col
	}
	tables, _ := f.GetTables(sheet)
	for _, t := range tables {
		a, b, ok := strings.Cut(t.Range, ":")
		if !ok {
			continue
		}
		c1, r1, err1 := excelize.CellNameToCoordinates(a)
		c2, r2, err2 := excelize.CellNameToCoordinates(b)
		if err1 != nil || err2 != nil || c2 < c1 {
			continue
		}
		nt := namedTable{name: t.Name, col: c1, row: r1, lastCol: c2, lastRow: r2, hasHeader: t.ShowHeaderRow == nil || *t.ShowHeaderRow}
		if nt.hasHeader {
			for c := c1; c <= c2; c++ {
				ref, _ := excelize.CoordinatesToCellName(c, r1)
				v, _ := f.GetCellValue(sheet, ref)
				nt.colNames = append(nt.colNames, strings.TrimSpace(v))
			}
		}
		n.tables = append(n.tables, nt)
	}
	if n.defined == nil && n.tables == nil {
		return nil
	}
	return &n
}

// nameChar reports whether c may be part of a name in a formula.
func nameChar(c byte) bool {
	return c == '_' || c == '.' || c == '\\' || c >= '0' && c <= '9' || c >= 'A' && c <= 'Z' || c >= 'a' && c <= 'z' || c >= 0x80
}

// aggregate reports whether formula calls an aggregating function
// (aggregateCall) and holds a defined name referring to a range of column
// col of the sheet, or a reference to the column of a table of the sheet
// that is column col (Table1[score], Table1[[score]], Table1[[#Data],[score]],
// Table1[[#All],[score]]: how a file writes a table's references, with its
// name, also within the table), not to one row of it ([@score]).
func (n *namedRanges) aggregate(formula string, col int) bool {
	if n == nil {
		return false
	}
	if _, ok := aggregating(formula, col); !ok {
		return false
	}
	upper := strings.ToUpper(formula)
	for i := 0; i < len(upper); {
		if !nameChar(upper[i]) || i > 0 && (nameChar(upper[i-1]) || upper[i-1] == '!' || upper[i-1] == '[' || upper[i-1] == '@') {
			i++
			continue
		}
		j := i
		for j < len(upper) && nameChar(upper[j]) {
			j++
		}
		if c, ok := n.defined[upper[i:j]]; ok && c == col && (j == len(upper) || upper[j] != '(' && upper[j] != '[') {
			return true
		}
		i = j
	}
	for _, t := range n.tables {
		if col < t.col || col > t.lastCol || !t.hasHeader || t.colNames[col-t.col] == "" {
			continue
		}
		name, c := strings.ToUpper(t.name), strings.ToUpper(t.colNames[col-t.col])
		for _, ref := range []string{name + "[" + c + "]", name + "[[" + c + "]]", name + "[[#DATA],[" + c + "]]", name + "[[#ALL],[" + c + "]]", name + "[[#DATA], [" + c + "]]", name + "[[#ALL], [" + c + "]]"} {
			for k := 0; ; {
				at := strings.Index(upper[k:], ref)
				if at < 0 {
					break
				}
				if at += k; at == 0 || !nameChar(upper[at-1]) && upper[at-1] != '!' {
					return true
				}
				k = at + 1
			}
		}
	}
	return false
}

// sharedAggregate reports whether a shared formula, of text formula in
// column col, may aggregate its own column in a cell that shares it: it
// calls an aggregating function, and some range has each end in column
// col (where a cell sharing it shifts a relative column as far as it
// stands from col) or absolute ($B, which stays). A cumulative sum down
// another column (=SUM($B$2:B2) in column D) cannot, so the cells
// sharing it are not read one by one.
func sharedAggregate(formula string, col int) bool {
	letters, ok := aggregating(formula, col)
	if !ok {
		return false
	}
	end := func(from, to int) bool {
		return from > 0 && formula[from-1] == '$' || strings.EqualFold(formula[from:to], letters)
	}
	for _, m := range cellRange.FindAllStringSubmatchIndex(formula, -1) {
		if end(m[2], m[3]) && end(m[6], m[7]) {
			return true
		}
	}
	return false
}

// totalsRow refuses the data rows (below the header row) holding, in a
// used column, a formula that aggregates the column (totalFormulas): the
// first such cell by row, then by column, naming its cell, formula and
// sheet and what to do; then a row of totals typed as numbers
// (typedTotals, whose numbers d reads). Columns the plan does not read are
// no matter.
func (s *sheetRecords) totalsRow(cols []usedCol, d Dialect) *Error {
	var rows []int
	for row := range s.totals {
		if row > s.headerLine {
			rows = append(rows, row)
		}
	}
	slices.Sort(rows)
	for _, row := range rows {
		var hit *usedCol
		for i, c := range cols {
			if _, ok := s.totals[row][s.lead+c.index+1]; ok && (hit == nil || c.index < hit.index) {
				hit = &cols[i]
			}
		}
		if hit == nil {
			continue
		}
		ref, _ := excelize.CoordinatesToCellName(s.lead+hit.index+1, row)
		return &Error{Line: row, Column: hit.name, Msg: fmt.Sprintf("cell %s of sheet %s holds %s, which aggregates the column's own cells: row %d looks like a row of totals, not a row of data, and would be read as one; %s", ref, quoteCell(s.read.Name), quoteCell(s.totals[row][s.lead+hit.index+1]), row, totalsAdvice)}
	}
	return s.typedTotals(cols, d)
}

// totalsAdvice is what the messages about a row of totals say to do.
const totalsAdvice = "delete the row, or move the totals to another sheet (a blank row above them does not end the table: blank rows are skipped and the rows below them read)"

// totalLabels are the words of a cell that names a row of totals.
var totalLabels = map[string]bool{"total": true, "totals": true, "sum": true, "grand total": true, "sum total": true, "overall total": true}

// typedTotals refuses a row of totals typed as numbers (or saved without
// the formulas that made them) at the foot of the sheet's table: its last
// filled row, judged by sumsRow against the rows above it.
func (s *sheetRecords) typedTotals(cols []usedCol, d Dialect) *Error {
	last := len(s.rows) - 1
	for last > 0 && blankRow(s.rows[last]) {
		last--
	}
	row := s.first + last
	if row <= s.headerLine || len(cols) == 0 {
		return nil
	}
	rec := s.rows[last]
	label, hit, sum := sumsRow(rec, func(each func([]string)) {
		for k := s.headerLine - s.first + 1; k < last; k++ {
			each(s.rows[k])
		}
	}, cols, d)
	if hit == nil {
		return nil
	}
	labelRef, _ := excelize.CoordinatesToCellName(s.lead+label+1, row)
	ref, _ := excelize.CoordinatesToCellName(s.lead+hit.index+1, row)
	return &Error{Line: row, Column: hit.name, Msg: fmt.Sprintf("row %d of sheet %s looks like a row of totals, not a row of data, and would be read as one: cell %s says %s, and the numbers of the used columns in it are the sums of the rows above (%s holds %s, the sum of the column's cells above it); %s", row, quoteCell(s.read.Name), labelRef, quoteCell(strings.TrimSpace(rec[label])), ref, quoteCell(sum), totalsAdvice)}
}

// csvTotals is typedTotals for CSV text: the last line of raw (the whole
// file; body is where the rows start) that holds a field, read in the
// dialect, judged by sumsRow against the records above it. The records
// are read again only when that line says Total.
func (r *reader) csvTotals(raw []byte, body int) *Error {
	end := len(raw)
	for end > body && isSpaceByte(raw[end-1]) {
		end--
	}
	start := bytes.LastIndexByte(raw[body:end], '\n') + 1 + body
	if start >= end || len(r.cols) == 0 {
		return nil
	}
	read := func(b []byte) *csv.Reader {
		cr := csv.NewReader(bytes.NewReader(b))
		cr.Comma = r.opt.Dialect.delim()
		cr.FieldsPerRecord = -1
		cr.TrimLeadingSpace = trimsLeadingSpace(cr.Comma)
		return cr
	}
	last, err := read(raw[start:end]).Read()
	if err != nil || !slices.ContainsFunc(last, isTotalLabel) {
		return nil
	}
	label, hit, sum := sumsRow(last, func(each func([]string)) {
		cr := read(raw[body:start])
		for {
			rec, err := cr.Read()
			if err != nil {
				return
			}
			each(rec)
		}
	}, r.cols, r.opt.Dialect)
	if hit == nil {
		return nil
	}
	line := bytes.Count(raw[:start], []byte("\n")) + 1
	e := r.fail(line, hit.name, "line %d looks like a row of totals, not a row of data, and would be read as one: its field %d (%s) says %s, and the numbers of the used columns in it are the sums of the lines above (%s holds %s, the sum of the column's values above it); delete the line, or keep the totals in another file", line, label+1, r.fieldName(label), quoteCell(strings.TrimSpace(last[label])), quoteCell(hit.name), quoteCell(sum))
	return e
}

// fieldName is the header's name of field i, quoted, or "unnamed".
func (r *reader) fieldName(i int) string {
	if i < len(r.headerNames) {
		return quoteCell(r.headerNames[i])
	}
	return "unnamed"
}

// isTotalLabel reports whether a cell names a row of totals (totalLabels,
// in any case, with spaces and a colon after it allowed).
func isTotalLabel(cell string) bool {
	return totalLabels[strings.ToLower(strings.TrimSuffix(strings.Join(strings.Fields(cell), " "), ":"))]
}

// sumsRow judges the last filled record last of a table against the
// records above it (from the first data row, passed to each by above): a
// row of totals when a cell says Total (isTotalLabel, in any column; the
// first is label) and, in every other used column where it is filled, a
// number (read in d), the sum of the numbers above it in the column (two
// at least; equal but for the rounding of the summation, 1e-12 of the sum
// of their sizes), not 0 in one column at least, which is hit, its text
// sum. A data row rarely does both, so no other row is taken for one;
// hit is nil for any other record.
func sumsRow(last []string, above func(each func([]string)), cols []usedCol, d Dialect) (label int, hit *usedCol, sum string) {
	label = slices.IndexFunc(last, isTotalLabel)
	if label < 0 {
		return -1, nil, ""
	}
	type total struct {
		v, sum, size float64
		n            int
	}
	totals := map[int]*total{}
	for _, c := range cols {
		if c.index >= len(last) || c.index == label || strings.TrimSpace(last[c.index]) == "" {
			continue
		}
		v, msg := d.number(strings.TrimSpace(last[c.index]))
		if msg != "" {
			return -1, nil, ""
		}
		totals[c.index] = &total{v: v}
	}
	if len(totals) == 0 {
		return -1, nil, ""
	}
	above(func(rec []string) {
		for i, t := range totals {
			if i >= len(rec) {
				continue
			}
			if x, msg := d.number(strings.TrimSpace(rec[i])); msg == "" {
				t.sum += x
				t.size += math.Abs(x)
				t.n++
			}
		}
	})
	for i, c := range cols {
		t := totals[c.index]
		if t == nil {
			continue
		}
		if t.n < 2 || math.Abs(t.v-t.sum) > 1e-12*t.size {
			return -1, nil, ""
		}
		if hit == nil && t.v != 0 {
			hit, sum = &cols[i], strings.TrimSpace(last[c.index])
		}
	}
	return label, hit, sum
}

// aggregating is the letters of column col (1-based) when formula calls an
// aggregating function (aggregateCall); ok is false otherwise.
func aggregating(formula string, col int) (letters string, ok bool) {
	if !aggregateCall.MatchString(formula) {
		return "", false
	}
	letters, err := excelize.ColumnNumberToName(col)
	return letters, err == nil
}
