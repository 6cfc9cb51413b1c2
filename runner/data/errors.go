package data

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"
)

// ErrEmptyFile, ErrNotRegular, ErrFileFormat and ErrNoRows are the Err of
// the Error of a file that holds nothing (not even a header line), of a
// path that is not a regular file (CheckRegular), of a file whose header
// no data row follows (HeaderWithRows), and of a file that as a whole is not
// in a form ordplan reads (compressed, an archive, binary or UTF-16 text,
// a workbook or Parquet file that is broken or cut short: sniff,
// workbookFormat, openParquet): the plan's check names the key of the
// file for them (data.file, data.parts, data.imputed, inference.predict;
// plan.unreadableFile).
var (
	ErrEmptyFile  = errors.New("file is empty")
	ErrNotRegular = errors.New("not a regular file")
	ErrFileFormat = errors.New("not in a form ordplan reads")
	ErrNoRows     = errors.New("no data rows after the header")
)

// formats is what ordplan reads, for the messages of a file in another
// form.
const formats = "ordplan reads plain CSV or TSV text, .xlsx workbooks and Parquet files"

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
	// Dropped, when the message ends with why so few rows remain
	// (Dataset.FewRowsSentence), are the rows dropped: the cause, whose
	// plan keys a plan names rather than the column's.
	Dropped []DropCount
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

// ColumnKey is a column name as a header's names and the names a plan or
// a flag gives are compared: a name beyond ASCII in its composed Unicode
// form (NFC), so that "café" typed with one code point for the é names
// the column a file heads with an "e" and a combining accent, as some
// systems write (declared levels match cells alike: textKey); no other
// folding, so that TRUE and true, or a and A, are two names. Names are
// printed as written.
func ColumnKey(name string) string {
	if isASCII(name) {
		return name
	}
	return norm.NFC.String(name)
}

// HasColumn reports whether header holds the column col (ColumnKey).
func HasColumn(header []string, col string) bool {
	k := ColumnKey(col)
	for _, h := range header {
		if ColumnKey(h) == k {
			return true
		}
	}
	return false
}

// NearColumn gives the first of header that differs from col only in
// letter case or in its separators ('-', '.', ' ' and '_' read alike):
// the one decision of which column a name missing from a header meant,
// for the plan's checks (the plan's keys) and the reader's messages (the
// flags of ordplan fit). It allocates nothing, so that comparing a name
// with a long header costs no memory.
func NearColumn(col string, header []string) (string, bool) {
	for _, h := range header {
		if looseEqual(h, col, "-. ") {
			return h, true
		}
	}
	return "", false
}

// notInHeader is the message of a column (of the role named, "" for
// none) missing from the header names: the column it may mean, or the
// columns there are.
func notInHeader(role, col string, names []string) string {
	msg := "column not found in the header"
	if role != "" {
		msg = role + " " + msg
	}
	if hint := SpacedColumn(col, names); hint != "" {
		return msg + "; " + hint
	}
	if h, ok := NearColumn(col, names); ok {
		return msg + "; did you mean " + quoteCell(h) + "?"
	}
	return msg + "; available columns: " + quoteList(names)
}

// SpacedColumn says, of a column col a header (names) lacks, the name in
// it that is col but for its spaces: a line break or another control
// character between its words (which a plan cannot write: BreaksInName),
// or a no-break space or two spaces where col has one; "" when there is
// none. The message of a missing column and the plan's check say it.
func SpacedColumn(col string, names []string) string {
	for _, h := range names {
		if strings.Join(strings.Fields(h), " ") != strings.Join(strings.Fields(col), " ") {
			continue
		}
		if BreaksInName(h) {
			return "the file names it " + quoteCell(h) + ", with a line break (or another control character) in the name, which a plan cannot write: rename the column in the file, on one line"
		}
		return "the file names it " + quoteCell(h) + ", with other spaces (a no-break space, or more than one) between its words: write the name so (in a plan, a double-quoted name takes \\u00a0 for a no-break space), or rename the column in the file"
	}
	return ""
}

// BreaksInName reports whether a column name holds a line break, a tab
// or another control character (a spreadsheet's header cell whose text
// wraps onto two lines): a plan, whose names are printable text on one
// line, cannot name such a column.
func BreaksInName(name string) bool {
	return strings.ContainsFunc(name, unicode.IsControl)
}

// looseEqual reports whether a and b are equal ignoring letter case and
// with each character of seps read as '_'.
func looseEqual(a, b, seps string) bool {
	fold := func(r rune) rune {
		if strings.ContainsRune(seps, r) {
			return '_'
		}
		return unicode.ToLower(r)
	}
	for a != "" && b != "" {
		ra, na := utf8.DecodeRuneInString(a)
		rb, nb := utf8.DecodeRuneInString(b)
		if fold(ra) != fold(rb) {
			return false
		}
		a, b = a[na:], b[nb:]
	}
	return a == "" && b == ""
}
