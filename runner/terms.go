package runner

import (
	"errors"
	"fmt"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// buildDesign builds the design of spec on a data set read with its
// sources as predictors, and the fit input. Sampling weights were
// rescaled as they were read (data.Options.Sampling), so the design's
// sample constants do not depend on their scale.
func buildDesign(spec design.Spec, ds *data.Dataset) (*design.Design, *fit.Data, error) {
	dz, err := design.Build(spec, ds.X, ds.N, ds.Weights, ds.Lines)
	if err != nil {
		var de *design.Error
		if errors.As(err, &de) && de.Line > 0 && ds.Parts != nil {
			e := *de
			e.Line = 0
			return nil, nil, fmt.Errorf("%s: %v", ds.Where(de.Line), &e)
		}
		return nil, nil, err
	}
	d, err := frozenData(dz, ds)
	if err != nil {
		return nil, nil, err
	}
	return dz, d, nil
}

// frozenData is the fit input of ds through the design dz, whose
// constants may have been frozen on other rows (imputed set 1).
func frozenData(dz *design.Design, ds *data.Dataset) (*fit.Data, error) {
	// Plain numeric columns: the design is the raw rows, shared rather
	// than copied (neither is written after reading).
	X, i, err := ds.X, -1, error(nil)
	if !dz.Identity() {
		X, i, err = dz.Matrix(ds.X, ds.N)
	}
	if err != nil {
		if ds.Parts != nil {
			return nil, fmt.Errorf("data %s: %v", ds.Where(ds.Lines[i]), err)
		}
		return nil, fmt.Errorf("data line %d: %v", ds.Lines[i], err)
	}
	return &fit.Data{Y: ds.Y, J: len(ds.Categories), X: X, Predictors: dz.Columns, Categories: ds.Categories,
		Weights: ds.Weights, Offset: ds.Offset}, nil
}

// termsOf lists the outcome's terms with their design columns.
func termsOf(dz *design.Design) []fit.Term {
	out := make([]fit.Term, len(dz.Terms))
	for i, t := range dz.Terms {
		out[i] = fit.Term{Name: t.Name, Columns: t.Columns}
	}
	return out
}

// termNames lists the names of terms.
func termNames(ts []fit.Term) []string {
	out := make([]string, len(ts))
	for i, t := range ts {
		out[i] = t.Name
	}
	return out
}

// columnsOf gives the design columns of the named terms, in the order
// named; names that are not terms of the outcome are left out.
func columnsOf(ts []fit.Term, names []string) []string {
	var out []string
	for _, n := range names {
		for _, t := range ts {
			if t.Name == n {
				out = append(out, t.Columns...)
			}
		}
	}
	return out
}

// allColumns lists every design column of the terms.
func allColumns(ts []fit.Term) []string {
	var out []string
	for _, t := range ts {
		out = append(out, t.Columns...)
	}
	return out
}

// termsIn keeps the names that are terms of the outcome, in order.
func termsIn(ts []fit.Term, names []string) []string {
	var out []string
	for _, n := range names {
		if slices.Contains(termNames(ts), n) {
			out = append(out, n)
		}
	}
	return out
}

// TermDescriptions says, for the report's table of terms, how each term
// that is not a plain numeric column became design columns: the term,
// what it is (DescribedTerms), its columns. It is empty when every term
// is a numeric column as it is.
func (or *OutcomeResult) TermDescriptions() [][3]string {
	if or.Design == nil || or.Design.Trivial() {
		return nil
	}
	return or.DescribedTerms()
}

// DescribedTerms says in words how every term of the outcome enters the
// models, for the table of terms and the methods paragraph alike: the
// term, what it is (a phrase that can follow the term's name in a
// sentence, constants taken from the data stated with the rows they come
// from), its design columns.
func (or *OutcomeResult) DescribedTerms() [][3]string {
	if or.Design == nil {
		return nil
	}
	rows := "the rows used"
	if or.Imputed != nil {
		rows = "the rows of the first imputed set"
	}
	if w := or.dataOptions.Weights; w != "" {
		rows += ", weighted by " + w
	}
	return describeTerms(or.Design, rows)
}

// describeTerms describes every term of dz; rows says which rows the
// constants taken from the data come from.
func describeTerms(dz *design.Design, rows string) [][3]string {
	var out [][3]string
	for _, r := range dz.Records() {
		var what string
		switch r.Kind {
		case design.KindCategorical:
			what = describeCategorical(r)
		case design.KindInteraction:
			what = "the interaction of " + words.AndList(dz.Terms[dz.Term(r.Term)].PartNames(dz)) + ", the products of their columns"
		default:
			what = describeNumeric(r, rows)
		}
		out = append(out, [3]string{r.Term, what, strings.Join(r.Columns, ", ")})
	}
	return out
}

// describeCategorical says how a categorical term is coded: its column
// when the term has another name, the levels kept (and those dropped for
// having no row), the coding and its reference level. A level whose
// column's name does not spell it as written (characters a name cannot
// hold, a position appended to keep names distinct) is followed by its
// column, so the reader need not guess which column is which level, and
// no level is listed twice however many there are.
func describeCategorical(r design.TermRecord) string {
	what := "categorical"
	if r.Reads[0] != r.Term {
		what += " column " + r.Reads[0]
	}
	columns := levelColumns(r)
	levels := make([]string, len(r.Levels))
	for i, l := range r.Levels {
		levels[i] = words.Level(l)
		if c, ok := columns[l]; ok && c != r.Term+"."+l {
			levels[i] += " (column " + c + ")"
		}
	}
	what += " with levels " + words.AndList(levels)
	if n := len(r.Dropped); n > 0 {
		what += fmt.Sprintf(" (%s %s, declared but in no row used, dropped)", map[bool]string{true: "level", false: "levels"}[n == 1], words.AndList(words.Each(r.Dropped, words.Level)))
	}
	switch r.Coding {
	case design.Sum:
		what += fmt.Sprintf(" in sum-to-zero coding, one column per level other than the reference level %s, which is -1 in every column", words.Level(r.Reference))
	case design.Successive:
		what += fmt.Sprintf(" in successive-difference coding, one column per level after the first (%s), each 1 at its level and above and 0 below", words.Level(r.Levels[0]))
	default:
		what += fmt.Sprintf(" in treatment coding, one 0/1 column per level other than the reference level %s", words.Level(r.Reference))
	}
	return what
}

// levelColumns maps each level of a categorical term that has a column
// to that column (nil if the columns do not match the levels one to one).
func levelColumns(r design.TermRecord) map[string]string {
	var levels []string
	for j, l := range r.Levels {
		if (r.Coding == design.Successive && j == 0) || (r.Coding != design.Successive && l == r.Reference) {
			continue
		}
		levels = append(levels, l)
	}
	if len(levels) != len(r.Columns) {
		return nil
	}
	out := make(map[string]string, len(levels))
	for k, c := range r.Columns {
		out[levels[k]] = c
	}
	return out
}

// describeNumeric says how a numeric term is made from its column: the
// column as recorded, or its value after log or square root, centring and
// scaling written as a formula, then the polynomial or spline basis, with
// every constant taken from the data and the rows it was taken from.
func describeNumeric(r design.TermRecord, rows string) string {
	col := r.Reads[0]
	v := design.Transform{Log: r.Log, Shift: r.Shift, Sqrt: r.Sqrt}.ValueText(col)
	of := v // the value the sample constants are of
	var where []string
	if r.Log {
		where = append(where, "log is the natural logarithm")
	}
	mean := r.CentreAt != nil && r.CentreBy == "sample mean"
	if r.CentreAt != nil {
		v = fmt.Sprintf("%s - %.6g", v, *r.CentreAt)
	}
	if r.ScaledBy != nil {
		if r.CentreAt != nil {
			v = "(" + v + ")"
		}
		v = fmt.Sprintf("%s / %.6g", v, *r.ScaledBy)
	}
	switch {
	case mean && r.ScaledBy != nil:
		where = append(where, fmt.Sprintf("%.6g and %.6g are the mean and standard deviation of %s over %s", *r.CentreAt, *r.ScaledBy, of, rows))
	case mean:
		where = append(where, fmt.Sprintf("%.6g is the mean of %s over %s", *r.CentreAt, of, rows))
	case r.ScaledBy != nil:
		where = append(where, fmt.Sprintf("%.6g is the standard deviation of %s over %s", *r.ScaledBy, of, rows))
	}
	// The value a basis is of, named u when it is a formula.
	in, u := v, v
	if strings.Contains(v, " ") {
		in, u = "u = "+v, "u"
	}
	var what string
	switch {
	case r.Poly > 0 && r.PolyBasis == "raw":
		what = fmt.Sprintf("a raw polynomial of degree %d in %s (powers 1 to %d of %s, not orthogonalized)", r.Poly, in, r.Poly, u)
	case r.Poly > 0:
		what = fmt.Sprintf("an orthogonal polynomial of degree %d in %s (columns orthogonal to each other and to a constant over %s, each with a sum of squares of 1)", r.Poly, in, rows)
	case len(r.Knots) > 0:
		ks := make([]string, len(r.Knots))
		for i, k := range r.Knots {
			ks[i] = fmt.Sprintf("%.6g", k)
		}
		what = fmt.Sprintf("a natural cubic spline in %s with knots at %s", in, words.AndList(ks))
		if len(r.KnotsAt) > 0 {
			ps := make([]string, len(r.KnotsAt))
			for i, p := range r.KnotsAt {
				ps[i] = fmt.Sprintf("%g", p)
			}
			what += fmt.Sprintf(", the %s quantiles of %s over %s", words.AndList(ps), u, rows)
		}
		what += ", linear beyond the outer two"
	case len(where) == 0 && col == r.Term:
		return "numeric as recorded"
	case len(where) == 0 && v == col:
		return "the numeric column " + col + " as recorded"
	default:
		what = v
	}
	if len(where) > 0 {
		what += ", where " + words.AndList(where)
	}
	return what
}
