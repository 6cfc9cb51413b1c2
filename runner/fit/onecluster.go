package fit

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"ordplan/internal/words"
)

// NotEstimable names the parameters of a fit whose cluster-robust
// standard errors cannot be estimated: each is moved by a combination of
// the model's columns whose rows (the rows where its score is not 0) all
// lie in one cluster, such as a cluster's own fixed effect under errors
// clustered by the same column, a level met in one cluster, an
// interaction with such a level, or the reference level's intercept when
// every level is one cluster. That combination's score sums to 0 over
// its rows at the maximum, so its sum in that cluster, and in every
// other, is 0: the cluster-robust "meat" carries no information on it
// and its variance would come out near 0. Such parameters get NaN
// standard errors, and every quantity whose gradient loads on such a
// combination (Result.variance, Result.waldRestrictions) is not computed,
// with Reason.
type NotEstimable struct {
	Parameters []string `json:"parameters"`
	// Clusters are the clusters whose rows alone carry the combinations
	// (sorted).
	Clusters []string `json:"clusters"`
	Reason   string   `json:"reason"`
}

// clusterBound is what a fit keeps of NotEstimable to judge other
// quantities: the covariance as computed (raw), the combinations found
// (dirs, in the parameters) and the pseudo-inverse of the rows' score
// cross-products (minv), the scale against which a gradient's load on
// them is measured (loads).
type clusterBound struct {
	raw  []float64
	dirs [][]float64
	ids  []string // the cluster of each of dirs
	minv []float64
}

// boundTolerance: a combination counts as lying in one cluster when
// that cluster holds all but this share of its whitened score energy
// (rounding leaves about 1e-12 on a true one), and a gradient loads on
// such combinations when more than this share of its whitened norm lies
// along them.
const boundTolerance = 1e-7

// loads reports whether gradient g (over the parameters) has a
// non-negligible share along the one-cluster combinations: sum_k
// (g'v_k)^2 / g'M^+g above boundTolerance, with the v_k orthonormal in
// the metric of M, the rows' weighted score cross-products.
func (b *clusterBound) loads(g []float64) bool {
	tot := quadForm(g, b.minv)
	if tot == 0 {
		return false
	}
	on := 0.0
	for _, v := range b.dirs {
		d := dot(g, v)
		on += d * d
	}
	return on > boundTolerance*tot
}

// variance is g'Vg, the delta-method variance of g'theta from r's
// covariance, or NaN when g loads on a combination of the parameters that
// r's cluster-robust covariance cannot estimate (NotEstimable): the one
// reading of the covariance for single quantities (contrasts, odds
// ratios, marginal effects, predictions).
func (r *Result) variance(g []float64) float64 {
	if r.bound != nil {
		if r.bound.loads(g) {
			return math.NaN()
		}
		return quadForm(g, r.bound.raw)
	}
	return quadForm(g, r.Cov)
}

// waldCov is the covariance a Wald test of the restrictions R reads from
// r: its covariance, or under NotEstimable the covariance as computed
// once no row of R loads on a combination it cannot estimate; else an
// error with the reason, so that the test is not computed.
func (r *Result) waldCov(R [][]float64) ([]float64, error) {
	if r.bound == nil {
		return r.Cov, nil
	}
	for _, row := range R {
		if r.bound.loads(row) {
			return nil, fmt.Errorf("%s", r.NotEstimable.Reason)
		}
	}
	return r.bound.raw, nil
}

// waldStatDiff is the Wald statistic diff' (R V R')^-1 diff of the
// restrictions R on r's covariance (waldCov: not computed when a row loads
// on a combination the cluster-robust covariance cannot estimate).
func (r *Result) waldStatDiff(R [][]float64, diff []float64) (float64, error) {
	V, err := r.waldCov(R)
	if err != nil {
		return 0, err
	}
	return waldStatDiff(R, diff, V, len(r.Estimates), r.Clusters)
}

// waldStat is the Wald statistic of R theta = 0 on r's covariance (see
// waldStatDiff).
func (r *Result) waldStat(R [][]float64) (float64, error) {
	rt := make([]float64, len(R))
	for i, row := range R {
		rt[i] = dot(row, r.Estimates)
	}
	return r.waldStatDiff(R, rt)
}

// linearMap is A theta and the covariance A V A' of the n outputs of a
// linear map (or a delta-method Jacobian) A, n x P, of r's parameters: under
// NotEstimable from the covariance as computed, with the rows and columns
// of the outputs whose row of A loads on a combination the cluster-robust
// covariance cannot estimate NaN, so that one marked parameter takes out
// only the outputs that depend on it.
func (r *Result) linearMap(A []float64, n int) ([]float64, []float64) {
	if r.bound == nil {
		return linearMap(A, n, r.Estimates, r.Cov)
	}
	est, cov := linearMap(A, n, r.Estimates, r.bound.raw)
	P := len(r.Estimates)
	for i := 0; i < n; i++ {
		if r.bound.loads(A[i*P : (i+1)*P]) {
			for j := 0; j < n; j++ {
				cov[i*n+j], cov[j*n+i] = math.NaN(), math.NaN()
			}
		}
	}
	return est, cov
}

// VarianceAvailable reports whether the delta-method variance of g'theta
// can be read from r's covariance (see variance).
func (r *Result) VarianceAvailable(g []float64) bool {
	return r.bound == nil || !r.bound.loads(g)
}

// oneClusterCombinations finds the combinations v of the parameters whose
// weighted row scores w_i s_i'v are 0 outside one cluster, for the rows
// (one cluster id each) and scores of pr at theta. It returns them
// orthonormal in the metric of M = sum_i (w_i s_i)(w_i s_i)' (nil when
// none), the cluster of each, and the pseudo-inverse of M.
//
// Whitened by M (z_i = W w_i s_i, sum_i z_i z_i' = I on M's range), a
// combination y lies in cluster g when sum_{i in g} (y'z_i)^2 = 1. Such y
// has y'(sum_{i in g} z_i) = y'W (total score), near 0 at the maximum, in
// every cluster, so it lies in the null space of the whitened meat
// sum_g zbar_g zbar_g': found first (one eigendecomposition); when that
// space is not empty, each row projected on it (t_i = Q w_i s_i), the
// eigenvectors of eigenvalue 1 of each cluster's sum of t_i t_i' are kept.
// Those sums are Q M_g Q', M_g the cluster's own part of M, added up in the
// same pass as M when the clusters' M_g fit in gramBudget; else the rows
// are read again (projectedGrams). The rows' outer products are added in
// blocks (rowGram), so that the pass costs little beside the sandwich's.
func oneClusterCombinations(pr *problem, theta []float64, clusters []string, w func(int) float64) ([][]float64, []string, []float64, error) {
	P := len(theta)
	// The clusters by number, in sorted order.
	num := map[string]int{}
	for _, c := range clusters {
		num[c] = 0
	}
	keys := make([]string, 0, len(num))
	for k := range num {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for g, k := range keys {
		num[k] = g
	}
	idx := make([]int32, len(clusters))
	for i, c := range clusters {
		idx[i] = int32(num[c])
	}
	G := len(keys)
	sums := make([][]float64, G)
	for g := range sums {
		sums[g] = make([]float64, P)
	}
	// Each cluster's own cross-products M_g when they fit in gramBudget
	// values (then M is their sum and no second pass is needed), else M
	// alone.
	perCluster := G*P*P <= gramBudget
	groups := 1
	if perCluster {
		groups = G
	}
	Mg := newRowGram(groups, P, max(1, min(256, gramBudget/max(1, groups*P))))
	err := pr.rowScores(theta, func(i int, s []float64) {
		wi := w(i)
		if wi <= 0 {
			return
		}
		g := int(idx[i])
		cs := sums[g]
		if !perCluster {
			g = 0
		}
		ws := Mg.row(g)
		for j := range s {
			ws[j] = wi * s[j]
			cs[j] += ws[j]
		}
		Mg.add(g)
	})
	if err != nil {
		return nil, nil, nil, err
	}
	grams := Mg.sums()
	Mm := grams[0]
	if perCluster {
		Mm = make([]float64, P*P)
		for _, m := range grams {
			for j, v := range m {
				Mm[j] += v
			}
		}
	}
	// W = Lambda^-1/2 U' D^-1/2 over the eigenvalues of D^-1/2 M D^-1/2
	// above RankTolerance times the largest.
	dsc, S := unitDiagonal(Mm, P)
	var es mat.EigenSym
	if !es.Factorize(S, true) {
		return nil, nil, nil, fmt.Errorf("the rows' score cross-products could not be decomposed")
	}
	vals := es.Values(nil)
	var U mat.Dense
	es.VectorsTo(&U)
	largest := vals[len(vals)-1]
	var W [][]float64 // rows of W
	for k, l := range vals {
		if !(l > RankTolerance*largest) {
			continue
		}
		row := make([]float64, P)
		for j := 0; j < P; j++ {
			row[j] = U.At(j, k) / math.Sqrt(l) * dsc[j]
		}
		W = append(W, row)
	}
	r := len(W)
	minv := make([]float64, P*P)
	for _, row := range W {
		addOuter(minv, row, 1)
	}
	whiten := func(s []float64) []float64 {
		z := make([]float64, r)
		for k, row := range W {
			z[k] = dot(row, s)
		}
		return z
	}
	// The whitened meat and its null space.
	B := mat.NewSymDense(r, nil)
	for g := range keys {
		z := whiten(sums[g])
		for a := 0; a < r; a++ {
			for b := a; b < r; b++ {
				B.SetSym(a, b, B.At(a, b)+z[a]*z[b])
			}
		}
	}
	if !es.Factorize(B, true) {
		return nil, nil, nil, fmt.Errorf("the cluster-robust meat could not be decomposed")
	}
	bvals := es.Values(nil)
	var BU mat.Dense
	es.VectorsTo(&BU)
	limit := 1e-8 * math.Max(bvals[len(bvals)-1], 1)
	var null [][]float64 // basis of the null space, in whitened coordinates
	for k, l := range bvals {
		if l <= limit {
			y := make([]float64, r)
			for a := range y {
				y[a] = BU.At(a, k)
			}
			null = append(null, y)
		}
	}
	if len(null) == 0 {
		return nil, nil, minv, nil
	}
	// Q = null' W (nk x P) projects a weighted score on the null space:
	// t_i = Q w_i s_i; each cluster's sum of t_i t_i'.
	nk := len(null)
	Q := make([]float64, nk*P)
	for m, y := range null {
		for a, row := range W {
			for j := range row {
				Q[m*P+j] += y[a] * row[j]
			}
		}
	}
	var Cg [][]float64 // each cluster's sum of t_i t_i'
	if perCluster {
		// Q M_g Q'.
		for _, m := range grams {
			Cg = append(Cg, aMAt(Q, nk, P, m))
		}
	} else {
		Cg, err = projectedGrams(pr, theta, w, idx, G, Q, nk)
		if err != nil {
			return nil, nil, nil, err
		}
	}
	var dirs [][]float64
	var ids []string
	for g, C := range Cg {
		Cs := mat.NewSymDense(nk, C)
		if !es.Factorize(Cs, true) {
			return nil, nil, nil, fmt.Errorf("cluster %q: its rows' scores could not be decomposed", keys[g])
		}
		cv := es.Values(nil)
		var V mat.Dense
		es.VectorsTo(&V)
		for c, l := range cv {
			if l < 1-boundTolerance {
				continue
			}
			// y = null' u in whitened coordinates; v = W' y in the
			// parameters.
			y := make([]float64, r)
			for m := 0; m < nk; m++ {
				u := V.At(m, c)
				for a := range y {
					y[a] += null[m][a] * u
				}
			}
			v := make([]float64, P)
			for a, row := range W {
				for j := range v {
					v[j] += y[a] * row[j]
				}
			}
			dirs = append(dirs, v)
			ids = append(ids, keys[g])
		}
	}
	return dirs, ids, minv, nil
}

// unitDiagonal is the symmetric P x P matrix M scaled to a unit diagonal,
// D^-1/2 M D^-1/2, with the scale D^-1/2 (0 where M's diagonal is not
// positive).
func unitDiagonal(M []float64, P int) ([]float64, *mat.SymDense) {
	dsc := make([]float64, P)
	for j := range dsc {
		if v := M[j*P+j]; v > 0 {
			dsc[j] = 1 / math.Sqrt(v)
		}
	}
	return dsc, scaledSym(M, P, dsc)
}

// gramBudget is the most values oneClusterCombinations holds for the
// clusters' own score cross-products (G P^2) and their blocks of rows; with
// more it reads the rows a second time (projectedGrams). A variable so
// that a test can take the second way.
var gramBudget = 1 << 22

// projectedGrams reads the rows of pr at theta again and returns, for each
// of the G clusters (idx: each row's), the sum of t_i t_i' over its rows,
// t_i = Q w_i s_i (Q nk x P), the rows taken in blocks of up to 256 (fewer
// with many clusters, at most about 4M values held).
func projectedGrams(pr *problem, theta []float64, w func(int) float64, idx []int32, G int, Q []float64, nk int) ([][]float64, error) {
	P := len(theta)
	T := newRowGram(G, nk, max(1, min(256, (1<<22)/max(1, G*nk))))
	err := pr.rowScores(theta, func(i int, s []float64) {
		wi := w(i)
		if wi <= 0 {
			return
		}
		g := int(idx[i])
		t := T.row(g)
		for m := range t {
			q := Q[m*P : (m+1)*P]
			v := 0.0
			for j, sj := range s {
				v += q[j] * sj
			}
			t[m] = wi * v
		}
		T.add(g)
	})
	if err != nil {
		return nil, err
	}
	return T.sums(), nil
}

// rowGram adds the outer products of rows of n values into one n x n
// matrix per group, a block of rows at a time (a symmetric rank-k update):
// row(g) is the next row of group g to fill, add(g) takes it.
type rowGram struct {
	n, block int
	buf      [][]float64 // per group: block rows of n
	fill     []int
	gram     [][]float64 // per group: n x n, upper triangle until sums
}

func newRowGram(groups, n, block int) *rowGram {
	rg := &rowGram{n: n, block: block, buf: make([][]float64, groups), fill: make([]int, groups), gram: make([][]float64, groups)}
	for g := range rg.buf {
		rg.buf[g] = make([]float64, block*n)
		rg.gram[g] = make([]float64, n*n)
	}
	return rg
}

func (rg *rowGram) row(g int) []float64 {
	k := rg.fill[g] * rg.n
	return rg.buf[g][k : k+rg.n]
}

func (rg *rowGram) add(g int) {
	rg.fill[g]++
	if rg.fill[g] == rg.block {
		rg.flush(g)
	}
}

func (rg *rowGram) flush(g int) {
	k := rg.fill[g]
	if k == 0 {
		return
	}
	a := blas64.General{Rows: k, Cols: rg.n, Stride: rg.n, Data: rg.buf[g][:k*rg.n]}
	c := blas64.Symmetric{Uplo: blas.Upper, N: rg.n, Stride: rg.n, Data: rg.gram[g]}
	blas64.Syrk(blas.Trans, 1, a, 1, c)
	rg.fill[g] = 0
}

// sums returns each group's full matrix of outer products.
func (rg *rowGram) sums() [][]float64 {
	n := rg.n
	for g, m := range rg.gram {
		rg.flush(g)
		for a := 0; a < n; a++ {
			for b := a + 1; b < n; b++ {
				m[b*n+a] = m[a*n+b]
			}
		}
	}
	return rg.gram
}

// markNotEstimable sets the NaN rows and columns of V (P x P) of the
// parameters that load on dirs, returns what the fit keeps to judge
// other quantities and the NotEstimable naming them.
func markNotEstimable(V []float64, names []string, dirs [][]float64, ids []string, minv []float64) (*clusterBound, *NotEstimable) {
	P := len(names)
	b := &clusterBound{raw: append([]float64(nil), V...), dirs: dirs, ids: ids, minv: minv}
	ne := &NotEstimable{}
	e := make([]float64, P)
	var drop []int
	for j := 0; j < P; j++ {
		e[j] = 1
		if b.loads(e) {
			drop = append(drop, j)
			ne.Parameters = append(ne.Parameters, names[j])
		}
		e[j] = 0
	}
	for _, j := range drop {
		for a := 0; a < P; a++ {
			V[j*P+a] = math.NaN()
			V[a*P+j] = math.NaN()
		}
	}
	seen := map[string]bool{}
	for _, id := range ids {
		if !seen[id] {
			seen[id] = true
			ne.Clusters = append(ne.Clusters, id)
		}
	}
	sort.Strings(ne.Clusters)
	ne.Reason = notEstimableReason(ne, func(s string) string { return s })
	return b, ne
}

// notEstimableReason is the one wording of NotEstimable's reason, its
// parameters written by name (Reason: as they are; a report escapes them).
func notEstimableReason(ne *NotEstimable, name func(string) string) string {
	params := make([]string, len(ne.Parameters))
	for i, p := range ne.Parameters {
		params[i] = name(p)
	}
	ids := make([]string, len(ne.Clusters))
	for i, c := range ne.Clusters {
		ids[i] = strconv.Quote(c)
	}
	clusters := "cluster " + words.Some(ids, 3)
	if len(ids) > 1 {
		clusters = "clusters " + words.Some(ids, 3)
	}
	return fmt.Sprintf("the standard errors of %s"+notEstimableMark+"they depend on combinations of the model's columns whose rows all lie in one cluster (%s), "+
		"such as a cluster's own fixed effect or a level met in one cluster; such a combination's score sums to 0 within its cluster at the maximum, so the cluster-robust covariance has no information on it. "+
		"These standard errors, and every test, interval, odds-ratio interval, marginal effect or prediction interval that depends on them, are not available (n/a); "+
		"read those estimates only, or use errors that do not cluster by this column",
		words.Some(params, 8), clusters)
}

// notEstimableMark is the words that mark a reason of notEstimableReason
// (IsNotEstimableReason).
const notEstimableMark = " are not estimable under clustered errors: "

// IsNotEstimableReason reports whether s, the reason a quantity was not
// computed, is NotEstimable's: a report states it once below a table
// rather than in each cell.
func IsNotEstimableReason(s string) bool {
	return strings.HasPrefix(s, "the standard errors of ") && strings.Contains(s, notEstimableMark)
}

// NotEstimableNote is the reason of NotEstimable with the parameters
// written by name (a report's escaping), or "" when every standard error
// is estimable.
func (r *Result) NotEstimableNote(name func(string) string) string {
	if r.NotEstimable == nil {
		return ""
	}
	return notEstimableReason(r.NotEstimable, name)
}

// CovarianceAsComputed is r's covariance with the rows and columns of
// NotEstimable's parameters as the sandwich computed them (what pooling
// over imputed sets combines, PoolNotEstimable marking the pooled fit
// again), or Cov when there are none.
func (r *Result) CovarianceAsComputed() []float64 {
	if r.bound != nil {
		return r.bound.raw
	}
	return r.Cov
}

// PoolNotEstimable marks on r, a fit pooled over imputed sets whose Cov
// pools the sets' CovarianceAsComputed, the parameters that any set's
// cluster-robust covariance cannot estimate (NotEstimable: their rows and
// columns of Cov and their StdErrors NaN), and keeps the pooled covariance
// as computed for the quantities that do not load on them; r's own
// NotEstimable and bound (copied from a set) are replaced.
func (r *Result) PoolNotEstimable(sets []*Result) {
	r.NotEstimable, r.bound = nil, nil
	var dirs [][]float64
	var ids []string
	var minv []float64
	for _, s := range sets {
		if s.bound == nil {
			continue
		}
		dirs = append(dirs, s.bound.dirs...)
		ids = append(ids, s.bound.ids...)
		if minv == nil {
			minv = s.bound.minv
		}
	}
	if len(dirs) == 0 {
		return
	}
	r.Cov = append([]float64(nil), r.Cov...)
	r.bound, r.NotEstimable = markNotEstimable(r.Cov, r.ParamNames, dirs, ids, minv)
	r.StdErrors = append([]float64(nil), r.StdErrors...)
	P := len(r.StdErrors)
	for i := range r.StdErrors {
		if math.IsNaN(r.Cov[i*P+i]) {
			r.StdErrors[i] = math.NaN()
		}
	}
}

// screenTolerance: the clustered meat's smallest eigenvalue in the metric
// of the information, over its largest (at least 1), at or below which
// oneClusterCombinations looks for one-cluster combinations. Looser than
// the test it screens for (a one-cluster combination's eigenvalue is
// rounding, below 1e-12), so that the information standing in for the
// rows' score cross-products cannot hide one.
const screenTolerance = 1e-6

// meatMaySingular reports whether the cluster-robust meat B (P x P, the
// clusters' summed scores' outer products) may have a null direction, in
// the metric of the information A (P x P, positive definite): only then can
// some combination of the parameters lie in one cluster (its summed score
// is 0 in every cluster), and oneClusterCombinations, which reads the rows
// again, is needed. It is always so when the clusters are not more than the
// parameters (B has rank at most G-1).
func meatMaySingular(A, B []float64, P, G int) bool {
	if G <= P {
		return true
	}
	dsc, S := unitDiagonal(A, P)
	var es mat.EigenSym
	if !es.Factorize(S, true) {
		return true
	}
	vals := es.Values(nil)
	if !(vals[0] > RankTolerance*vals[P-1]) {
		return true
	}
	var U mat.Dense
	es.VectorsTo(&U)
	// W = Lambda^-1/2 U' D^-1/2, C = W B W'.
	W := make([]float64, P*P)
	for k := 0; k < P; k++ {
		for j := 0; j < P; j++ {
			W[k*P+j] = U.At(j, k) / math.Sqrt(vals[k]) * dsc[j]
		}
	}
	C := aMAt(W, P, P, B)
	Cs := mat.NewSymDense(P, C)
	if !es.Factorize(Cs, false) {
		return true
	}
	cv := es.Values(nil)
	return cv[0] <= screenTolerance*math.Max(cv[P-1], 1)
}
