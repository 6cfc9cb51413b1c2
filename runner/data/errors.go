package data

import (
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Error reports a problem with an input file. It renders on one line as
//
//	file:line: column "name": message
//
// where the line and column parts are left out when they do not apply.
type Error struct {
	File   string // file name as given to Load or Read
	Line   int    // 1-based line in the file (header is line 1); 0 if none
	Column string // column name; "" if none
	Msg    string // what is wrong
	Err    error  // underlying error, if any (for errors.Is / errors.As)
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		b.WriteString(":")
		b.WriteString(strconv.Itoa(e.Line))
	}
	b.WriteString(": ")
	if e.Column != "" {
		fmt.Fprintf(&b, "column %q: ", e.Column)
	}
	b.WriteString(e.Msg)
	return b.String()
}

// Unwrap returns the underlying error, if any.
func (e *Error) Unwrap() error { return e.Err }

// maxShown is the longest cell text quoted in full in a message.
const maxShown = 40

// quoteCell quotes a cell value for a message, shortening long values so
// that a message stays readable and on one line.
func quoteCell(s string) string {
	if utf8.RuneCountInString(s) > maxShown {
		r := []rune(s)
		return strconv.Quote(string(r[:maxShown])) + "..."
	}
	return strconv.Quote(s)
}

// quoteList renders names as a comma-separated list of quoted strings.
func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = quoteCell(n)
	}
	return strings.Join(q, ", ")
}
