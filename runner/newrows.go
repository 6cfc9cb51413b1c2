package runner

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"ordplan/runner/data"
	"ordplan/runner/design"
)

// NewRowOutside is a new row to predict that lies outside the population
// the model was fitted to, with every reason. Such a row is predicted all
// the same (the user may want the prediction), and flagged.
type NewRowOutside struct {
	Line    int      `json:"line"`
	Reasons []string `json:"reasons"`
}

// NewRowSkipped is a new row left out of the predictions for a missing
// value: its line in the file and the columns read that it misses.
type NewRowSkipped struct {
	Line    int      `json:"line"`
	Missing []string `json:"missing"`
}

// SkippedNewRows lists the new rows skipped for a missing value (nil:
// none).
func SkippedNewRows(rs *data.Rows) []NewRowSkipped {
	if rs == nil {
		return nil
	}
	var out []NewRowSkipped
	for i, line := range rs.Skipped {
		out = append(out, NewRowSkipped{Line: line, Missing: rs.SkippedColumns[i]})
	}
	return out
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
	fitted := or.fittedRanges()
	col := func(name string) int { return slices.Index(rows.Header, name) }
	for i := 0; i < rows.N; i++ {
		var why []string
		for _, k := range rows.Fails[i] {
			c := keep[k]
			why = append(why, subsetFailure(c, rows.Cells[i][col(c.Column)]))
		}
		for _, k := range rows.Undecided[i] {
			c := keep[k]
			why = append(why, fmt.Sprintf("%s: cannot be checked against the plan's subset condition %s (%s is missing)", c.Key, c.String(), c.Column))
		}
		for s, src := range dz.Sources {
			if src.Cat == nil {
				why = append(why, numberOutside(an, fitted, s, rows.X[i*S+s])...)
			}
		}
		nr.Outside = append(nr.Outside, why)
		if why != nil {
			nr.Flagged = append(nr.Flagged, NewRowOutside{Line: rows.Lines[i], Reasons: why})
		}
	}
}

// subsetFailure is the reason of a value (cell, its text) that fails
// the plan's subset condition c.
func subsetFailure(c data.Condition, cell string) string {
	if c.Op == "in" || c.Op == "not_in" {
		cell = strconv.Quote(cell)
	}
	return fmt.Sprintf("%s: fails the plan's subset condition %s (%s is %s)", c.Key, c.String(), c.Column, cell)
}

// numberOutside gives the reasons why the value v of numeric source s
// lies outside the population fitted: outside the range or values the
// data dictionary declares, beyond the range of the rows fitted
// (extrapolation). New rows (flagNewRows) and the plan's profile
// (profileOutside) are judged by it.
func numberOutside(an *Analysis, fitted *sourceRanges, s int, v float64) []string {
	var why []string
	name := fitted.dz.Sources[s].Name
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	if b := an.Declared[name]; b != nil {
		switch {
		case b.Range != nil && (v < b.Range[0] || v > b.Range[1]):
			why = append(why, fmt.Sprintf("%s: %s %s is outside the declared range [%s, %s]", b.Key, name, num(v), num(b.Range[0]), num(b.Range[1])))
		case b.Values != nil && !slices.Contains(b.Values, v):
			vals := make([]string, len(b.Values))
			for j, x := range b.Values {
				vals[j] = num(x)
			}
			why = append(why, fmt.Sprintf("%s: %s %s is not one of the declared values %s", b.Key, name, num(v), strings.Join(vals, ", ")))
		}
	}
	if w := fitted.extrapolation(s, v); w != "" {
		why = append(why, w)
	}
	return why
}

// profileOutside says why the plan's profile lies outside the population
// the model was fitted to, judging each value it sets as flagNewRows
// judges a new row's: a subset condition on that column it fails
// (keep, the data's conditions), a number outside the dictionary's
// declaration or beyond the range of the rows fitted (numberOutside, on
// fitted). The columns the profile does not set are at their means or
// reference levels, inside by construction. nil: inside, or no profile.
func profileOutside(an *Analysis, fitted *sourceRanges, keep []data.Condition) []string {
	dz := fitted.dz
	var why []string
	for _, a := range an.Inference.Profile {
		s := dz.Source(a.Predictor)
		if s < 0 {
			continue
		}
		cell := a.Level
		if dz.Sources[s].Cat == nil {
			cell = strconv.FormatFloat(a.Value, 'g', -1, 64)
		}
		for _, c := range keep {
			if c.Column == a.Predictor && !c.Keeps(cell) {
				why = append(why, subsetFailure(c, cell))
			}
		}
		if dz.Sources[s].Cat == nil {
			why = append(why, numberOutside(an, fitted, s, a.Value)...)
		}
	}
	return why
}

// ProfileOutsideWarning is the warning of check and run when the plan's
// profile lies outside the population fitted (why: profileOutside's
// reasons); "" when it does not.
func ProfileOutsideWarning(outcome string, why []string) string {
	if len(why) == 0 {
		return ""
	}
	return fmt.Sprintf("outcome %s: inference.profile lies outside the population the model is fitted to (%s): the marginal effects and pairs of levels at the profile rest there on the model's form alone, and their intervals do not show it", outcome, strings.Join(why, "; "))
}

// profileUndefined says why a term of the model cannot be computed at
// the plan's profile (a value a transformation cannot take: the log of
// a value not positive), judged by the design row as a new row's is
// (designOf, T29); "" when it can, or without a profile. The profile's
// row is the one its marginal effects take (representative).
func profileUndefined(an *Analysis, or *OutcomeResult) string {
	if len(an.Inference.Profile) == 0 || or.Design == nil || or.Data == nil {
		return ""
	}
	x := make([]float64, len(or.Design.Columns))
	var u *design.UndefinedError
	if err := or.Design.Row(or.representative(an.Inference.Profile, true), x); errors.As(err, &u) {
		return u.Reason()
	}
	return ""
}

// ProfileUndefinedWarning is the warning of check and run when a term
// cannot be computed at the plan's profile (why: profileUndefined's
// reason); "" when it can.
func ProfileUndefinedWarning(outcome, why string) string {
	if why == "" {
		return ""
	}
	return fmt.Sprintf("outcome %s: inference.profile: %s: the marginal effects and pairs of levels at the profile cannot be computed (the report says \"Not computed\"); set the profile to a value every term can take", outcome, why)
}

// sourceRanges is the range of each numeric source of a design over the
// rows the models were fitted to (on imputed data, of the observed
// values), each found when first asked for.
type sourceRanges struct {
	dz     *design.Design
	ref    *data.Dataset
	lo, hi []float64
	done   []bool
}

// fittedRanges gives the ranges of the outcome's numeric sources over the
// rows used (or.Observed on imputed data).
func (or *OutcomeResult) fittedRanges() *sourceRanges {
	return newSourceRanges(or.Design, or.AsRead())
}

func newSourceRanges(dz *design.Design, ref *data.Dataset) *sourceRanges {
	S := len(dz.Sources)
	return &sourceRanges{dz: dz, ref: ref, lo: make([]float64, S), hi: make([]float64, S), done: make([]bool, S)}
}

// extrapolation is the one decision that a value v of numeric source s
// lies outside the data: beyond the range of the rows the model was
// fitted to. It says so, led by the word extrapolation, or returns ""
// (inside, a categorical source, or no rows to judge by). New rows to
// predict (flagNewRows) and where an effect holds (holdsAt) read it.
func (r *sourceRanges) extrapolation(s int, v float64) string {
	if r == nil || r.ref == nil {
		return ""
	}
	src := r.dz.Sources[s]
	if !r.done[s] {
		r.done[s] = true
		r.lo[s], r.hi[s] = math.Inf(1), math.Inf(-1)
		if j := slices.Index(r.ref.Predictors, src.Name); j >= 0 && src.Cat == nil {
			for i := 0; i < r.ref.N; i++ {
				if x := r.ref.X[i*r.ref.K+j]; !math.IsNaN(x) {
					r.lo[s], r.hi[s] = math.Min(r.lo[s], x), math.Max(r.hi[s], x)
				}
			}
		}
	}
	lo, hi := r.lo[s], r.hi[s]
	if !(lo <= hi) || (v >= lo && v <= hi) {
		return ""
	}
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	return fmt.Sprintf("extrapolation: %s %s is beyond the range of the rows the model was fitted to, %s to %s", src.Name, num(v), num(lo), num(hi))
}
