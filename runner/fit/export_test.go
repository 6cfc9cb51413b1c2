package fit

import (
	"testing"

	"gonum.org/v1/gonum/mat"
)

// StartsTally gives the external tests of this package the comparison of
// fits with and without abandoned starts (startsTally).
type StartsTally struct{ c startsTally }

// Compare is startsTally.compare; Check is startsTally.check.
func (s *StartsTally) Compare(t *testing.T, label string, on, off *Result) {
	t.Helper()
	s.c.compare(t, label, on, off)
}

func (s *StartsTally) Check(t *testing.T) {
	t.Helper()
	s.c.check(t)
}

// RestrictionRank gives the external tests the numerical rank of the
// covariance R V R' of the restrictions R (restrictionRank).
func RestrictionRank(R [][]float64, V []float64) int {
	return restrictionRank(mustRestrictedCov(R, V, len(R[0])))
}

// mustRestrictedCov is restrictedCov of at least one restriction.
func mustRestrictedCov(R [][]float64, V []float64, P int) *mat.SymDense {
	M, err := restrictedCov(R, V, P)
	if err != nil {
		panic(err)
	}
	return M
}
