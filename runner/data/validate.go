package data

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"ordplan/internal/words"
	"strconv"
	"strings"
)

// Rule is what a data dictionary says of one column.
type Rule struct {
	Column  string
	Key     string    // plan key of the dictionary entry, for messages
	Numeric bool      // values must be numbers
	Range   []float64 // [min, max] inclusive, or nil
	Values  []string  // allowed numeric values, or nil
	Missing []string  // the column's own missing-value codes
	// Outcome says the column is an outcome: its values must be one of
	// Categories (in any spelling of a boolean word), or integer codes
	// when Categories is nil. Key is then the outcome's plan key.
	Outcome    bool
	Categories []string
}

// ValidationError lists the cells of a file that break its dictionary.
type ValidationError struct {
	File     string
	Problems []*Error // the first MaxProblems, in file order
	Total    int      // all problems found
	// Renamed says, for an outcome some of whose declared categories no
	// row holds while undeclared values are found, that a category may
	// have been renamed in the data (renamedHints).
	Renamed []string
	tally   map[string]*categoryTally // by outcome column
}

// categoryTally counts, for an outcome with declared categories, the rows
// holding each category and each undeclared value.
type categoryTally struct {
	seen       []int
	undeclared map[string]int
	order      []string // undeclared values, as first found
}

// count adds a cell of the outcome to the tally: declared at index i
// (ok), or not.
func (e *ValidationError) count(c ruled, cell string, i int, ok bool) {
	if e.tally == nil {
		e.tally = map[string]*categoryTally{}
	}
	t := e.tally[c.Column]
	if t == nil {
		t = &categoryTally{seen: make([]int, len(c.Categories)), undeclared: map[string]int{}}
		e.tally[c.Column] = t
	}
	if ok {
		t.seen[i]++
		return
	}
	if t.undeclared[cell] == 0 {
		t.order = append(t.order, cell)
	}
	t.undeclared[cell]++
}

// merge adds another part's tallies (a later chunk of the file).
func (e *ValidationError) merge(o *ValidationError) {
	for col, ot := range o.tally {
		if e.tally == nil {
			e.tally = map[string]*categoryTally{}
		}
		t := e.tally[col]
		if t == nil {
			e.tally[col] = ot
			continue
		}
		for i, n := range ot.seen {
			t.seen[i] += n
		}
		for _, v := range ot.order {
			if t.undeclared[v] == 0 {
				t.order = append(t.order, v)
			}
			t.undeclared[v] += ot.undeclared[v]
		}
	}
}

// renamedHints words, for each outcome with declared categories that no
// row holds and undeclared values that rows hold, that a category may
// have been renamed in the data: the plan's categories then need the new
// name (under a lock, a change to state among the deviations).
func (e *ValidationError) renamedHints(cols []ruled) {
	for _, c := range cols {
		t := e.tally[c.Column]
		if t == nil || len(t.order) == 0 {
			continue
		}
		var absent, found []string
		for i, n := range t.seen {
			if n == 0 {
				absent = append(absent, strconv.Quote(c.Categories[i]))
			}
		}
		if len(absent) == 0 {
			continue
		}
		for _, v := range t.order {
			found = append(found, fmt.Sprintf("%s (%s)", quoteCell(v), words.Count(t.undeclared[v], "row", "rows")))
		}
		e.Renamed = append(e.Renamed, fmt.Sprintf("%s: column %q: the declared %s %s %s in no row, while %s %s not declared: if the data renamed a category, write its new name in %s (under a lock, a change from the registered plan to state in its deviations)",
			e.File, c.Column, words.Form(len(absent), "category", "categories"), words.AndList(absent), words.Form(len(absent), "is", "are"), words.AndList(found), words.Form(len(found), "is", "are"), c.Key))
	}
}

// MaxProblems is the number of problems a ValidationError lists.
const MaxProblems = 10

func (e *ValidationError) Error() string {
	lines := make([]string, 0, len(e.Problems)+1)
	for _, p := range e.Problems {
		lines = append(lines, p.Error())
	}
	if e.Total > len(e.Problems) {
		lines = append(lines, fmt.Sprintf("%s: ... %s in all against the data dictionary", e.File, words.Count(e.Total, "problem", "problems")))
	}
	lines = append(lines, e.Renamed...)
	return strings.Join(lines, "\n")
}

// Validate reads the file and checks every cell of the ruled columns:
// numbers where the dictionary says numeric, within the range, among the
// allowed values. Missing cells (missingTokens, nil = DefaultMissing, or
// the column's own codes) are not checked. Columns absent from the header
// are left to the plan's column check.
func Validate(path string, rules []Rule, missingTokens []string) error {
	return ValidateDialect(path, rules, missingTokens, Dialect{})
}

// ValidateDialect is Validate for a file in the given dialect. A CSV
// file is read whole (once, or its pinned bytes) and its lines checked in
// chunks on the workers, as Load reads them (chunks.go); the problems are
// joined in file order. Other formats, and CSV files whose quoted fields
// span lines, are read record by record.
func ValidateDialect(path string, rules []Rule, missingTokens []string, d Dialect) error {
	r := &reader{file: path, opt: Options{MissingTokens: missingTokens, ColumnMissing: map[string][]string{}, Dialect: d}}
	r.missing = r.opt.missingSet()
	for _, ru := range rules {
		r.opt.ColumnMissing[ru.Column] = ru.Missing
	}
	var in io.Reader
	if IsParquet(path) || IsWorkbook(path) {
		f, err := openData(path)
		if err != nil {
			return err
		}
		defer f.Close()
		in = f
	} else {
		raw, err := fileBytes(path)
		if err != nil {
			return err
		}
		r.raw, in = raw, bytes.NewReader(raw)
	}
	if err := r.start(in); err != nil {
		return err
	}
	_, where, err := r.names()
	if err != nil {
		return err
	}
	var cols []ruled
	for _, ru := range rules {
		j, ok := where[ColumnKey(ru.Column)]
		if !ok {
			continue
		}
		if ru.Numeric {
			r.readNumbers(ru.Column)
		}
		c := ruled{Rule: ru, index: j}
		if ru.Outcome && ru.Categories != nil {
			c.labels = map[string]int{}
			for i, l := range ru.Categories {
				c.labels[l] = i
			}
			spellingsOf(ru.Categories, c.labels)
		}
		if ru.Values != nil {
			c.values = map[float64]bool{}
			for _, v := range ru.Values {
				if x, err := strconv.ParseFloat(v, 64); err == nil {
					c.values[x] = true
				}
			}
		}
		cols = append(cols, c)
	}
	ve := &ValidationError{File: path}
	if cr, ok := r.cr.(*csv.Reader); ok && r.raw != nil {
		body := int(cr.InputOffset())
		if bytes.HasPrefix(r.raw, utf8BOM) {
			body += len(utf8BOM)
		}
		if chunks, ok := r.lineChunks(r.raw, body); ok {
			found := make([]ValidationError, len(chunks))
			if f := forEachUntil(len(chunks), func(i int) error {
				c := &chunks[i]
				lr := &lineRecords{s: chunkText(r.raw, c), line: c.line - 1, delim: byte(r.opt.Dialect.delim()), quotes: c.quotes, width: r.width}
				cr := *r
				cr.cr = lr
				c.err = cr.validateRecords(cols, &found[i])
				return c.err
			}); f >= 0 {
				return chunks[f].err
			}
			for _, fv := range found {
				ve.Total += fv.Total
				ve.Problems = append(ve.Problems, fv.Problems[:min(len(fv.Problems), MaxProblems-len(ve.Problems))]...)
				ve.merge(&fv)
			}
			ve.renamedHints(cols)
			return ve.result()
		}
	}
	if err := r.validateRecords(cols, ve); err != nil {
		return err
	}
	ve.renamedHints(cols)
	return ve.result()
}

// ruled is a column the dictionary rules, with its place in the header.
type ruled struct {
	Rule
	index  int
	values map[float64]bool
	labels map[string]int // an outcome's declared categories
}

// result is the error of the problems found, nil when none.
func (e *ValidationError) result() error {
	if e.Total > 0 {
		return e
	}
	return nil
}

// validateRecords checks the ruled cells of the records of r.cr, adding
// the problems to ve (the first MaxProblems, and the count of all); a
// record that cannot be read is the error returned.
func (r *reader) validateRecords(cols []ruled, ve *ValidationError) error {
	for {
		rec, err := r.cr.Read()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return r.csvErr(err, rec)
		}
		for _, c := range cols {
			cell := strings.TrimSpace(rec[c.index])
			if r.missingIn(c.Column, cell) || !c.Numeric && !c.Outcome {
				continue
			}
			var msg string
			x, bad := 0.0, ""
			if c.Numeric {
				x, bad = r.opt.Dialect.number(cell)
			}
			switch {
			case c.Outcome && c.labels != nil:
				i, ok := declaredCategory(c.labels, cell, r.opt.Dialect.mark())
				ve.count(c, cell, i, ok)
				if !ok {
					msg = "value " + quoteCell(cell) + " is not one of the declared categories: " + quoteList(c.Categories) + " (" + c.Key + "; the data dictionary describes the whole file, rows outside the plan's subset too; add it to the categories, or list it among the missing-value markers, such as dictionary." + c.Column + ".missing)"
				}
			case c.Outcome:
				if _, bad := parseCode(cell, r.opt.Dialect.mark()); bad != "" {
					msg = bad + " (" + c.Key + " leaves the categories to the data, which must then be integer codes; the data dictionary describes the whole file, rows outside the plan's subset too)"
				}
			case bad != "":
				msg = bad + "; the data dictionary (" + c.Key + ") describes a numeric column" + r.missingWordHint(c.Column, cell)
			case c.Range != nil && (x < c.Range[0] || x > c.Range[1]):
				side := "below"
				if x > c.Range[1] {
					side = "above"
				}
				msg = fmt.Sprintf("value %s is %s the range [%s, %s] of the data dictionary (%s.range)", quoteCell(cell), side, fmtG(c.Range[0]), fmtG(c.Range[1]), c.Key)
			case c.values != nil && !c.values[x]:
				msg = fmt.Sprintf("value %s is not one of the values %s of the data dictionary (%s.values)", quoteCell(cell), strings.Join(c.Values, ", "), c.Key)
			}
			if msg == "" {
				continue
			}
			ve.Total++
			if len(ve.Problems) < MaxProblems {
				line, _ := r.cr.FieldPos(c.index)
				ve.Problems = append(ve.Problems, r.fail(line, c.Column, "%s", msg))
			}
		}
	}
}

func fmtG(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
