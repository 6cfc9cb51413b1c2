package data

import (
	"errors"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"
)

// A boolean is the number 1 (true) or 0 (false) in a column read as
// numbers, and the text true or false in a column read as levels or
// categories, whatever the format: a workbook's boolean cell and a Parquet
// BOOLEAN value are written true or false (sheet.go, cellText), and CSV
// text true or false in any of the spellings boolWord knows is read alike.

// boolWord is the boolean a cell's text spells (true, True, TRUE, false,
// False, FALSE): 1 for true, 0 for false.
func boolWord(cell string) (float64, bool) {
	switch cell {
	case "true", "True", "TRUE":
		return 1, true
	case "false", "False", "FALSE":
		return 0, true
	}
	return 0, false
}

// boolText is a boolean's text in a column read as levels.
func boolText(b bool) string {
	if b {
		return "true"
	}
	return "false"
}

// sameText reports whether a cell is the declared level (or category,
// or subset value) s: as written, or, for a boolean word, in another of
// its spellings (a declared TRUE is the cell true of a workbook), or in
// another Unicode form of the same text (textKey).
func sameText(s, cell string) bool { return textKey(s) == textKey(cell) }

// textKey is a text as sameText compares it: a boolean word as true or
// false, a text beyond ASCII in its composed Unicode form (NFC: the "è"
// of one code point, as most programs type it, and the "e" with a
// combining accent some systems write are one text), any other text as
// it is. Only the comparison uses it: names are printed, and the data
// hashed, as written.
func textKey(s string) string {
	if v, ok := boolWord(s); ok {
		return boolText(v == 1)
	}
	if !isASCII(s) {
		return norm.NFC.String(s)
	}
	return s
}

// isASCII reports whether s holds only ASCII bytes.
func isASCII(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] >= utf8.RuneSelf {
			return false
		}
	}
	return true
}

// spellingsOf adds to index the other spellings of the declared texts
// (each at its text's position), so that a map lookup finds a cell as
// sameText does: the boolean words' other spellings, and a text beyond
// ASCII in its composed and decomposed Unicode forms (NFC, NFD), so that
// a file written in either form is read by the lookup alone; a spelling
// that is itself declared keeps its own position. lookupText finds a cell
// in yet another form.
func spellingsOf(texts []string, index map[string]int) {
	add := func(w string, i int) {
		if _, taken := index[w]; !taken && !slices.Contains(texts, w) {
			index[w] = i
		}
	}
	for i, s := range texts {
		if v, ok := boolWord(s); ok {
			for _, w := range boolSpellings[int(v)] {
				add(w, i)
			}
			continue
		}
		if !isASCII(s) {
			add(norm.NFC.String(s), i)
			add(norm.NFD.String(s), i)
		}
	}
}

// lookupText finds a trimmed cell in an index of declared texts and
// their spellings (spellingsOf): as written, or, beyond ASCII, in its
// composed form.
func lookupText(index map[string]int, cell string) (int, bool) {
	if i, ok := index[cell]; ok {
		return i, true
	}
	if isASCII(cell) {
		return 0, false
	}
	i, ok := index[norm.NFC.String(cell)]
	return i, ok
}

var boolSpellings = [2][]string{{"false", "False", "FALSE"}, {"true", "True", "TRUE"}}

// parseNumber parses a trimmed, non-missing cell as a finite float64.
// On failure it returns a message describing the problem.
func parseNumber(cell string) (float64, string) {
	if strings.ContainsAny(cell, "_xX") {
		// Digit separators and hexadecimal numbers (0x1p3), which
		// strconv reads as Go source writes them, are no data's numbers.
		return 0, "value " + quoteCell(cell) + " is not a number"
	}
	v, err := strconv.ParseFloat(cell, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) && math.IsInf(v, 0) {
			return 0, "value " + quoteCell(cell) + " is infinite (too large for a number)"
		}
		return 0, "value " + quoteCell(cell) + " is not a number"
	}
	if math.IsNaN(v) {
		return 0, "value " + quoteCell(cell) + " is NaN, which is not a number"
	}
	if math.IsInf(v, 0) {
		return 0, "value " + quoteCell(cell) + " is infinite"
	}
	if Underflows(cell, v) {
		return 0, "value " + quoteCell(cell) + " is too small for a number: it is not zero, but smaller in size than the smallest number held (about 4.9e-324), and would be read as 0; write 0 if zero is meant, or give the column in other units (or as its logarithm)"
	}
	return v, ""
}

// Underflows reports whether a number's text, which strconv reads as v,
// writes a nonzero number too small for a float64 (1e-400, read as 0):
// the one test of it, for data cells and plan values alike.
func Underflows(text string, v float64) bool {
	return v == 0 && nonzeroDigit(text)
}

// nonzeroDigit reports whether the digits of a number's text before its
// exponent, if any, hold one other than 0: a number that strconv reads as
// 0 though it is written so has underflowed (1e-400). Subnormal numbers
// (4e-320) are read as strconv reads them, to the nearest number held.
func nonzeroDigit(cell string) bool {
	for i := 0; i < len(cell); i++ {
		switch c := cell[i]; {
		case c == 'e' || c == 'E':
			return false
		case c >= '1' && c <= '9':
			return true
		}
	}
	return false
}

// parseCode parses a trimmed, non-missing outcome cell as an integer
// category code: an integer, or a whole number written with a zero
// fraction in the decimal mark (2.0, 2.00 for 2: a table whose integer
// column also holds a missing value is often written so, and a Parquet
// DOUBLE 2 reads as 2); 2.5 is no code.
func parseCode(cell string, mark byte) (int64, string) {
	if v, ok := boolWord(cell); ok {
		return int64(v), ""
	}
	c, err := strconv.ParseInt(cell, 10, 64)
	if err != nil {
		if whole, ok := zeroFraction(cell, mark); ok {
			if c, err := strconv.ParseInt(whole, 10, 64); err == nil {
				return c, ""
			}
		}
		return 0, "value " + quoteCell(cell) + " is not an integer category code (declare the categories to use text labels: outcomes[].categories; ordplan fit: --categories)"
	}
	return c, ""
}

// declaredCategory is the declared outcome category (its index in labels)
// a trimmed, non-missing cell is: its text (lookupText), or an integer label written
// with a zero fraction (2.0 for the category "2"), as parseCode reads a
// code.
func declaredCategory(labels map[string]int, cell string, mark byte) (int, bool) {
	if i, ok := lookupText(labels, cell); ok {
		return i, true
	}
	if whole, ok := zeroFraction(cell, mark); ok {
		i, ok := labels[whole]
		return i, ok
	}
	return 0, false
}

// zeroFraction is an integer written with a zero fraction in the decimal
// mark ("2.0", "-3.00") without it ("2", "-3"); false for any other cell.
func zeroFraction(cell string, mark byte) (string, bool) {
	i := strings.IndexByte(cell, mark)
	if i < 0 || i == len(cell)-1 || strings.Trim(cell[i+1:], "0") != "" {
		return "", false
	}
	whole := cell[:i]
	digits := strings.TrimLeft(whole, "+-")
	if len(whole)-len(digits) > 1 || digits == "" || strings.Trim(digits, "0123456789") != "" {
		return "", false
	}
	return whole, true
}

// describeMissing names a missing cell for a message.
func describeMissing(cell string) string {
	if cell == "" {
		return "empty cell"
	}
	return quoteCell(cell)
}

// isNumberLike reports whether a cell starts like a number (a sign, a
// digit or a point), so that a failed parse is a malformed number rather
// than text.
func isNumberLike(cell string) bool {
	if cell == "" {
		return false
	}
	c := cell[0]
	return c == '+' || c == '-' || c == '.' || c >= '0' && c <= '9'
}
