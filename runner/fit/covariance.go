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

// Describe says in one sentence how the covariance is computed.
func (c Covariance) Describe() string {
	switch c {
	case Expected:
		return "expected information (Fisher scoring form)"
	case Sandwich:
		return "sandwich estimator A^-1 B A^-1 (A the observed information, B the outer product of the row scores), times N/(N-P) (HC1)"
	case SandwichPlain:
		return "sandwich estimator A^-1 B A^-1 (A the observed information, B the outer product of the row scores), without a small-sample factor (HC0)"
	case Clustered:
		return "cluster-robust sandwich estimator (scores summed within clusters), times G/(G-1) (N-1)/(N-P) with G clusters"
	}
	return "observed information (inverse of minus the Hessian at the maximum)"
}
