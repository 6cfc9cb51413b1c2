package design

// Codings of a categorical term.
const (
	Treatment  = "treatment"  // one 0/1 column per level other than the reference
	Sum        = "sum"        // sum-to-zero: the reference level is -1 in every column
	Successive = "successive" // ordered levels: column k is 1 at level k and above
)

// Handling of a declared level that no row has.
const (
	UnobservedRefuse = "refuse"
	UnobservedDrop   = "drop"
)

// Categorical declares a categorical column.
type Categorical struct {
	Levels     []string `json:"levels"`               // as written in the plan, in order
	Reference  string   `json:"reference,omitempty"`  // default: the first level
	Coding     string   `json:"coding,omitempty"`     // Treatment (default), Sum or Successive
	Ordered    bool     `json:"ordered,omitempty"`    // the levels are ordered as listed
	Unobserved string   `json:"unobserved,omitempty"` // UnobservedRefuse (default) or UnobservedDrop
	// UnobservedAt is where a plan asks for UnobservedDrop
	// (categorical.COLUMN.unobserved), named by the note that a level's
	// column was dropped; "" names the term (a --predictors item, whose
	// |drop asks it).
	UnobservedAt string `json:"-"`
}

// Source is one raw column a design reads.
type Source struct {
	Name string       `json:"name"`
	Cat  *Categorical `json:"categorical,omitempty"` // nil: numeric
	// Unit is the column's unit as the plan's dictionary gives it ("":
	// none), for the readings of its slopes.
	Unit string `json:"unit,omitempty"`
}

// Transform is the chain applied to a numeric column, in this order:
// log or sqrt, centring, scaling, then a polynomial or spline basis.
type Transform struct {
	Log      bool    `json:"log,omitempty"`
	Shift    float64 `json:"shift,omitempty"` // log(v + Shift)
	Sqrt     bool    `json:"sqrt,omitempty"`
	Centre   string  `json:"centre,omitempty"`            // "" (none), "mean" or "value"
	CentreAt float64 `json:"centre_at,omitempty"`         // Centre == "value"
	Scale    bool    `json:"scale,omitempty"`             // divide by the sample standard deviation
	Poly     int     `json:"polynomial_degree,omitempty"` // 0 = none
	PolyRaw  bool    `json:"polynomial_raw,omitempty"`    // raw powers instead of orthogonal polynomials
	// Natural cubic spline: knots at stated values, or at stated
	// quantiles (probabilities) of the transformed sample.
	Knots     []float64 `json:"spline_knots,omitempty"`
	Quantiles []float64 `json:"spline_knot_quantiles,omitempty"`
}

// Empty reports whether t changes nothing.
func (t Transform) Empty() bool {
	return !t.Log && !t.Sqrt && t.Centre == "" && !t.Scale && t.Poly == 0 && t.Knots == nil && t.Quantiles == nil
}

// ValueText names the value of raw column col that t's columns are made
// of, before centring and scaling: "x", "log(x + 1)", "log(x - 10)",
// "sqrt(x)". Every name of a log or square root is written by it (col may
// be a value, in messages about one).
func (t Transform) ValueText(col string) string {
	switch {
	case t.Log && t.Shift > 0:
		return "log(" + col + " + " + fmtNum(t.Shift) + ")"
	case t.Log && t.Shift < 0:
		return "log(" + col + " - " + fmtNum(-t.Shift) + ")"
	case t.Log:
		return "log(" + col + ")"
	case t.Sqrt:
		return "sqrt(" + col + ")"
	}
	return col
}

// Spline reports whether t ends in a spline basis.
func (t Transform) Spline() bool { return t.Knots != nil || t.Quantiles != nil }

// TermSpec is one term as the plan states it.
type TermSpec struct {
	Name      string   `json:"name"`             // term name (column names derive from it)
	Source    string   `json:"source,omitempty"` // raw column, for a single-column term
	Transform          // numeric terms only
	Interact  []string `json:"interact,omitempty"` // names of earlier terms, for an interaction
	Key       string   `json:"plan_key,omitempty"` // plan key path, for messages
	Line, Col int      `json:"-"`                  // where the plan writes the term (0: not from a plan file)
}

// Spec is the plan's description of a design: the raw columns it reads
// and its terms, in order.
type Spec struct {
	Sources []Source   `json:"sources"`
	Terms   []TermSpec `json:"terms"`
}
