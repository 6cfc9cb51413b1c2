package runner

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// NewRowOutside is a new row to predict that lies outside the population
// the model was fitted to, with every reason. Such a row is predicted all
// the same (the user may want the prediction), and flagged.
type NewRowOutside struct {
	Line    int      `json:"line"`
	Reasons []string `json:"reasons"`
}

// flagNewRows says, for each new row, why it lies outside the population
// the chosen model was fitted to, each reason led by the plan key or
// word it rests on:
//   - subset[k]: it fails one of the plan's subset conditions (or cannot
//     be checked against one: its cell there is missing);
//   - dictionary.COLUMN: a numeric column's value is outside the range, or
//     not one of the values, the data dictionary declares;
//   - extrapolation: a numeric column's value is beyond the range of the
//     rows the model was fitted to (on imputed data, of the observed
//     values).
//
// Each column is checked alone: a row inside every column's range can
// still be a combination of values no row used has. A level of a
// categorical column that no row used has is refused when the rows are
// read (readNewRows), so it never reaches here. Notes name the subset
// conditions whose column the new rows lack.
func flagNewRows(an *Analysis, or *OutcomeResult, nr *NewRows) {
	rows, dz := nr.Rows, or.Design
	keep := or.dataOptions.Keep
	for _, k := range rows.Unchecked {
		c := keep[k]
		nr.Notes = append(nr.Notes, fmt.Sprintf("The new rows have no column %s, so they are not checked against the plan's subset condition %s (%s).", c.Column, c.String(), c.Key))
	}
	S := len(dz.Sources)
	// The range of each numeric column over the rows used.
	ref := or.Data
	if or.Observed != nil {
		ref = or.Observed
	}
	lo, hi := make([]float64, S), make([]float64, S)
	for s := range dz.Sources {
		lo[s], hi[s] = math.Inf(1), math.Inf(-1)
		j := slices.Index(ref.Predictors, dz.Sources[s].Name)
		if j < 0 || dz.Sources[s].Cat != nil {
			continue
		}
		for i := 0; i < ref.N; i++ {
			if v := ref.X[i*ref.K+j]; !math.IsNaN(v) {
				lo[s], hi[s] = math.Min(lo[s], v), math.Max(hi[s], v)
			}
		}
	}
	col := func(name string) int { return slices.Index(rows.Header, name) }
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	for i := 0; i < rows.N; i++ {
		var why []string
		for _, k := range rows.Fails[i] {
			c := keep[k]
			cell := rows.Cells[i][col(c.Column)]
			if c.Op == "in" || c.Op == "not_in" {
				cell = strconv.Quote(cell)
			}
			why = append(why, fmt.Sprintf("%s: fails the plan's subset condition %s (%s is %s)", c.Key, c.String(), c.Column, cell))
		}
		for _, k := range rows.Undecided[i] {
			c := keep[k]
			why = append(why, fmt.Sprintf("%s: cannot be checked against the plan's subset condition %s (%s is missing)", c.Key, c.String(), c.Column))
		}
		for s, src := range dz.Sources {
			if src.Cat != nil {
				continue
			}
			v := rows.X[i*S+s]
			if b := an.Declared[src.Name]; b != nil {
				switch {
				case b.Range != nil && (v < b.Range[0] || v > b.Range[1]):
					why = append(why, fmt.Sprintf("%s: %s %s is outside the declared range [%s, %s]", b.Key, src.Name, num(v), num(b.Range[0]), num(b.Range[1])))
				case b.Values != nil && !slices.Contains(b.Values, v):
					vals := make([]string, len(b.Values))
					for j, x := range b.Values {
						vals[j] = num(x)
					}
					why = append(why, fmt.Sprintf("%s: %s %s is not one of the declared values %s", b.Key, src.Name, num(v), strings.Join(vals, ", ")))
				}
			}
			if lo[s] <= hi[s] && (v < lo[s] || v > hi[s]) {
				why = append(why, fmt.Sprintf("extrapolation: %s %s is beyond the range of the rows the model was fitted to, %s to %s", src.Name, num(v), num(lo[s]), num(hi[s])))
			}
		}
		nr.Outside = append(nr.Outside, why)
		if why != nil {
			nr.Flagged = append(nr.Flagged, NewRowOutside{Line: rows.Lines[i], Reasons: why})
		}
	}
}
