package data

import (
	"errors"
	"math"
	"strconv"
	"strings"
)

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
