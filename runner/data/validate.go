package data

import (
	"fmt"
	"io"
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
}

// ValidationError lists the cells of a file that break its dictionary.
type ValidationError struct {
	File     string
	Problems []*Error // the first MaxProblems, in file order
	Total    int      // all problems found
}

// MaxProblems is the number of problems a ValidationError lists.
const MaxProblems = 10

func (e *ValidationError) Error() string {
	lines := make([]string, 0, len(e.Problems)+1)
	for _, p := range e.Problems {
		lines = append(lines, p.Error())
	}
	if e.Total > len(e.Problems) {
		lines = append(lines, fmt.Sprintf("%s: ... %d problem(s) in all against the data dictionary", e.File, e.Total))
	}
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

// ValidateDialect is Validate for a file in the given dialect.
func ValidateDialect(path string, rules []Rule, missingTokens []string, d Dialect) error {
	f, err := openData(path)
	if err != nil {
		return err
	}
	defer f.Close()
	r := &reader{file: path, opt: Options{MissingTokens: missingTokens, ColumnMissing: map[string][]string{}, Dialect: d}}
	r.missing = r.opt.missingSet()
	for _, ru := range rules {
		r.opt.ColumnMissing[ru.Column] = ru.Missing
	}
	if err := r.start(f); err != nil {
		return err
	}
	_, where, err := r.names()
	if err != nil {
		return err
	}
	type ruled struct {
		Rule
		index  int
		values map[float64]bool
	}
	var cols []ruled
	for _, ru := range rules {
		j, ok := where[ru.Column]
		if !ok {
			continue
		}
		c := ruled{Rule: ru, index: j}
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
	for {
		rec, err := r.cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return r.csvErr(err, rec)
		}
		for _, c := range cols {
			cell := strings.TrimSpace(rec[c.index])
			if r.missingIn(c.Column, cell) || !c.Numeric {
				continue
			}
			var msg string
			x, bad := r.opt.Dialect.number(cell)
			switch {
			case bad != "":
				msg = bad + "; the data dictionary (" + c.Key + ") describes a numeric column"
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
	if ve.Total > 0 {
		return ve
	}
	return nil
}

func fmtG(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
