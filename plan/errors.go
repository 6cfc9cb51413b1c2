package plan

import (
	"fmt"
	"sort"
	"strings"
)

// Error is one problem found in a plan file.
type Error struct {
	File string // plan file as given to Load or Parse
	Line int    // 1-based; 0 when unknown
	Col  int    // 1-based; 0 when unknown
	Key  string // key path such as "rules[2].choose.by"; may be empty
	Msg  string
}

// Error renders "file:line:col: key: msg", leaving out the parts that are unknown.
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
		if e.Col > 0 {
			fmt.Fprintf(&b, ":%d", e.Col)
		}
	}
	if e.Key != "" {
		b.WriteString(": ")
		b.WriteString(e.Key)
	}
	b.WriteString(": ")
	b.WriteString(e.Msg)
	return b.String()
}

// Errors is every problem found in a plan, sorted by position.
type Errors []*Error

// MaxShown is the number of problems Errors renders; the rest are counted.
const MaxShown = 40

// Error renders one problem per line, the first MaxShown of them, then a
// line counting the others.
func (es Errors) Error() string {
	n := min(len(es), MaxShown)
	lines := make([]string, n, n+1)
	for i, e := range es[:n] {
		lines[i] = e.Error()
	}
	if len(es) > n {
		lines = append(lines, fmt.Sprintf("%s: ... and %d more problems", es[n].File, len(es)-n))
	}
	return strings.Join(lines, "\n")
}

// Unwrap gives the single problems to errors.Is and errors.As.
func (es Errors) Unwrap() []error {
	out := make([]error, len(es))
	for i, e := range es {
		out[i] = e
	}
	return out
}

// sortErrors orders problems by line and column, keeping the order of
// discovery for problems at the same place.
func sortErrors(es Errors) {
	sort.SliceStable(es, func(i, j int) bool {
		if es[i].Line != es[j].Line {
			return es[i].Line < es[j].Line
		}
		return es[i].Col < es[j].Col
	})
}
