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

// collinearTerms says a collinearity the rank check found (fit.InputError
// with Collinear) in the words of the plan or the flags: the terms whose
// columns are involved, the columns themselves only where they differ
// from their terms, and for a plan the place of each term. It returns the
// place of the term to remove (":LINE:COL", "" for flags) and the message,
// or ok false when err is no collinearity or its columns are not the
// design's.
func (r Reading) collinearTerms(err error, dz *design.Design, source string, lost func([]data.LevelRef) string) (place, msg string, ok bool) {
	var ie *fit.InputError
	if !errors.As(err, &ie) || ie.Collinear == nil || dz == nil {
		return "", "", false
	}
	c := ie.Collinear
	termOf := func(col int) int {
		if col < 0 || col >= len(dz.Columns) {
			return -1
		}
		for t, term := range dz.Terms {
			for _, name := range term.Columns {
				if name == dz.Columns[col] {
					return t
				}
			}
		}
		return -1
	}
	at := termOf(c.Predictor)
	if at < 0 {
		return "", "", false
	}
	var others []int // terms of the combination, in design order, once each
	plain := len(dz.Terms[at].Columns) == 1 && dz.Terms[at].Columns[0] == dz.Terms[at].Name
	var cols []string
	for _, k := range c.With {
		t := termOf(k)
		if t < 0 {
			return "", "", false
		}
		cols = append(cols, fmt.Sprintf("%q", dz.Columns[k]))
		if len(dz.Terms[t].Columns) != 1 || dz.Terms[t].Columns[0] != dz.Terms[t].Name {
			plain = false
		}
		if t != at && !slices.Contains(others, t) {
			others = append(others, t)
		}
	}
	spec := func(t int) *design.TermSpec {
		for i := range r.Design.Terms {
			if r.Design.Terms[i].Name == dz.Terms[t].Name {
				return &r.Design.Terms[i]
			}
		}
		return nil
	}
	named := func(t int) string {
		s := fmt.Sprintf("%q", dz.Terms[t].Name)
		if ts := spec(t); ts != nil && ts.Line > 0 {
			s += fmt.Sprintf(" (%s:%d:%d)", source, ts.Line, ts.Col)
		}
		return s
	}
	// An interaction among the terms that needs a combination of levels no
	// row has is the cause, whatever column the check stopped at.
	empty := ""
	for _, t := range append([]int{at}, others...) {
		if empty = dz.EmptyCells(t); empty != "" {
			// Why no row used has the first combination, when its rows
			// were all dropped (data.LevelDrops): "; that combination
			// occurs in 62 rows of the data, each dropped for the subset
			// (...)".
			var cell []data.LevelRef
			for j, l := range dz.Terms[t].Empty[0] {
				cell = append(cell, data.LevelRef{Column: dz.Terms[t].EmptyOf[j], Level: l})
			}
			if lost == nil {
				break
			}
			if why := lost(cell); why != "" {
				empty += "; that combination" + strings.TrimPrefix(why, "It")
			}
			break
		}
	}
	var b strings.Builder
	switch {
	case c.Constant && plain && empty == "":
		fmt.Fprintf(&b, "term %q is constant (every row used has %g): it cannot be estimated alongside the cutpoints; remove it", dz.Terms[at].Name, c.Value)
		return termPlaceOf(spec(at), b.String())
	case c.Constant:
		fmt.Fprintf(&b, "term %q: its column %q is %g in every row used", dz.Terms[at].Name, dz.Columns[c.Predictor], c.Value)
		if empty == "" {
			b.WriteString(", so it cannot be estimated alongside the cutpoints; remove the term")
			return termPlaceOf(spec(at), b.String())
		}
		fmt.Fprintf(&b, ": no row used has %s, so the interaction cannot be estimated for every combination of levels; leave the interaction out, or merge levels or restrict the rows (subset) so that every combination has rows", empty)
		return termPlaceOf(spec(at), b.String())
	}
	fmt.Fprintf(&b, "term %q is collinear with ", dz.Terms[at].Name)
	switch len(others) {
	case 0:
		b.WriteString("its own columns and the constant")
	case 1:
		fmt.Fprintf(&b, "term %s and the constant", named(others[0]))
	default:
		var names []string
		for _, t := range others {
			names = append(names, named(t))
		}
		fmt.Fprintf(&b, "terms %s and the constant", strings.Join(names, ", "))
	}
	if !plain || len(others) == 0 {
		fmt.Fprintf(&b, ": its column %q is a linear combination of %s and the constant", dz.Columns[c.Predictor], strings.Join(cols, ", "))
	}
	if c.Unexplained > 1e-13 {
		fmt.Fprintf(&b, " (all but %.1g of its variance)", c.Unexplained)
	}
	switch {
	case empty != "":
		fmt.Fprintf(&b, ": no row used has %s, so the interaction cannot be estimated for every combination of levels; leave the interaction out, or merge levels or restrict the rows (subset) so that every combination has rows", empty)
	case len(others) == 0:
		b.WriteString(", so their effects cannot be told apart; remove the term or lower its degree")
	default:
		b.WriteString(", so their effects cannot be told apart; remove one of the terms")
	}
	return termPlaceOf(spec(at), b.String())
}

// termPlaceOf is collinearTerms' result for the message msg about the
// term ts (nil: a term not found in the reading): the term's place in the
// plan (":LINE:COL", "" when not from a file) and msg after its key.
func termPlaceOf(ts *design.TermSpec, msg string) (place, out string, ok bool) {
	if ts != nil {
		if ts.Line > 0 {
			place = fmt.Sprintf(":%d:%d", ts.Line, ts.Col)
		}
		if ts.Key != "" {
			msg = ts.Key + ": " + msg
		}
	}
	return place, msg, true
}

// designError is err, an error of the fit input of outcome r (design dz)
// found by the rank check or a fit, as the command reports it: a
// collinearity in the words of the terms (collinearTerms), at the plan's
// place of the term for a plan; what names the data beyond the outcome
// ("imputed set 2"; "" for none). few is why so few rows remain, when
// more rows were dropped than kept (Dataset.FewRowsSentence,
// PartsSummary.FewRowsSentence; "" for none, or when the refusal is not
// about one data set): a refusal that counts the rows used, a constant or
// collinear term or more parameters than observations, ends with it, the
// likely cause.
func (a *Analysis) designError(r Reading, dz *design.Design, few string, err error, what string) error {
	place, msg, ok := r.collinearTerms(err, dz, a.Source, func(cell []data.LevelRef) string {
		if few != "" || what != "" || a.Imputes() {
			// Why so few rows remain is said after; imputed data hold
			// other rows than those read.
			return ""
		}
		var keys func([]data.DropCount) []string
		if a.Plan {
			keys = r.lossKeys
		}
		return data.LevelDrops(a.Paths(), r.Options, cell, keys)
	})
	var ie *fit.InputError
	counted := ok || errors.As(err, &ie) && ie.FewObservations
	if !counted {
		few = ""
	}
	if ok && few != "" {
		msg += ". " + few
	}
	if what != "" {
		what = ", " + what
	}
	switch {
	case ok && a.Plan:
		return fmt.Errorf("%s%s: %s (data %s, outcome %q%s)", a.Source, place, msg, a.DataFile, r.Outcome, what)
	case ok:
		return fmt.Errorf("%s: %s", a.DataFile, msg)
	case a.Plan && few != "":
		return fmt.Errorf("%s: outcome %q%s: %w. %s", a.DataFile, r.Outcome, what, err, few)
	case a.Plan:
		return fmt.Errorf("%s: outcome %q%s: %v", a.DataFile, r.Outcome, what, err)
	case few != "":
		return fmt.Errorf("%s: %w. %s", a.DataFile, err, few)
	}
	return fmt.Errorf("%s: %w", a.DataFile, err)
}
