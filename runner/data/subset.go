package data

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
)

// Condition keeps the rows whose cell in Column compares with a number
// (Op one of <, <=, >, >=, ==, !=) or is (Op "in") or is not (Op
// "not_in") one of the texts in Values. A missing cell (any marker: the
// plan's, the column's own codes, a code that is a number written
// otherwise) neither meets nor fails it: whether such a row belongs to the
// subset is unknown, and the reader counts it as a row with a missing
// value in the column (reader.outsideSubset), not as outside the subset.
type Condition struct {
	Column string   `json:"column"`
	Op     string   `json:"op"`
	Number float64  `json:"number"`
	Values []string `json:"values"`
	Key    string   `json:"key"` // where the plan states it, for reports
}

// DropColumn is what the count of the rows the condition leaves out
// names (DropCount.Column): "outside the subset age >= 18".
func (c Condition) DropColumn() string { return "outside the subset " + c.String() }

// String renders the condition for reports, e.g. `age >= 18` or
// `site in {north, east}`.
func (c Condition) String() string {
	switch c.Op {
	case "in", "not_in":
		op := "in"
		if c.Op == "not_in" {
			op = "not in"
		}
		return fmt.Sprintf("%s %s {%s}", c.Column, op, strings.Join(words.Each(c.Values, words.Level), ", "))
	}
	return fmt.Sprintf("%s %s %s", c.Column, c.Op, strconv.FormatFloat(c.Number, 'g', -1, 64))
}

// keeps reports whether the trimmed cell, which is not missing, meets the
// condition; a message is returned when a comparison meets a cell that is
// not a number.
func (c Condition) keeps(cell string, d Dialect) (bool, string) {
	switch c.Op {
	case "in":
		return slices.ContainsFunc(c.Values, func(s string) bool { return sameValue(s, cell, d) }), ""
	case "not_in":
		return !slices.ContainsFunc(c.Values, func(s string) bool { return sameValue(s, cell, d) }), ""
	}
	v, msg := d.number(cell)
	if msg != "" {
		return false, msg + " (the subset condition " + c.String() + " compares numbers)"
	}
	switch c.Op {
	case "<":
		return v < c.Number, ""
	case "<=":
		return v <= c.Number, ""
	case ">":
		return v > c.Number, ""
	case ">=":
		return v >= c.Number, ""
	case "==":
		return v == c.Number, ""
	case "!=":
		return v != c.Number, ""
	}
	return false, "unknown comparison " + strconv.Quote(c.Op)
}

// numeric reports whether the condition compares numbers (not texts).
func (c Condition) numeric() bool {
	return c.Op != "in" && c.Op != "not_in"
}

// Keeps reports whether a cell written with a decimal point (as the
// simulated files of ordplan rehearse and power write it) meets the
// condition, as the reader would decide for a cell that is not missing; a
// cell that is not a number fails a comparison of numbers.
func (c Condition) Keeps(cell string) bool {
	ok, _ := c.keeps(cell, Dialect{})
	return ok
}

// sameValue reports whether a value of a one_of or none_of condition
// names the cell: the same text (sameText), or the same number written
// otherwise ("3.0" or "3e0" for a cell 3, the cell in the file's decimal
// mark; the value in the plan's point or the file's decimal mark, "3,5"
// in a decimal-comma file), as outcome codes are read (2.0 is the code 2). A boolean word is
// compared as text only.
func sameValue(v, cell string, d Dialect) bool {
	if sameText(v, cell) {
		return true
	}
	if _, isBool := boolWord(cell); isBool {
		return false
	}
	y, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
	if _, isBool := boolWord(v); err != nil && d.DecimalComma && !isBool {
		// A value written in the file's own decimal mark ("3,50"), read
		// as the cells are.
		var msg string
		if y, msg = d.number(strings.TrimSpace(v)); msg == "" {
			err = nil
		}
	}
	if err != nil {
		return false
	}
	x, msg := d.number(cell)
	return msg == "" && x == y
}
