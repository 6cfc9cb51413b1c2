package data

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"regexp"
	"slices"
	"strings"
	"unicode/utf8"
)

// Dialect is how a CSV file writes its fields and numbers: the character
// between fields and the decimal mark. The zero value is comma-separated
// with a decimal point.
type Dialect struct {
	Delimiter    rune `json:"delimiter"`     // ',' (0 means ','), ';' or '\t'
	DecimalComma bool `json:"decimal_comma"` // numbers are written 1,5 rather than 1.5
	// Sheet names the worksheet of an .xlsx workbook ("" = the one visible sheet with cells: chooseSheet);
	// HeaderRow is the sheet row holding the column names (0 or 1 = the
	// first row; rows above it, such as a title, are skipped).
	Sheet     string `json:"sheet"`
	HeaderRow int    `json:"header_row"`
}

// Delimiters maps the delimiter words of plans and flags to characters.
var Delimiters = map[string]rune{"comma": ',', "semicolon": ';', "tab": '\t'}

// DelimiterWords and DecimalWords are the accepted words, in order.
var (
	DelimiterWords = []string{"comma", "semicolon", "tab"}
	DecimalWords   = []string{"point", "comma"}
)

// ParseDialect builds a dialect from the words of a plan or the flags of
// ordplan fit ("" means the default).
func ParseDialect(delimiter, decimal string) (Dialect, error) {
	var d Dialect
	if delimiter != "" {
		c, ok := Delimiters[delimiter]
		if !ok {
			return d, fmt.Errorf("delimiter %q is not one of %s", delimiter, strings.Join(DelimiterWords, ", "))
		}
		d.Delimiter = c
	}
	switch decimal {
	case "", "point":
	case "comma":
		d.DecimalComma = true
	default:
		return d, fmt.Errorf("decimal mark %q is not one of %s", decimal, strings.Join(DecimalWords, ", "))
	}
	return d, nil
}

func (d Dialect) delim() rune {
	if d.Delimiter == 0 {
		return ','
	}
	return d.Delimiter
}

// mark is the decimal mark, '.' or ','.
func (d Dialect) mark() byte {
	if d.DecimalComma {
		return ','
	}
	return '.'
}

// DelimiterWord names the dialect's delimiter as plans write it.
func (d Dialect) DelimiterWord() string {
	for _, w := range DelimiterWords {
		if Delimiters[w] == d.delim() {
			return w
		}
	}
	return "comma"
}

// DecimalWord names the dialect's decimal mark as plans write it.
func (d Dialect) DecimalWord() string {
	if d.DecimalComma {
		return "comma"
	}
	return "point"
}

// number parses a trimmed, non-missing numeric cell in the dialect's
// decimal mark. With a decimal comma, a point in the cell is refused
// rather than guessed at (it could be a thousands separator). A boolean
// word is 1 or 0 (boolWord).
func (d Dialect) number(cell string) (float64, string) {
	if v, ok := boolWord(cell); ok {
		return v, ""
	}
	if !d.DecimalComma {
		if strings.ContainsRune(cell, ',') && isNumberLike(cell) {
			if _, msg := parseNumber(strings.Replace(cell, ",", ".", 1)); msg == "" && strings.Count(cell, ",") == 1 {
				if i := strings.IndexByte(cell, ','); thousands(cell[:i], cell[i+1:]) {
					// 1,234: a decimal comma, or a thousands separator.
					return 0, "value " + quoteCell(cell) + " is not a number (it has a comma: if it is a decimal comma, set data.decimal: comma, or --decimal comma; if it separates thousands, write the number without it, such as " + cell[:i] + cell[i+1:] + ")"
				}
				return 0, "value " + quoteCell(cell) + " is not a number (it has a decimal comma; if the file writes numbers that way, set data.decimal: comma, or --decimal comma)"
			}
		}
		return parseNumber(cell)
	}
	if strings.ContainsRune(cell, '.') && isNumberLike(cell) {
		return 0, "value " + quoteCell(cell) + " has a point, but the decimal mark is a comma (data.decimal: comma); write numbers without thousands separators, such as 1234,5"
	}
	if strings.Count(cell, ",") > 1 {
		return 0, "value " + quoteCell(cell) + " is not a number (more than one decimal comma)"
	}
	v, msg := parseNumber(strings.Replace(cell, ",", ".", 1))
	if msg != "" {
		return 0, strings.Replace(msg, quoteCell(strings.Replace(cell, ",", ".", 1)), quoteCell(cell), 1)
	}
	return v, ""
}

// thousands reports whether a number written whole,frac could be whole
// thousands and frac more: frac is three digits, whole one to three digits
// (after a sign) that do not start with 0.
func thousands(whole, frac string) bool {
	whole = strings.TrimLeft(strings.TrimSpace(whole), "+-")
	frac = strings.TrimSpace(frac)
	digits := func(s string) bool { return strings.Trim(s, "0123456789") == "" }
	return len(frac) == 3 && digits(frac) && len(whole) >= 1 && len(whole) <= 3 && digits(whole) && whole[0] != '0'
}

// pointEvidence gathers, over the cells of a column read as numbers,
// the evidence that its decimal marks are thousands separators (3.473
// written for 3473 beside 313, as files written with a decimal comma do,
// or "3,473" beside 313 read with a decimal comma): every cell with the
// mark writes one to three digits, not starting with 0, then the mark
// and three digits (read as thousands, 1000 or more), and integers
// without it, all below 1000, are there too. Any other cell is evidence
// against, which settles it: a decimal number written otherwise (1.5,
// 0.375, 1234.5), an integer of 1000 or more written without a
// separator, an exponent, text. Numbers written with three decimals each
// way (1.250 beside 2, never 0.375 nor 1.25) would look the same: the
// check is made where the other mark is not a separator the file can
// have (Dialect.thousandsMark).
type pointEvidence struct {
	mark    byte   // the decimal mark looked at: '.' or ','
	example string // the first cell with the mark
	line    int    // its line
	integer string // the first integer without a point
	points  int    // cells with a point that read as thousands
	small   int    // integers without a point, below 1000
	against bool   // a cell no thousands separator writes so
}

// add counts a trimmed, non-missing cell on line.
func (e *pointEvidence) add(cell string, line int) {
	if e.against {
		return
	}
	i := strings.IndexByte(cell, e.mark)
	if i < 0 {
		digits := strings.TrimPrefix(strings.TrimPrefix(cell, "-"), "+")
		if digits == "" || strings.Trim(digits, "0123456789") != "" || len(strings.TrimLeft(digits, "0")) > 3 {
			e.against = true
			return
		}
		if e.small == 0 {
			e.integer = cell
		}
		e.small++
		return
	}
	whole := cell[:i]
	if len(whole) > 0 && (whole[0] == '-' || whole[0] == '+') {
		whole = whole[1:]
	}
	if !thousands(whole, cell[i+1:]) || whole != strings.TrimSpace(whole) {
		e.against = true
		return
	}
	if e.points == 0 {
		e.example, e.line = cell, line
	}
	e.points++
}

// suspect reports whether the cells added are written as thousands
// separated with a point would be, so far: some with a point, and none
// against.
func (e *pointEvidence) suspect() bool { return !e.against && e.points > 0 }

// conclusive reports whether the cells added show thousands separators.
func (e *pointEvidence) conclusive() bool { return !e.against && e.points > 0 && e.small > 0 }

// thousandsMark is the decimal mark whose cells thousandsPoints looks at
// (0: none): a point in a semicolon- or tab-separated file read with a
// decimal point (a file written with a decimal comma separates thousands
// with points), a comma in a file read with a decimal comma (a file
// written with a decimal point separates thousands with commas, quoted in
// a comma-separated file). A comma-separated file read with a decimal
// point is not looked at: a comma in its numbers is refused (number).
func (d Dialect) thousandsMark() byte {
	switch {
	case d.DecimalComma:
		return ','
	case d.delim() != ',':
		return '.'
	}
	return 0
}

// markWord names a decimal mark, '.' or ',', in the plural.
func markWord(mark byte) string {
	if mark == ',' {
		return "commas"
	}
	return "points"
}

// pointSample is the number of data rows thousandsPoints reads before it
// gives up on a column that shows no sign of thousands separators.
const pointSample = 1000

// thousandsPoints refuses CSV text when a column it reads as numbers
// writes its decimal marks as thousands separators (pointEvidence, of the
// mark Dialect.thousandsMark names: points in a semicolon or tab file
// read with a decimal point, commas read with a decimal comma): read as
// decimal marks they would be numbers a thousand times too small, with
// no error. It reads the first pointSample rows of the text apart from
// the rows' path, and the rest only when a column shows the sign there,
// so that a file without it costs no more than those rows (nothing at
// all for a comma-separated file read with a decimal point). A column
// whose every value has the mark and three digits after it, and no
// integer beside, may be either: it gets a note (reader.pointNotes), not
// a refusal.
func (r *reader) thousandsPoints() error {
	d := r.opt.Dialect
	mark := d.thousandsMark()
	if r.raw == nil || r.head == nil || mark == 0 {
		return nil
	}
	var cols []usedCol
	for _, c := range r.cols {
		if r.asNumbers(c) {
			cols = append(cols, c)
		}
	}
	if len(cols) == 0 {
		return nil
	}
	cr := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(r.raw, utf8BOM)))
	cr.Comma = d.delim()
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = trimsLeadingSpace(cr.Comma)
	cr.ReuseRecord = true
	if _, err := cr.Read(); err != nil {
		return nil
	}
	ev := make([]pointEvidence, len(cols))
	for k := range ev {
		ev[k].mark = mark
	}
	for row := 1; ; row++ {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil // a problem the rows' path reports
		}
		for k, c := range cols {
			if c.index >= len(rec) {
				continue
			}
			if cell := strings.TrimSpace(rec[c.index]); !r.missingText(c.name, cell) {
				line, _ := cr.FieldPos(c.index)
				ev[k].add(cell, line)
			}
		}
		if row == pointSample && !slices.ContainsFunc(ev, func(e pointEvidence) bool { return e.suspect() }) {
			return nil
		}
	}
	word := d.DecimalWord() // point or comma
	for k, e := range ev {
		read := e.example // the value it was read as
		if mark == ',' {
			read = e.example + " as " + strings.Replace(e.example, ",", ".", 1)
		}
		whole := strings.Replace(e.example, string(mark), "", 1)
		if e.suspect() && e.small == 0 {
			// Every value has the mark and three digits after it: decimals
			// written with three places, or thousands separated; said, not
			// refused.
			r.pointNotes = append(r.pointNotes, fmt.Sprintf("Column %s: every value is written with a %s and three digits after it (%d values, such as %s), none otherwise, in a %s-separated file read with a decimal %s (data.decimal: %s): they were read as decimals (%s); if the %s separate thousands (%s), every value was read a thousand times too small: write the numbers without separators. The column's possible range in the plan (dictionary.%s.range) settles it: check and run refuse a value outside it",
				cols[k].name, word, e.points, e.example, d.DelimiterWord(), word, word, read, markWord(mark), whole, cols[k].name))
			r.pointCols = append(r.pointCols, cols[k].name)
		}
		if e.conclusive() {
			return r.fail(e.line, cols[k].name, "value %s looks like %s written with a thousands separator: every value of the column with a %s has three digits after it and would be 1000 or more without it (%d values), and the others are integers below 1000 written without a %s (%d, such as %s); a decimal %s reads it as %s. Write the numbers without thousands separators (%s); or, if the %s are decimal %s, write the whole numbers with three decimals too (%s)",
				quoteCell(e.example), whole, word, e.points, word, e.small, quoteCell(e.integer), word, strings.Replace(e.example, ",", ".", 1), whole, markWord(mark), markWord(mark), quoteCell(e.integer+string(mark)+"000"))
		}
	}
	return nil
}

// checkUTF8 refuses text that is not UTF-8, from the first bytes read (a
// rune cut at the end of the sample is not counted).
func checkUTF8(head []byte) string {
	if i := invalidUTF8(head, true); i >= 0 {
		return notUTF8(head, i)
	}
	return ""
}

// invalidUTF8 is the index of the first byte of b that is not valid UTF-8,
// or -1 when there is none; a rune cut by the end of b is not counted when
// cut is true (b ends where the bytes read end).
func invalidUTF8(b []byte, cut bool) int {
	if utf8.Valid(b) {
		return -1
	}
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n <= 1 {
			if cut && len(b)-i < utf8.UTFMax && !utf8.FullRune(b[i:]) {
				return -1
			}
			return i
		}
		i += n
	}
	return -1
}

// notUTF8 is the message for text whose byte i is not valid UTF-8.
func notUTF8(text []byte, i int) string {
	line := 1 + bytes.Count(text[:i], []byte{'\n'})
	return fmt.Sprintf("is not UTF-8 text (byte 0x%02x on line %d is not valid UTF-8; perhaps Latin-1 or Windows-1252): save the file as UTF-8", text[i], line)
}

// SuggestDialect looks at the first lines of a CSV file (its bytes) and,
// when they look written in another dialect than d, says which plan keys
// would read them; "" when nothing suggests another dialect.
func SuggestDialect(raw []byte, d Dialect) string {
	want, ok := guessDialect(raw, d)
	if !ok || want.delim() == d.delim() && want.DecimalComma == d.DecimalComma {
		return ""
	}
	var keys []string
	if want.delim() != d.delim() {
		keys = append(keys, "delimiter: "+want.DelimiterWord())
	}
	if want.DecimalComma != d.DecimalComma {
		keys = append(keys, "decimal: "+want.DecimalWord())
	}
	return fmt.Sprintf("the file looks %s-separated with a decimal %s, but is read as %s-separated with a decimal %s: set %s under data (ordplan fit: --delimiter %s --decimal %s)",
		want.DelimiterWord(), want.DecimalWord(), d.DelimiterWord(), d.DecimalWord(), strings.Join(keys, " and "), want.DelimiterWord(), want.DecimalWord())
}

// quotedDecimalComma is a quoted number with a decimal comma, as a
// comma-separated file must write it.
var quotedDecimalComma = regexp.MustCompile(`"\s*[-+]?[0-9]*,[0-9]+\s*"`)

// DetectDialect is the dialect the first lines of a CSV file (its bytes)
// look written in: the delimiter the header holds most of (comma when it
// holds none), and a decimal comma when the cells write numbers as 1,5
// (quoted in a comma-separated file) and none as 1.5.
func DetectDialect(raw []byte) Dialect {
	d, _ := guessDialect(raw, Dialect{})
	return d
}

// guessDialect is d changed where the first lines of raw look written
// otherwise (false: no header line to look at).
func guessDialect(raw []byte, d Dialect) (Dialect, bool) {
	raw = bytes.TrimPrefix(raw, utf8BOM)
	head := raw[:min(len(raw), 64<<10)]
	lines := strings.Split(strings.ReplaceAll(string(head), "\r\n", "\n"), "\n")
	if len(lines) > 1 && len(head) == 64<<10 {
		lines = lines[:len(lines)-1] // the last one may be cut
	}
	if len(lines) == 0 || strings.TrimSpace(lines[0]) == "" {
		return d, false
	}
	hdr := lines[0]
	count := func(c rune) int { return strings.Count(hdr, string(c)) }
	want := d
	if count(d.delim()) == 0 {
		best, bestN := rune(0), 0
		for _, w := range DelimiterWords {
			c := Delimiters[w]
			if n := count(c); n > bestN {
				best, bestN = c, n
			}
		}
		if best != 0 {
			want.Delimiter = best
		}
	}
	// The decimal mark: cells like 1,5 (quoted, when the delimiter is a
	// comma), or cells with a point and no comma under a decimal comma.
	{
		commas, points := 0, 0
		for _, ln := range lines[1:min(len(lines), 200)] {
			if want.delim() == ',' {
				commas += len(quotedDecimalComma.FindAllString(ln, -1))
				ln = quotedDecimalComma.ReplaceAllString(ln, "")
			}
			for _, cell := range strings.Split(ln, string(want.delim())) {
				cell = strings.Trim(strings.TrimSpace(cell), `"`)
				if !isNumberLike(cell) {
					continue
				}
				if _, msg := parseNumber(strings.Replace(cell, ",", ".", 1)); msg == "" && strings.Count(cell, ",") == 1 && !strings.ContainsRune(cell, '.') {
					commas++
				} else if _, msg := parseNumber(cell); msg == "" && strings.ContainsRune(cell, '.') {
					points++
				}
			}
		}
		switch {
		case commas > 0 && points == 0:
			want.DecimalComma = true
		case points > 0 && commas == 0:
			want.DecimalComma = false
		}
	}
	return want, true
}
