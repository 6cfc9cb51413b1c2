package data

import (
	"errors"
	"math"
	"slices"
	"strconv"
	"strings"
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
// its spellings (a declared TRUE is the cell true of a workbook).
func sameText(s, cell string) bool { return boolKey(s) == boolKey(cell) }

// boolKey is a text as sameText compares it: a boolean word as true or
// false, any other text as it is.
func boolKey(s string) string {
	if v, ok := boolWord(s); ok {
		return boolText(v == 1)
	}
	return s
}

// spellingsOf adds to index the other spellings of the boolean words among
// the declared texts (each at its text's position), so that a map lookup
// finds a cell as sameText does; a spelling that is itself declared keeps
// its own position.
func spellingsOf(texts []string, index map[string]int) {
	for i, s := range texts {
		v, ok := boolWord(s)
		if !ok {
			continue
		}
		for _, w := range boolSpellings[int(v)] {
			if _, taken := index[w]; !taken && !slices.Contains(texts, w) {
				index[w] = i
			}
		}
	}
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
		return 0, "value " + quoteCell(cell) + " is NaN, not a number (leave the cell empty to mark a missing value)"
	}
	if math.IsInf(v, 0) {
		return 0, "value " + quoteCell(cell) + " is infinite"
	}
	return v, ""
}

// parseCode parses a trimmed, non-missing outcome cell as an integer
// category code.
func parseCode(cell string) (int64, string) {
	if v, ok := boolWord(cell); ok {
		return int64(v), ""
	}
	c, err := strconv.ParseInt(cell, 10, 64)
	if err != nil {
		return 0, "value " + quoteCell(cell) + " is not an integer category code (declare the categories to use text labels)"
	}
	return c, ""
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
