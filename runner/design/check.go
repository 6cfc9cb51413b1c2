package design

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
)

// The checks of a term that need no data, written once for the plan's
// decoder and the compact form of `ordplan fit --predictors`: each returns
// the option at fault (a plan key below the term or the categorical
// column, such as "sqrt" or "reference") with the problem, and the caller
// says where it was written.

// nameBreakers are the characters a design column name cannot hold:
// hypotheses and the command line's group syntax read names between them.
const nameBreakers = " \t[]=+-*,:;()"

// BadNameChars lists the characters of name that a column name cannot
// hold, each once, quoted, in order of first use ("" when none).
func BadNameChars(name string) string {
	var bad []string
	for _, r := range name {
		if q := strconv.Quote(string(r)); strings.ContainsRune(nameBreakers, r) && !slices.Contains(bad, q) {
			bad = append(bad, q)
		}
	}
	return strings.Join(bad, ", ")
}

// Conflict checks the options of a transformation against each other: log
// with sqrt, a polynomial with a spline. It returns the second option
// ("sqrt", "spline") or "" and nil.
func (t Transform) Conflict() (string, error) {
	switch {
	case t.Log && t.Sqrt:
		return "sqrt", fmt.Errorf("give log or sqrt, not both")
	case t.Poly != 0 && t.Spline():
		return "spline", fmt.Errorf("give polynomial or spline, not both")
	}
	return "", nil
}

// CheckDegree checks the degree of a polynomial.
func CheckDegree(k int) error {
	if k < 1 || k > 10 {
		return fmt.Errorf("degree %d is out of range (want 1 to 10)", k)
	}
	return nil
}

// CheckKnots checks the knots of a natural cubic spline: strictly
// increasing, probabilities when they are quantiles, at least 3. It
// returns the index of the knot at fault (-1: the list as a whole).
func CheckKnots(xs []float64, quantiles bool) (int, error) {
	for i, x := range xs {
		if quantiles && !(x >= 0 && x <= 1) {
			return i, fmt.Errorf("%v is not a probability (want 0 to 1)", x)
		}
		if i > 0 && !(x > xs[i-1]) {
			return i, fmt.Errorf("knots must be strictly increasing (%v follows %v)", x, xs[i-1])
		}
	}
	if len(xs) < 3 {
		return -1, fmt.Errorf("a natural cubic spline needs at least 3 knots (2 boundary knots and 1 inside), got %d", len(xs))
	}
	return 0, nil
}

// Check checks a categorical declaration as written (Reference "" for the
// default): at least 2 levels, the reference among them, and under
// successive-difference coding the first level as reference. It returns
// the option at fault ("levels", "reference") or "" and nil.
func (c *Categorical) Check() (string, error) {
	switch {
	case len(c.Levels) < 2:
		return "levels", fmt.Errorf("a categorical predictor needs at least 2 levels, got %d", len(c.Levels))
	case c.Reference != "" && !slices.Contains(c.Levels, c.Reference):
		return "reference", fmt.Errorf("reference level %s is not among the levels (%s)", strconv.Quote(c.Reference), strings.Join(c.Levels, ", "))
	case c.Coding == Successive && c.Reference != "" && c.Reference != c.Levels[0]:
		return "reference", fmt.Errorf("successive-difference coding compares each level with the one before; the reference is the first level (%s)", strconv.Quote(c.Levels[0]))
	}
	return "", nil
}

// ColumnNotTerm says, of a name an interaction gives that is no earlier
// term, the earlier terms that read it when it is a column they rename
// (log(dose) named dose.log): `"dose" is a column; interactions name
// terms, and the term reading it is "dose.log"`; "" otherwise. The plan's
// decoder and the compact form of ordplan fit --predictors say it alike.
func ColumnNotTerm(name string, earlier []TermSpec) string {
	var by []string
	for _, t := range earlier {
		if t.Source == name && t.Name != name && len(t.Interact) == 0 {
			by = append(by, strconv.Quote(t.Name))
		}
	}
	if len(by) == 0 {
		return ""
	}
	return fmt.Sprintf("%s is a column; interactions name terms, and the term reading it is %s", strconv.Quote(name), words.OrList(by))
}
