package data

import (
	"fmt"
	"strconv"
	"strings"
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
	Key    string // the plan key behind the problem, when the reader knows it (not printed here)
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
	n := 0
	for i := range s {
		if n == maxShown {
			return strconv.Quote(s[:i]) + "..."
		}
		n++
	}
	return strconv.Quote(s)
}

// maxListed is the number of names quoteList shows.
const maxListed = 20

// quoteList renders names as a comma-separated list of quoted strings, the
// first maxListed of them and a count of the rest.
func quoteList(names []string) string {
	n := min(len(names), maxListed)
	q := make([]string, n, n+1)
	for i, name := range names[:n] {
		q[i] = quoteCell(name)
	}
	if len(names) > n {
		q = append(q, fmt.Sprintf("... (%d in all)", len(names)))
	}
	return strings.Join(q, ", ")
}
