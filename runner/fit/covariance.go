package fit

import "ordplan/internal/words"

// Covariance is how the covariance of the estimates (and so the standard
// errors) is computed.
type Covariance int

// The covariance kinds. Fit itself computes Observed or Expected; the
// sandwich kinds replace them afterwards (Sandwich, SandwichPlain,
// Clustered in robust.go).
const (
	Observed      Covariance = iota // inverse of the observed information (minus the Hessian)
	Expected                        // inverse of the expected (Fisher) information
	Sandwich                        // A^-1 B A^-1 from the row scores, times N/(N-P) (HC1)
	SandwichPlain                   // the same without the small-sample factor (HC0)
	Clustered                       // scores summed within clusters, times G/(G-1) (N-1)/(N-P) (CR1)
)

// CovarianceWords is the vocabulary of covariance kinds, in the order of
// the constants.
var CovarianceWords = words.New[Covariance]("covariance", "observed", "expected", "sandwich", "sandwich_plain", "clustered")

func (c Covariance) String() string { return CovarianceWords.Name(c) }

// MarshalText writes the covariance kind's word.
func (c Covariance) MarshalText() ([]byte, error) { return CovarianceWords.Text(c) }

// UnmarshalText reads a covariance kind's word.
func (c *Covariance) UnmarshalText(b []byte) (err error) {
	*c, err = CovarianceWords.Parse(string(b))
	return err
}

// IsSandwich reports whether the kind replaces the model-based covariance
// by a sandwich estimate.
func (c Covariance) IsSandwich() bool {
	return c == Sandwich || c == SandwichPlain || c == Clustered
}

// covarianceText describes each covariance kind at three lengths, in the
// order of the constants: how it is computed (a report's sentence), a
// label with its small-sample factor (the text table of ordplan fit), and
// a phrase for the methods paragraph.
var covarianceText = [...]struct{ describe, label, phrase string }{
	Observed: {"observed information (inverse of minus the Hessian at the maximum)",
		"observed information", "observed information"},
	Expected: {"expected information (Fisher scoring form)",
		"expected information", "expected information"},
	Sandwich: {"sandwich estimator A^-1 B A^-1 (A the observed information, B the outer product of the row scores), times N/(N-P) (HC1)",
		"sandwich (HC1: times N/(N-P))", "sandwich estimator with a small-sample factor"},
	SandwichPlain: {"sandwich estimator A^-1 B A^-1 (A the observed information, B the outer product of the row scores), without a small-sample factor (HC0)",
		"sandwich (HC0: no small-sample factor)", "sandwich estimator without a small-sample factor"},
	Clustered: {"cluster-robust sandwich estimator (scores summed within clusters), times G/(G-1) (N-1)/(N-P) with G clusters",
		"cluster-robust sandwich (CR1: times G/(G-1) (N-1)/(N-P))", "cluster-robust sandwich estimator"},
}

// text is the kind's entry of covarianceText (Observed's for a value
// outside the vocabulary).
func (c Covariance) text() (t struct{ describe, label, phrase string }) {
	if c < 0 || int(c) >= len(covarianceText) {
		return covarianceText[Observed]
	}
	return covarianceText[c]
}

// Describe says in one sentence how the covariance is computed.
func (c Covariance) Describe() string { return c.text().describe }

// Label names the kind with its small-sample factor, for a compact table.
func (c Covariance) Label() string { return c.text().label }

// Phrase names the kind in running prose (a methods paragraph).
func (c Covariance) Phrase() string { return c.text().phrase }
