package data

import (
	"archive/zip"
	"bytes"
	"encoding/xml"
	"html"
	"io"
	"path"
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
	root := bytes.Index(x, []byte("worksheet"))
	lt := bytes.LastIndexByte(x[:max(root, 0)], '<')
	if root < 0 || lt < 0 {
		return nil
	}
	prefix := string(x[lt+1 : root]) // "" or a namespace prefix such as "x:"
	openF, openC, endC := []byte("<"+prefix+"f"), []byte("<"+prefix+"c "), []byte("</"+prefix+"c>")
	openV, endF := []byte("<"+prefix+"v"), []byte("</"+prefix+"f>")
	var out map[int]map[int]string
	for at := 0; ; {
		i := bytes.Index(x[at:], openF)
		if i < 0 {
			return out
		}
		i += at
		at = i + len(openF)
		if at >= len(x) || !(x[at] == '>' || x[at] == ' ' || x[at] == '/') {
			continue // another element, such as <family>
		}
		e := bytes.Index(x[at:], endC)
		s := bytes.LastIndex(x[:i], openC)
		if e < 0 || s < 0 {
			return out
		}
		cell := x[i : at+e]
		tag := x[s:i]
		if gt := bytes.IndexByte(tag, '>'); gt >= 0 {
			tag = tag[:gt]
		}
		if t, _ := attr(tag[1:], "t"); savedValue(cell, openV, t == "str") {
			continue
		}
		col, row, ok := cellRef(tag)
		if !ok {
			continue
		}
		text := "="
		if gt := bytes.IndexByte(cell, '>'); gt > 0 && cell[gt-1] != '/' {
			if end := bytes.Index(cell, endF); end > gt {
				text += strings.TrimPrefix(html.UnescapeString(string(cell[gt+1:end])), "=")
			}
		}
		if out == nil {
			out = map[int]map[int]string{}
		}
		if out[row] == nil {
			out[row] = map[int]string{}
		}
		out[row][col] = text
	}
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
	case strings.HasPrefix(cell, "(merged cells ") && strings.HasSuffix(cell, ")"):
		ref := strings.TrimSuffix(strings.TrimPrefix(cell, "(merged cells "), ")")
		first, _, _ := strings.Cut(ref, ":")
		return "; the cell is one of the merged cells " + ref + ", whose one value, held by " + first + ", the sheet shows across them all: unmerge them and write each row's value in its own cell"
	case spreadsheetErrors[cell]:
		return "; it is a spreadsheet's error value: correct the formula that gave it, or list " + quoteCell(cell) + " among the missing-value markers (data.missing_values)"
	}
	return ""
}

// spreadsheetErrors are the error values a spreadsheet cell can hold.
var spreadsheetErrors = map[string]bool{
	"#N/A": true, "#DIV/0!": true, "#VALUE!": true, "#REF!": true, "#NAME?": true, "#NUM!": true, "#NULL!": true,
	"#SPILL!": true, "#CALC!": true, "#GETTING_DATA": true,
}
