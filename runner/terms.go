package runner

import (
	"errors"
	"fmt"
	"slices"
	"strings"

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

// TermDescriptions says, for the report, how each term that is not a
// plain numeric column became design columns: the term, what it is, its
// columns. It is empty when every term is a numeric column as it is.
func (or *OutcomeResult) TermDescriptions() [][3]string {
	if or.Design == nil || or.Design.Trivial() {
		return nil
	}
	return describeTerms(or.Design)
}

func describeTerms(dz *design.Design) [][3]string {
	var out [][3]string
	for _, r := range dz.Records() {
		what := "numeric column as it is"
		switch r.Kind {
		case design.KindCategorical:
			what = fmt.Sprintf("categorical %s, %s coding, reference %q, levels %s", r.Reads[0], r.Coding, r.Reference, strings.Join(r.Levels, ", "))
			if len(r.Dropped) > 0 {
				what += fmt.Sprintf(" (never observed, dropped: %s)", strings.Join(r.Dropped, ", "))
			}
			what += levelColumns(r)
		case design.KindInteraction:
			what = "interaction of " + strings.Join(dz.Terms[dz.Term(r.Term)].PartNames(dz), " and ")
		default:
			if r.Log || r.Sqrt || r.CentreAt != nil || r.ScaledBy != nil || r.Poly > 0 || len(r.Knots) > 0 {
				what = describeNumeric(r)
			}
		}
		out = append(out, [3]string{r.Term, what, strings.Join(r.Columns, ", ")})
	}
	return out
}

// levelColumns pairs each column of a categorical term with its level
// when some column name does not spell its level as written (characters
// a name cannot hold, a position appended to keep names distinct), so
// the reader need not guess which column is which level.
func levelColumns(r design.TermRecord) string {
	var levels []string
	for j, l := range r.Levels {
		if (r.Coding == design.Successive && j == 0) || (r.Coding != design.Successive && l == r.Reference) {
			continue
		}
		levels = append(levels, l)
	}
	if len(levels) != len(r.Columns) {
		return ""
	}
	var pairs []string
	plain := true
	for k, c := range r.Columns {
		plain = plain && c == r.Term+"."+levels[k]
		pairs = append(pairs, fmt.Sprintf("%s is %q", c, levels[k]))
	}
	if plain {
		return ""
	}
	return "; " + strings.Join(pairs, ", ")
}

func describeNumeric(r design.TermRecord) string {
	v := r.Reads[0]
	switch {
	case r.Log && r.Shift != 0:
		v = fmt.Sprintf("log(%s + %g)", v, r.Shift)
	case r.Log:
		v = fmt.Sprintf("log(%s)", v)
	case r.Sqrt:
		v = fmt.Sprintf("sqrt(%s)", v)
	}
	if r.CentreAt != nil {
		v = fmt.Sprintf("(%s - %.6g)", v, *r.CentreAt)
		if r.CentreBy == "sample mean" {
			v += " [sample mean]"
		}
	}
	if r.ScaledBy != nil {
		v = fmt.Sprintf("%s / %.6g [sample SD]", v, *r.ScaledBy)
	}
	switch {
	case r.Poly > 0:
		return fmt.Sprintf("%s polynomial of degree %d in %s", r.PolyBasis, r.Poly, v)
	case len(r.Knots) > 0:
		ks := make([]string, len(r.Knots))
		for i, k := range r.Knots {
			ks[i] = fmt.Sprintf("%.6g", k)
		}
		where := "stated knots"
		if len(r.KnotsAt) > 0 {
			where = "knots at sample quantiles"
		}
		return fmt.Sprintf("natural cubic spline in %s, %s %s", v, where, strings.Join(ks, ", "))
	}
	return v
}
