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

// ClusterCorrection is a correction of cluster-robust inference for few
// clusters (covariance: clustered): none (the CR1 sandwich with normal and
// chi-square references), or the delete-one-cluster jackknife covariance
// (ClusterJackknife). Either takes the references of a cluster-robust
// covariance: t on G-1 degrees of freedom (Result.RefDF) and
// ClusterJointReference.
type ClusterCorrection int

// The corrections.
const (
	NoCorrection ClusterCorrection = iota // the cluster-robust sandwich, normal and chi-square references
	Jackknife                             // delete-one-cluster jackknife (t(G-1) and F(q, G-q) references, as the clustered sandwich)
)

// ClusterCorrectionWords is the vocabulary of the corrections, in the
// order of the constants.
var ClusterCorrectionWords = words.New[ClusterCorrection]("few-cluster correction", "none", "jackknife")

func (c ClusterCorrection) String() string { return ClusterCorrectionWords.Name(c) }

// MarshalText writes the correction's word.
func (c ClusterCorrection) MarshalText() ([]byte, error) { return ClusterCorrectionWords.Text(c) }

// UnmarshalText reads a correction's word.
func (c *ClusterCorrection) UnmarshalText(b []byte) (err error) {
	*c, err = ClusterCorrectionWords.Parse(string(b))
	return err
}

// JackknifeDescribe says in one sentence how the delete-one-cluster
// jackknife covariance is computed and which references its inference
// takes (the covariance's Describe under the correction).
const JackknifeDescribe = `delete-one-cluster jackknife: the model refitted without each cluster in turn, from the full fit's estimates, V = (G-1)/G sum_g (b_(g) - b_mean)(b_(g) - b_mean)' with G clusters; single estimates, intervals and p-values refer to t on G-1 degrees of freedom, ` + ClusterJointReference

// ClusterJointReference says how a joint Wald test on a cluster-robust
// covariance (the clustered sandwich or the jackknife) is referred
// (Result.waldTest).
const ClusterJointReference = "a joint Wald statistic W of q restrictions as W (G-q)/((G-1) q) to F(q, G-q) (Hotelling's T-squared approximation for a covariance estimated from G cluster sums; q >= G restrictions are not tested)"

// JackknifeLabel names the jackknife covariance for a compact table.
const JackknifeLabel = "delete-one-cluster jackknife ((G-1)/G sum of squared deviations of the refits; t on G-1 df, F(q, G-q))"

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
