package runner

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// ColumnReading says what one unit of a design column is, so that a slope
// of that column, or exp(b) of it (an odds ratio under the logit link), can
// be named: the change it compares, where it holds when the column's term
// enters an interaction, and whether the column has a reading of its own at
// all.
type ColumnReading struct {
	Column string
	// Change is what a unit of the column is: "per unit of age", "per
	// unit of age (years)" (the dictionary's unit), "per SD (3.11) of
	// z", "1 against 0", "through_road against residential"; for a
	// product column, the changes of its components.
	Change string
	// Where is where the slope holds, when the column's term enters an
	// interaction with other terms: those terms' columns at 0
	// ("street_type = residential, x = 0"); empty otherwise.
	Where string
	// Alone is false for a column of a polynomial or spline basis (and a
	// product with one): a unit change of one basis column with the others
	// held fixed is no change of the predictor, so its slope has no
	// reading of its own.
	Alone bool
	// Term is the plan term (or --predictors item) the column belongs to.
	Term string
	// Level is the level a column of a categorical term stands for, as
	// declared ("" for other columns): its name may not spell it (LevelName).
	Level string
	// named: the change reads without the term's name (a level, 1 against
	// 0), so an interaction's reading puts the name before it.
	named bool
}

// ColumnReadings gives the reading of every design column of the outcome,
// in design order.
func (or *OutcomeResult) ColumnReadings() []ColumnReading {
	ref := or.Data
	if or.Observed != nil {
		ref = or.Observed
	}
	return columnReadings(or.Design, or.Data, or.FitData, ref)
}

// columnReadings gives the reading of every column of design dz, whose raw
// columns are those of raw (nil: no column is read as 1 against 0, valuePair), where
// a slope holds judged against the ranges of the rows of ref (the rows
// fitted; their observed values on imputed data); without a design, fd's
// columns are plain numeric columns.
func columnReadings(dz *design.Design, raw *data.Dataset, fd *fit.Data, ref *data.Dataset) []ColumnReading {
	if dz == nil {
		if fd == nil {
			return nil
		}
		return plainReadings(fd.Predictors, columnPairs(fd))
	}
	per := make([][]ColumnReading, len(dz.Terms)) // the columns of each term, without Where
	for k := range dz.Terms {
		per[k] = termReadings(dz, raw, k, per)
		for i := range per[k] {
			per[k][i].Term = dz.Terms[k].Name
		}
	}
	var out []ColumnReading
	ranges := newSourceRanges(dz, ref)
	for k := range dz.Terms {
		where := holdsAt(dz, k, ranges)
		for _, r := range per[k] {
			r.Where = where
			out = append(out, r)
		}
	}
	return out
}

// holdsAt says where the effect of term k of dz holds when the term
// enters an interaction with other terms: those terms' columns at 0
// ("female = 0", "street_type = residential, x = 0"), each value outside
// the ranges of the rows fitted flagged as an extrapolation (zeroText);
// "" otherwise. The odds ratios and the plan's hypotheses say it in these
// words.
func holdsAt(dz *design.Design, k int, ranges *sourceRanges) string {
	var at []string
	for _, p := range interactionPartners(dz, k) {
		at = append(at, zeroText(dz, p, ranges))
	}
	return strings.Join(at, ", ")
}

// termReadings reads the columns of term k of dz (the terms before it
// already read, in per, for an interaction's components).
func termReadings(dz *design.Design, raw *data.Dataset, k int, per [][]ColumnReading) []ColumnReading {
	t := &dz.Terms[k]
	switch t.Kind {
	case design.KindCategorical:
		c := dz.Sources[t.Source].Cat
		kept, ref := dz.Coded(t.Source)
		var against []string // the level each column's level is compared with
		var levels []string
		for j, l := range kept {
			switch {
			case c.Coding == design.Successive && j > 0:
				levels, against = append(levels, l), append(against, kept[j-1])
			case c.Coding == design.Sum && l != ref:
				levels, against = append(levels, l), append(against, "the unweighted mean of the levels")
			case c.Coding != design.Successive && c.Coding != design.Sum && l != ref:
				levels, against = append(levels, l), append(against, ref)
			}
		}
		out := make([]ColumnReading, len(t.Columns))
		for i, col := range t.Columns {
			out[i] = ColumnReading{Column: col, Alone: true, named: true}
			if i < len(levels) {
				out[i].Change, out[i].Level = levels[i]+" against "+against[i], levels[i]
			}
		}
		return out
	case design.KindInteraction:
		// Every product of one column of each component, the first
		// component slowest (as the design names them).
		type part struct {
			change []string
			alone  bool
		}
		prods := []part{{alone: true}}
		for _, p := range t.Parts {
			var next []part
			for _, a := range prods {
				for _, r := range per[p] {
					ch := r.Change
					if r.named {
						ch = dz.Terms[p].Name + " " + ch
					}
					next = append(next, part{change: append(slices.Clone(a.change), ch), alone: a.alone && r.Alone})
				}
			}
			prods = next
		}
		out := make([]ColumnReading, len(t.Columns))
		for i, col := range t.Columns {
			out[i] = ColumnReading{Column: col, Alone: prods[i].alone,
				Change: "interaction: " + strings.Join(prods[i].change, " × ")}
		}
		return out
	}
	tr := t.Transform
	expr := tr.ValueText(dz.Sources[t.Source].Name)
	if tr.Poly > 0 || tr.Spline() {
		out := make([]ColumnReading, len(t.Columns))
		for i, col := range t.Columns {
			out[i] = ColumnReading{Column: col, Change: fmt.Sprintf("column %d of the basis in %s", i+1, expr)}
		}
		return out
	}
	for j, o := range dz.Terms {
		if j != k && o.Kind != design.KindInteraction && o.Kind != design.KindCategorical && o.Source == t.Source {
			// Another term made of the same data column: this one cannot
			// change with that one held fixed, so no unit change of it
			// alone has a reading (left out, as basis columns are).
			return []ColumnReading{{Column: t.Columns[0], Change: fmt.Sprintf("%s, whose column %s also makes term %s", expr, dz.Sources[t.Source].Name, o.Name)}}
		}
	}
	if !tr.Log && !tr.Sqrt {
		// A change of the column in its own units (centred or scaled
		// alike): the dictionary's unit applies; a unit of log(x) or
		// sqrt(x) is none of x's.
		expr = plan.WithUnit(expr, dz.Sources[t.Source].Unit)
	}
	r := ColumnReading{Column: t.Columns[0], Alone: true, Change: "per unit of " + expr}
	switch {
	case tr.Scale && !math.IsNaN(t.SD):
		r.Change = fmt.Sprintf("per SD (%s) of %s", strconv.FormatFloat(t.SD, 'g', 6, 64), expr)
	case !tr.Log && !tr.Sqrt && raw != nil:
		if p := sourceValues(dz, raw, t.Source); p.oneApart() {
			r.Change, r.named = p.against(), true
		}
	}
	return []ColumnReading{r}
}

// sourceValues is the values numeric source s of design dz takes in the
// raw rows, when at most two (valuePair).
func sourceValues(dz *design.Design, raw *data.Dataset, s int) valuePair {
	return columnValues(raw.X, len(dz.Sources), s)
}

// valuePair is what the two-values rule knows of a numeric column: the
// distinct values it takes (n of them, 3 meaning more than two) and, for
// at most two, which, lowest first. The one rule by which a numeric
// column that takes two values is read as a change from the lower value
// to the higher (a marginal effect "1 to 2", a discrete change) rather
// than per unit (a derivative), and its odds ratio as "2 against 1" when
// the values are one unit apart, as a 0/1 column reads "1 against 0"
// (whole data, a fit without a design, and parts, whose values are
// merged).
type valuePair struct {
	n int
	v [2]float64
}

// add counts value x (a missing value, NaN, is none).
func (p *valuePair) add(x float64) {
	switch {
	case math.IsNaN(x) || p.n >= 3 || p.n >= 1 && x == p.v[0] || p.n == 2 && x == p.v[1]:
	case p.n == 2:
		p.n = 3
	case p.n == 1:
		p.v[1], p.n = x, 2
		if p.v[1] < p.v[0] {
			p.v[0], p.v[1] = p.v[1], p.v[0]
		}
	default:
		p.v[0], p.n = x, 1
	}
}

// merge adds the values of q (another part's).
func (p *valuePair) merge(q valuePair) {
	if q.n >= 3 {
		p.n = 3
		return
	}
	for i := 0; i < q.n; i++ {
		p.add(q.v[i])
	}
}

// Two reports whether the column takes exactly two values.
func (p valuePair) Two() bool { return p.n == 2 }

// oneApart reports whether the column takes two values one unit apart,
// whose odds ratio reads "higher against lower" (against).
func (p valuePair) oneApart() bool { return p.n == 2 && p.v[1]-p.v[0] == 1 }

// change names the change from the lower value to the higher: "0 to 1",
// "1 to 2" (a marginal effect's).
func (p valuePair) change() string { return p.text(0) + " to " + p.text(1) }

// against names the odds ratio of the higher value against the lower:
// "1 against 0", "2 against 1".
func (p valuePair) against() string { return p.text(1) + " against " + p.text(0) }

func (p valuePair) text(i int) string { return strconv.FormatFloat(p.v[i], 'g', -1, 64) }

// columnValues is the valuePair of column c of the row-major rows x, of
// width columns.
func columnValues(x []float64, width, c int) valuePair {
	var p valuePair
	for i := c; i < len(x) && p.n < 3; i += width {
		p.add(x[i])
	}
	return p
}

// TwoValuesOf reports whether column c of the row-major rows x, of width
// columns, takes two values (missing values, NaN, aside), and which, the
// lower first: the two-values rule (valuePair) for a table of the data.
func TwoValuesOf(x []float64, width, c int) (lo, hi float64, ok bool) {
	p := columnValues(x, width, c)
	return p.v[0], p.v[1], p.Two()
}

// columnPairs applies columnValues to every column of fd's rows.
func columnPairs(fd *fit.Data) []valuePair {
	K := len(fd.Predictors)
	out := make([]valuePair, K)
	for k := range out {
		if len(fd.X) == fd.N()*K {
			out[k] = columnValues(fd.X, K, k)
		} else {
			out[k].n = 3
		}
	}
	return out
}

// baseTerms lists the terms that are not interactions under term k: k
// itself, or the components of an interaction, recursively.
func baseTerms(dz *design.Design, k int) []int {
	t := &dz.Terms[k]
	if t.Kind != design.KindInteraction {
		return []int{k}
	}
	var out []int
	for _, p := range t.Parts {
		for _, b := range baseTerms(dz, p) {
			if !slices.Contains(out, b) {
				out = append(out, b)
			}
		}
	}
	return out
}

// interactionPartners lists the terms whose columns at 0 make the slopes
// of term k's columns what they are: the other components of every
// interaction that contains all of k's components, in design order.
func interactionPartners(dz *design.Design, k int) []int {
	mine := baseTerms(dz, k)
	var out []int
	for _, i := range containingInteractions(dz, k) {
		for _, b := range baseTerms(dz, i) {
			if !slices.Contains(mine, b) && !slices.Contains(out, b) {
				out = append(out, b)
			}
		}
	}
	slices.Sort(out)
	return out
}

// containingInteractions lists, in design order, the interactions that
// contain term k: those made of every term k is made of, and more.
func containingInteractions(dz *design.Design, k int) []int {
	mine := baseTerms(dz, k)
	var out []int
	for i := range dz.Terms {
		if i == k || dz.Terms[i].Kind != design.KindInteraction {
			continue
		}
		if all := baseTerms(dz, i); len(all) > len(mine) && containsAll(all, mine) {
			out = append(out, i)
		}
	}
	return out
}

func containsAll(set, sub []int) bool {
	for _, s := range sub {
		if !slices.Contains(set, s) {
			return false
		}
	}
	return true
}

// zeroText says where the columns of term k are 0: "street_type =
// residential", "x = 2.5", "x = 0 (the columns of x.s at 0)" for a basis
// whose columns are all 0 at one raw value (design.Term.ZeroAt), "the
// columns of age2 at 0, which no value of age gives" for one whose are
// not. A raw value outside the ranges of the rows fitted is flagged as the
// new rows' values are (sourceRanges.extrapolation): the effect then holds
// only by extrapolation.
func zeroText(dz *design.Design, k int, ranges *sourceRanges) string {
	t := &dz.Terms[k]
	if t.Kind == design.KindCategorical {
		c := dz.Sources[t.Source].Cat
		kept, ref := dz.Coded(t.Source)
		switch c.Coding {
		case design.Sum:
			return "the unweighted mean over the levels of " + t.Name
		case design.Successive:
			return t.Name + " = " + words.Level(kept[0])
		}
		return t.Name + " = " + words.Level(ref)
	}
	tr := t.Transform
	col := dz.Sources[t.Source].Name
	basis := tr.Poly > 0 || tr.Spline()
	x, ok := t.ZeroAt()
	if !ok {
		if basis {
			return fmt.Sprintf("the columns of %s at 0, which no value of %s gives", t.Name, col)
		}
		// A square root centred below 0.
		return fmt.Sprintf("%s = %s, which no value of %s gives", tr.ValueText(col), strconv.FormatFloat(tr.CentreAt, 'g', 6, 64), col)
	}
	var notes []string
	if basis {
		notes = append(notes, "the columns of "+t.Name+" at 0")
	}
	if w := ranges.extrapolation(t.Source, x); w != "" {
		notes = append(notes, w)
	}
	s := fmt.Sprintf("%s = %s", col, strconv.FormatFloat(x, 'g', 6, 64))
	if len(notes) > 0 {
		s += " (" + strings.Join(notes, "; ") + ")"
	}
	return s
}
