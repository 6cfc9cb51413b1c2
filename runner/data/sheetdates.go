package data

import (
	"archive/zip"
	"bytes"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"
)

// A spreadsheet stores a date or a time as a number of days (since
// 1899-12-30, or 1904-01-01 in a workbook of the 1904 date system) and
// shows it as a date only through the cell's number format. Read as that
// number, a column of dates would enter a model as day numbers nobody wrote
// (45292 for 2024-01-01), which the same data written as CSV or Parquet
// never give. So a numeric cell whose number format shows a date or a time
// is read as the text it means, written as a Parquet date, time or
// timestamp is (2024-01-01, 08:30:00, 2024-01-01T08:30:00): used as a
// number it is refused with what it is (timeHint), declared categorical its
// texts are its levels, as for those formats.

// timeKind is what a number format shows of a number: nothing of a date or
// time (0), a date, a date and a time of day, a time of day, or a
// duration (elapsed hours, [h]:mm).
type timeKind byte

const (
	showsNumber timeKind = iota
	showsDate
	showsDateTime
	showsTime
	showsDuration
)

// builtinTimeFormats are the built-in number formats (by id) that show a
// date or a time; the others show numbers or text.
var builtinTimeFormats = map[int]timeKind{
	14: showsDate, 15: showsDate, 16: showsDate, 17: showsDate,
	18: showsTime, 19: showsTime, 20: showsTime, 21: showsTime,
	22: showsDateTime,
	27: showsDate, 28: showsDate, 29: showsDate, 30: showsDate, 31: showsDate,
	32: showsTime, 33: showsTime, 34: showsTime, 35: showsTime, 36: showsDate,
	45: showsTime, 46: showsDuration, 47: showsTime,
	50: showsDate, 51: showsDate, 52: showsDate, 53: showsDate, 54: showsDate,
	55: showsDate, 56: showsDate, 57: showsDate, 58: showsDate,
}

// formatKind is what a custom number format code shows: its first section,
// without its quoted texts, escaped characters, fills, paddings and
// bracketed parts (colours, locales, conditions; [h], [m] and [s] are
// elapsed time), read for the letters of dates (y, d; m when not minutes)
// and times (h, s). The E of a scientific format (0.00E+00) and the
// letters of General are none of them.
func formatKind(code string) timeKind {
	var b strings.Builder
	elapsed := false
	for i := 0; i < len(code); i++ {
		switch c := code[i]; c {
		case ';':
			i = len(code)
		case '"':
			if j := strings.IndexByte(code[i+1:], '"'); j >= 0 {
				i += j + 1
			} else {
				i = len(code)
			}
		case '\\', '_', '*':
			i++
		case '[':
			j := strings.IndexByte(code[i:], ']')
			if j < 0 {
				i = len(code)
				break
			}
			inner := strings.ToLower(code[i+1 : i+j])
			if inner != "" && strings.Trim(inner, "hms") == "" {
				elapsed = true
				b.WriteString(inner)
			}
			i += j
		default:
			b.WriteByte(c)
		}
	}
	s := strings.NewReplacer("am/pm", "", "a/p", "").Replace(strings.ToLower(b.String()))
	date := strings.ContainsAny(s, "yd")
	clock := strings.ContainsAny(s, "hs")
	switch {
	case elapsed:
		return showsDuration
	case date && clock:
		return showsDateTime
	case date:
		return showsDate
	case clock:
		return showsTime
	case strings.ContainsRune(s, 'm'):
		return showsDate // months alone (mmm)
	}
	return showsNumber
}

// timeStyles reads the workbook's styles and returns, by cell style index,
// what the style's number format shows, for the styles that show a date or
// a time (nil when none does), and whether the workbook counts days from
// 1904.
func timeStyles(files map[string]*zip.File) (map[int]timeKind, bool) {
	var styles struct {
		NumFmts []struct {
			ID   int    `xml:"numFmtId,attr"`
			Code string `xml:"formatCode,attr"`
		} `xml:"numFmts>numFmt"`
		Xfs []struct {
			ID int `xml:"numFmtId,attr"`
		} `xml:"cellXfs>xf"`
	}
	if !readXML(files["xl/styles.xml"], &styles) {
		return nil, false
	}
	custom := map[int]timeKind{}
	for _, f := range styles.NumFmts {
		custom[f.ID] = formatKind(f.Code)
	}
	var out map[int]timeKind
	for i, xf := range styles.Xfs {
		k, ok := custom[xf.ID]
		if !ok {
			k = builtinTimeFormats[xf.ID]
		}
		if k != showsNumber {
			if out == nil {
				out = map[int]timeKind{}
			}
			out[i] = k
		}
	}
	if out == nil {
		return nil, false
	}
	var book struct {
		Pr struct {
			Date1904 string `xml:"date1904,attr"`
		} `xml:"workbookPr"`
	}
	readXML(files["xl/workbook.xml"], &book)
	return out, book.Pr.Date1904 == "1" || strings.EqualFold(book.Pr.Date1904, "true")
}

// scanTimeCells calls at for every numeric cell of a worksheet's XML whose
// style shows a date or a time, with its column, row (both 1-based) and
// what its format shows.
func scanTimeCells(x []byte, styles map[int]timeKind, at func(col, row int, k timeKind)) {
	eachCellTag(x, func(tag []byte) {
		s, ok := attr(tag, "s")
		if !ok {
			return
		}
		style, err := strconv.Atoi(s)
		if err != nil {
			return
		}
		k := styles[style]
		if k == showsNumber {
			return
		}
		if t, ok := attr(tag, "t"); ok && t != "n" {
			return // a text, a boolean, an error value: not a number
		}
		if col, row, ok := cellRef(append([]byte(" "), tag...)); ok {
			at(col, row, k)
		}
	})
}

// scanBoolCells calls at for every boolean cell (type b) of a worksheet's
// XML, with its column and row (both 1-based).
func scanBoolCells(x []byte, at func(col, row int)) {
	eachCellTag(x, func(tag []byte) {
		if t, ok := attr(tag, "t"); ok && t == "b" {
			if col, row, ok := cellRef(append([]byte(" "), tag...)); ok {
				at(col, row)
			}
		}
	})
}

// eachCellTag calls at with the attributes of every cell's start tag
// (<c ...>) of a worksheet's XML, whatever its namespace prefix.
func eachCellTag(x []byte, at func(tag []byte)) { eachTag(x, "c", at) }

// eachTag calls at with the attributes of every start tag of the element
// name (<name ...>) of a worksheet's XML, whatever its namespace prefix.
func eachTag(x []byte, name string, at func(tag []byte)) {
	root := bytes.Index(x, []byte("worksheet"))
	lt := bytes.LastIndexByte(x[:max(root, 0)], '<')
	if root < 0 || lt < 0 {
		return
	}
	openC := []byte("<" + string(x[lt+1:root]) + name + " ")
	for rest := x; ; {
		i := bytes.Index(rest, openC)
		if i < 0 {
			return
		}
		rest = rest[i+len(openC):]
		end := bytes.IndexByte(rest, '>')
		if end < 0 {
			return
		}
		at(rest[:end])
	}
}

// attr is the value of a start tag's attribute name="value".
func attr(tag []byte, name string) (string, bool) {
	key := []byte(" " + name + `="`)
	tag = append([]byte(" "), tag...)
	i := bytes.Index(tag, key)
	if i < 0 {
		return "", false
	}
	v := tag[i+len(key):]
	j := bytes.IndexByte(v, '"')
	if j < 0 {
		return "", false
	}
	return string(v[:j]), true
}

// timeText is the text of a spreadsheet number shown as k: a date
// (2024-01-01, with its time when it has one), a date and time
// (2024-01-01T08:30:00), a time of day (08:30:00; a later day's time with
// its date), or a duration in hours, minutes and seconds (36:00:00).
// Times are rounded to the millisecond. A text that is not a number, and a
// negative number, which shows no date, are returned as they are.
func timeText(cell string, k timeKind, date1904 bool) string {
	v, err := strconv.ParseFloat(cell, 64)
	if err != nil || v < 0 || math.IsInf(v, 0) || math.IsNaN(v) || v > 2958465 {
		return cell // 2958465 is 9999-12-31, the last date a spreadsheet shows
	}
	days := math.Floor(v)
	ms := int64(math.Round((v - days) * 86400000))
	if k == showsDuration {
		h := int64(days)*24 + ms/3600000
		return fmt.Sprintf("%d:%s", h, time.UnixMilli(ms).UTC().Format("04:05.999"))
	}
	if k == showsTime && days == 0 {
		return time.UnixMilli(ms % 86400000).UTC().Format("15:04:05.999") // a clock shows 24:00 as 00:00
	}
	if ms == 86400000 {
		days, ms = days+1, 0
	}
	clock := time.UnixMilli(ms).UTC()
	var date string
	switch {
	case date1904:
		date = time.Date(1904, 1, 1, 0, 0, 0, 0, time.UTC).AddDate(0, 0, int(days)).Format("2006-01-02")
	case days == 60:
		date = "1900-02-29" // the day the 1900 date system counts and the calendar has not
	case days < 60:
		date = time.Date(1899, 12, 31, 0, 0, 0, 0, time.UTC).AddDate(0, 0, int(days)).Format("2006-01-02")
	default:
		date = time.Date(1899, 12, 30, 0, 0, 0, 0, time.UTC).AddDate(0, 0, int(days)).Format("2006-01-02")
	}
	if k == showsDate && ms == 0 {
		return date
	}
	return date + "T" + clock.Format("15:04:05.999")
}
