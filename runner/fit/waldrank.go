package fit

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// RankTolerance is the tolerance of the numerical rank of the covariance
// R V R' of a Wald test's restrictions (restrictionRank): scaled to unit
// diagonal, an eigenvalue counts when it exceeds RankTolerance times the
// largest. Rounding leaves the eigenvalues of a singular covariance near
// 1e-15 of the largest; 1e-10 keeps a margin of five digits either way.
const RankTolerance = 1e-10

// errNoRestrictions refuses a Wald test of no restrictions: with two
// outcome categories (one boundary) the slopes of a nonparallel predictor
// are one slope, and their equality has nothing to test.
var errNoRestrictions = fmt.Errorf("no restrictions")

// restrictedCov is R V R' (q x q) for the q rows of R over the P
// parameters of V (P x P, row-major), refused for q = 0
// (errNoRestrictions): the one check of every Wald test's rows, on one
// data set (waldStatDiff) or pooled over imputed sets (Result.WaldDefined).
func restrictedCov(R [][]float64, V []float64, P int) (*mat.SymDense, error) {
	n := len(R)
	if n == 0 {
		return nil, errNoRestrictions
	}
	M := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s := 0.0
			for a := 0; a < P; a++ {
				if R[i][a] == 0 {
					continue
				}
				for b := 0; b < P; b++ {
					s += R[i][a] * V[a*P+b] * R[j][b]
				}
			}
			M.SetSym(i, j, s)
		}
	}
	return M, nil
}

// restrictionRank is the numerical rank of the covariance M of q
// restrictions: the number of eigenvalues of M scaled to unit diagonal
// (D^-1/2 M D^-1/2, D its diagonal) above RankTolerance times the largest.
// A restriction of zero (or not finite) variance counts for none; scaling
// makes the rank independent of the parameters' units.
func restrictionRank(M *mat.SymDense) int {
	q := M.SymmetricDim()
	s := make([]float64, q)
	for i := range s {
		if v := M.At(i, i); v > 0 && !math.IsInf(v, 1) {
			s[i] = 1 / math.Sqrt(v)
		}
	}
	sc := mat.NewSymDense(q, nil)
	for i := 0; i < q; i++ {
		for j := i; j < q; j++ {
			sc.SetSym(i, j, M.At(i, j)*s[i]*s[j])
		}
	}
	var es mat.EigenSym
	if !es.Factorize(sc, false) {
		return 0
	}
	vals := es.Values(nil)
	largest := 0.0
	for _, v := range vals {
		largest = math.Max(largest, v)
	}
	rank := 0
	for _, v := range vals {
		if largest > 0 && v > RankTolerance*largest {
			rank++
		}
	}
	return rank
}

// waldDefined says why no Wald test of the restrictions whose covariance
// is M can be made, or returns nil: the covariance must have full rank q
// (restrictionRank). clusters is the number of clusters G of a
// cluster-robust covariance (0 for any other): its rank is at most G-1
// (the clusters' summed scores add up to the total score, zero at the
// maximum), so more than G-1 restrictions are refused whatever the
// numerical rank says. The one check of every Wald test of several
// restrictions on a fit's covariance (waldStatDiff, Result.WaldDefined).
func waldDefined(M *mat.SymDense, clusters int) error {
	q := M.SymmetricDim()
	if clusters > 0 && q > clusters-1 {
		return fmt.Errorf("%d restrictions need at least %d clusters, and the data have %d: a cluster-robust covariance from G clusters has rank at most G-1", q, q+1, clusters)
	}
	if r := restrictionRank(M); r < q {
		if clusters > 0 {
			return fmt.Errorf("the covariance of the restrictions is singular (rank %d of %d, from the cluster-robust covariance of %d clusters)", r, q, clusters)
		}
		return fmt.Errorf("the covariance of the restrictions is singular (rank %d of %d)", r, q)
	}
	return nil
}

// WaldDefined says why no Wald test of the restrictions R (rows over the
// parameters) can be made from r's covariance, or returns nil: the check
// of waldDefined, for tests that combine the covariance otherwise (pooled
// over imputed data sets).
func (r *Result) WaldDefined(R [][]float64) error {
	P := len(r.Estimates)
	if len(r.Cov) != P*P {
		return fmt.Errorf("%s has no covariance", r.Name)
	}
	V, err := r.waldCov(R)
	if err != nil {
		return err
	}
	M, err := restrictedCov(R, V, P)
	if err != nil {
		return err
	}
	return waldDefined(M, r.Clusters)
}

// SingularClustered says why the cluster-robust covariance of fit r is
// singular, or returns "": from G clusters its rank is at most G-1, so a
// model of P > G-1 parameters has combinations of its estimates with no
// estimated variance, and joint tests of G or more restrictions cannot be
// made. A Wald test of at most G-1 restrictions whose covariance R V R'
// has full rank is made from it (waldDefined decides) and read like any
// other; check, run and the report name such a model
// (runner's Analysis.SingularModels).
func (r *Result) SingularClustered() string {
	P := len(r.Estimates)
	if !SingularCovariance(P, r.Clusters) {
		return ""
	}
	return fmt.Sprintf("its %d parameters exceed G-1 = %d: the cluster-robust covariance from G = %d clusters has rank at most G-1, so it is singular", P, r.Clusters-1, r.Clusters)
}

// SingularCovariance reports whether a cluster-robust covariance from G
// clusters (clusters; 0 for any other covariance) of a model of P
// parameters is singular: P > G-1.
func SingularCovariance(P, clusters int) bool {
	return clusters > 0 && P > clusters-1
}
