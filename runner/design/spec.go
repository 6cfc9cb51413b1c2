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
	Levels     []string // as written in the plan, in order
	Reference  string   // default: the first level
	Coding     string   // Treatment (default), Sum or Successive
	Ordered    bool     // the levels are ordered as listed
	Unobserved string   // UnobservedRefuse (default) or UnobservedDrop
}

// Source is one raw column a design reads.
type Source struct {
	Name string
	Cat  *Categorical // nil: numeric
}

// Transform is the chain applied to a numeric column, in this order:
// log or sqrt, centring, scaling, then a polynomial or spline basis.
type Transform struct {
	Log      bool
	Shift    float64 // log(v + Shift)
	Sqrt     bool
	Centre   string  // "" (none), "mean" or "value"
	CentreAt float64 // Centre == "value"
	Scale    bool    // divide by the sample standard deviation
	Poly     int     // degree; 0 = none
	PolyRaw  bool    // raw powers instead of orthogonal polynomials
	// Natural cubic spline: knots at stated values, or at stated
	// quantiles (probabilities) of the transformed sample.
	Knots     []float64
	Quantiles []float64
}

// Empty reports whether t changes nothing.
func (t Transform) Empty() bool {
	return !t.Log && !t.Sqrt && t.Centre == "" && !t.Scale && t.Poly == 0 && t.Knots == nil && t.Quantiles == nil
}

// Spline reports whether t ends in a spline basis.
func (t Transform) Spline() bool { return t.Knots != nil || t.Quantiles != nil }

// TermSpec is one term as the plan states it.
type TermSpec struct {
	Name      string   // term name (column names derive from it)
	Source    string   // raw column, for a single-column term
	Transform          // numeric terms only
	Interact  []string // names of earlier terms, for an interaction
	Key       string   // plan key path, for messages
}

// Spec is the plan's description of a design: the raw columns it reads
// and its terms, in order.
type Spec struct {
	Sources []Source
	Terms   []TermSpec
}
