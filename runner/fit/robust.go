package fit

import (
	"fmt"
	"math"
	"slices"
	"sort"
)

// SandwichInfo describes how a sandwich covariance was computed.
type SandwichInfo struct {
	Type     Covariance `json:"type"`
	Clusters int        `json:"clusters,omitempty"`
	Factor   float64    `json:"small_sample_factor"`
	Formula  string     `json:"formula"`
	// Trace is tr(A^-1 B) without the factor: the penalty of Takeuchi's
	// criterion (see TIC).
	Trace float64 `json:"-"`
	// Correction is the few-cluster correction the covariance makes
	// (Jackknife: ClusterJackknife), and DF the degrees of freedom of its
	// t references, G-1 for any cluster-robust covariance (the clustered
	// sandwich and the jackknife; 0 for the normal and chi-square).
	Correction ClusterCorrection `json:"correction,omitempty"`
	DF         float64           `json:"reference_df,omitempty"`
	// NotEstimable names the parameters a cluster-robust covariance cannot
	// estimate (nil: none), whose rows and columns of the covariance are
	// NaN; bound keeps the covariance as computed to judge other
	// quantities (see NotEstimable).
	NotEstimable *NotEstimable `json:"-"`
	bound        *clusterBound
}

// rowScores calls fn(i, s) with the score of row i in the parameters
// (unweighted: d log P(y_i | x_i) / d theta).
func (p *problem) rowScores(theta []float64, fn func(i int, s []float64)) error {
	c := p.coefs(theta)
	dv := p.derivs(theta)
	q := p.q
	L := make([]float64, q)
	g := make([]float64, q)
	s := make([]float64, len(theta))
	x := p.d
	xbuf := make([]float64, x.K)
	for i := 0; i < x.n; i++ {
		if x.weight(i) == 0 {
			continue
		}
		p.linear(c, i, L, xbuf)
		if _, ok := p.ker.eval(L, x.y[i], g, nil); !ok {
			return fmt.Errorf("row %d has a zero probability at the estimates", i+1)
		}
		xi := x.row(i, xbuf)
		u := p.rowColumns(theta, xi)
		sg := 0.0
		for m := 0; m < q; m++ {
			sg += g[m]
		}
		for j, d := range dv {
			if d.parallel {
				s[j] = -xi[p.parCols[d.col]] * sg
				continue
			}
			v := 0.0
			for _, e := range d.c {
				v += e.v * g[e.m]
			}
			s[j] = v * u[d.col]
		}
		fn(i, s)
	}
	return nil
}

// SandwichEstimate returns the sandwich covariance A^-1 B A^-1 of a fit, where A is
// the observed information and B the outer product of the scores:
//
//	frequency weights, no clusters: B = sum_i w_i s_i s_i'          factor N/(N-P)        (HC1)
//	sampling weights, no clusters:     B = sum_i (w_i s_i)(w_i s_i)'  factor n/(n-P)        (HC1)
//	clusters c: B = sum_c S_c S_c', S_c = sum_{i in c} w_i s_i       factor G/(G-1) (N-1)/(N-P) (CR1)
//
// with N the number of observations (sum of frequency weights, or rows for
// sampling weights), P the parameters and G the clusters. These are the
// usual heteroskedasticity-consistent and cluster-robust sandwich
// estimators with their customary small-sample factors.
//
// kind is Sandwich, SandwichPlain (no small-sample factor) or Clustered
// (which needs clusters, one id per row).
func SandwichEstimate(d *Data, r *Result, kind Covariance, clusters []string, probability bool) ([]float64, SandwichInfo, error) {
	switch kind {
	case Sandwich, SandwichPlain:
		return sandwich(d, r, nil, probability, kind == Sandwich)
	case Clustered:
		if clusters == nil {
			return nil, SandwichInfo{Type: kind}, fmt.Errorf("clustered covariance needs a cluster id for every row")
		}
		return sandwich(d, r, clusters, probability, true)
	}
	return nil, SandwichInfo{Type: kind}, fmt.Errorf("%s covariance is not a sandwich estimate", kind)
}

func sandwich(d *Data, r *Result, clusters []string, probability, factor bool) ([]float64, SandwichInfo, error) {
	info := SandwichInfo{Type: Sandwich}
	if !r.OK() {
		return nil, info, fmt.Errorf("%s has no usable estimates", r.Name)
	}
	ly, err := newLayout(r.Model, d.J, d.Predictors)
	if err != nil {
		return nil, info, err
	}
	pr := newProblem(d.design(), r.Model, ly, 0)
	theta := r.Estimates
	P := len(theta)
	a := pr.evaluate(theta, 2, false)
	H := pr.hessian(theta, a, true)
	A := make([]float64, P*P)
	for i := range A {
		A[i] = -H[i]
	}
	Ainv, err := invertSym(A, P)
	if err != nil {
		return nil, info, fmt.Errorf("the information of %s is singular", r.Name)
	}
	B := make([]float64, P*P)
	w := func(i int) float64 {
		if d.Weights == nil {
			return 1
		}
		return d.Weights[i]
	}
	var N float64
	if clusters != nil {
		if len(clusters) != d.N() {
			return nil, info, fmt.Errorf("%d cluster ids for %d rows", len(clusters), d.N())
		}
		info.Type = Clustered
		sums := map[string][]float64{}
		err = pr.rowScores(theta, func(i int, s []float64) {
			cs, ok := sums[clusters[i]]
			if !ok {
				cs = make([]float64, P)
				sums[clusters[i]] = cs
			}
			for j := range s {
				cs[j] += w(i) * s[j]
			}
		})
		keys := make([]string, 0, len(sums))
		for k := range sums {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			addOuter(B, sums[k], 1)
		}
		info.Clusters = len(keys)
	} else {
		err = pr.rowScores(theta, func(i int, s []float64) {
			if probability {
				addOuter(B, s, w(i)*w(i))
			} else {
				addOuter(B, s, w(i))
			}
		})
	}
	if err != nil {
		return nil, info, err
	}
	N = d.observations(probability)
	switch info.Type {
	case Clustered:
		G := float64(info.Clusters)
		if G < 2 {
			return nil, info, fmt.Errorf("cluster-robust errors need at least 2 clusters, got %d", info.Clusters)
		}
		info.Factor = G / (G - 1) * (N - 1) / (N - float64(P))
		info.DF = G - 1
		info.Formula = "A^-1 B A^-1, B = sum over clusters of the summed weighted scores' outer products, times G/(G-1) (N-1)/(N-P)"
	default:
		info.Factor = N / (N - float64(P))
		info.Formula = "A^-1 B A^-1, B = sum over rows of the outer products of the scores, times N/(N-P)"
	}
	if !factor {
		info.Factor = 1
		info.Formula = "A^-1 B A^-1 without a small-sample factor"
		if info.Type == Sandwich {
			info.Type = SandwichPlain
		}
	}
	for a := 0; a < P; a++ {
		for b := 0; b < P; b++ {
			info.Trace += Ainv[a*P+b] * B[b*P+a]
		}
	}
	V := sandwichProduct(Ainv, B, P)
	for i := range V {
		V[i] *= info.Factor
	}
	if info.Type == Clustered && meatMaySingular(A, B, P, info.Clusters) {
		dirs, ids, minv, err := oneClusterCombinations(pr, theta, clusters, w)
		if err != nil {
			return nil, info, err
		}
		if len(dirs) > 0 {
			info.bound, info.NotEstimable = markNotEstimable(V, r.ParamNames, dirs, ids, minv)
		}
	}
	return V, info, nil
}

func addOuter(B, s []float64, w float64) {
	P := len(s)
	for a := 0; a < P; a++ {
		if s[a] == 0 {
			continue
		}
		wa := w * s[a]
		for b := 0; b < P; b++ {
			B[a*P+b] += wa * s[b]
		}
	}
}

// sandwichProduct is A^-1 B A^-1 for the symmetric inverse information.
func sandwichProduct(Ainv, B []float64, P int) []float64 {
	return aMAt(Ainv, P, P, B)
}

// UseCovariance replaces the covariance of a fit (and its standard errors)
// by the sandwich or jackknife estimate V, recording its type, clusters
// and the degrees of freedom of its references.
func (r *Result) UseCovariance(V []float64, info SandwichInfo) {
	P := len(r.Estimates)
	r.Cov = V
	r.CovType = info.Type
	r.Clusters = info.Clusters
	r.RefDF = info.DF
	r.Correction = info.Correction
	r.NotEstimable, r.bound = info.NotEstimable, info.bound
	r.StdErrors = make([]float64, P)
	for i := 0; i < P; i++ {
		r.StdErrors[i] = math.Sqrt(math.Max(V[i*P+i], 0))
	}
	r.CheckScale()
}

// FewClusters is the number of clusters below which cluster-robust errors
// are flagged (runner's Analysis.FewClusters): with fewer, the sandwich of summed
// cluster scores is biased downward even with the factor G/(G-1), and its
// tests reject a true hypothesis too often even on t(G-1) and F(q, G-q)
// (docs/models.md, "Sandwich and cluster-robust errors", says why 40).
const FewClusters = 40

// ClusterJackknife returns the delete-one-cluster jackknife covariance of
// fit r of data d, whose rows belong to the clusters named (one id per
// row):
//
//	V = (G-1)/G sum_g (b_(g) - b_mean)(b_(g) - b_mean)'
//
// with G the clusters, b_(g) the estimates of r's model refitted on the
// rows outside cluster g and b_mean their mean. Each refit starts from r's
// estimates (opt as r's fit had them; no random starts) and is an exact
// maximum on its rows, whatever the model's comparison, link and effect
// structure. info.DF = G-1 is the degrees of freedom of the t and F
// references of the inference made from V (Result.RefDF). A refit that
// cannot be made or reaches no usable maximum (a category or a
// predictor's spread missing without the cluster, separation, no
// convergence) refuses the covariance, naming the cluster and the reason:
// no estimate stands in for it.
//
// Parameters that load on a combination of the model's columns whose rows
// all lie in one cluster (NotEstimable, as the clustered sandwich finds
// them) are marked as under the sandwich (info.NotEstimable, with the same
// reason): without that cluster the log-likelihood is flat along the
// combination, so the refit cannot estimate them. The other parameters,
// and every quantity that does not load on such a combination, are the
// same at every maximum of that refit (they are orthogonal to the flat
// directions), so their jackknife stands: the refit is made with the
// flat directions held at the full fit's values (refitFlat), and V's
// entries for them are the usual jackknife of estimates that every refit
// identifies.
func ClusterJackknife(d *Data, r *Result, clusters []string, opt Options) ([]float64, SandwichInfo, error) {
	info := SandwichInfo{Type: Clustered, Correction: Jackknife}
	if !r.OK() {
		return nil, info, fmt.Errorf("%s has no usable estimates", r.Name)
	}
	if len(clusters) != d.N() {
		return nil, info, fmt.Errorf("%d cluster ids for %d rows", len(clusters), d.N())
	}
	if d.ind != nil {
		return nil, info, fmt.Errorf("the jackknife covariance is not defined for a fit with group indicators")
	}
	rows := map[string][]int{}
	for i, c := range clusters {
		rows[c] = append(rows[c], i)
	}
	keys := make([]string, 0, len(rows))
	for k := range rows {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	G := len(keys)
	info.Clusters = G
	if G < 2 {
		return nil, info, fmt.Errorf("the jackknife covariance needs at least 2 clusters, got %d", G)
	}
	bound, err := jackknifeBound(d, r, clusters)
	if err != nil {
		return nil, info, err
	}
	opt.Start = r.Estimates
	opt.RandomStarts = -1
	opt.Covariance = Observed
	opt.Settle = nil
	P := len(r.Estimates)
	est := make([][]float64, G)
	for g, k := range keys {
		sub := d.without(rows[k])
		why := func(format string, a ...any) error {
			return fmt.Errorf("without cluster %q (%d of %d rows), the refit %s: the delete-one-cluster jackknife needs every refit at a maximum, so it is not computed",
				k, len(rows[k]), d.N(), fmt.Sprintf(format, a...))
		}
		if c := sub.emptyCategory(); c >= 0 {
			return nil, info, why("has no row in category %q", d.categories()[c])
		}
		var res *Result
		var err error
		if flat := bound.of(k); flat != nil {
			res, err = refitFlat(sub, r, flat, opt)
		} else {
			res, err = Fit(sub, r.Model, opt)
		}
		if err != nil {
			return nil, info, why("cannot be made (%v)", err)
		}
		if !res.OK() || !res.Converged || len(res.Estimates) != P {
			msg := string(res.Status)
			if res.Message != "" {
				msg += ": " + res.Message
			}
			return nil, info, why("has no usable maximum (%s)", msg)
		}
		est[g] = res.Estimates
	}
	mean := make([]float64, P)
	for _, b := range est {
		for j, v := range b {
			mean[j] += v / float64(G)
		}
	}
	V := make([]float64, P*P)
	dev := make([]float64, P)
	for _, b := range est {
		for j := range b {
			dev[j] = b[j] - mean[j]
		}
		addOuter(V, dev, 1)
	}
	info.Factor = float64(G-1) / float64(G)
	for i := range V {
		V[i] *= info.Factor
	}
	info.DF = float64(G - 1)
	info.Formula = "(G-1)/G sum over clusters g of (b_(g) - b_mean)(b_(g) - b_mean)', b_(g) the estimates refitted without cluster g"
	if bound != nil {
		info.bound, info.NotEstimable = markNotEstimable(V, r.ParamNames, bound.dirs, bound.ids, bound.minv)
	}
	return V, info, nil
}

// without is d less the rows listed (increasing).
func (d *Data) without(out []int) *Data {
	K := d.width()
	n := d.N() - len(out)
	s := &Data{J: d.J, Predictors: d.Predictors, Categories: d.Categories,
		Y: make([]int, 0, n), X: make([]float64, 0, n*K)}
	if d.Weights != nil {
		s.Weights = make([]float64, 0, n)
	}
	if d.Offset != nil {
		s.Offset = make([]float64, 0, n)
	}
	next := 0
	for i := range d.Y {
		if next < len(out) && out[next] == i {
			next++
			continue
		}
		s.Y = append(s.Y, d.Y[i])
		s.X = append(s.X, d.X[i*K:(i+1)*K]...)
		if d.Weights != nil {
			s.Weights = append(s.Weights, d.Weights[i])
		}
		if d.Offset != nil {
			s.Offset = append(s.Offset, d.Offset[i])
		}
	}
	return s
}

// emptyCategory is the first category no row of d has with a positive
// weight, or -1.
func (d *Data) emptyCategory() int {
	seen := make([]bool, d.J)
	for i, y := range d.Y {
		if y >= 0 && y < d.J && d.weight(i) > 0 {
			seen[y] = true
		}
	}
	return slices.Index(seen, false)
}

// jackknifeBound finds the combinations of fit r's parameters whose rows
// all lie in one cluster (oneClusterCombinations at r's estimates; nil
// when there are none), which ClusterJackknife marks not estimable and
// holds fixed in the refit without their cluster, whatever the model's
// effect structure. With constrained predictors too: a column whose rows
// lie in one cluster is 0 on every row left, so its g (and the phi of a
// group holding only such columns) leaves the log-likelihood flat along
// its own axis, and with the reference level one cluster the thresholds
// move with the group's g along the refit's phi, a straight line through
// each of its maxima that the held direction crosses; refitFlat checks
// that the log-likelihood itself is at a maximum, so a direction that was
// not flat makes the refit unusable, with the reason, rather than wrong.
func jackknifeBound(d *Data, r *Result, clusters []string) (*clusterBound, error) {
	ly, err := newLayout(r.Model, d.J, d.Predictors)
	if err != nil {
		return nil, err
	}
	pr := newProblem(d.design(), r.Model, ly, 0)
	dirs, ids, minv, err := oneClusterCombinations(pr, r.Estimates, clusters, d.weight)
	if err != nil || len(dirs) == 0 {
		return nil, err
	}
	return &clusterBound{dirs: dirs, ids: ids, minv: minv}, nil
}

// of is the one-cluster combinations of b that lie in cluster id (nil
// when none, or b nil).
func (b *clusterBound) of(id string) [][]float64 {
	if b == nil {
		return nil
	}
	var out [][]float64
	for k, c := range b.ids {
		if c == id {
			out = append(out, b.dirs[k])
		}
	}
	return out
}

// refitFlat refits r's model on d, the rows
// outside a cluster whose one-cluster combinations are flat: the
// log-likelihood of d does not change along them. Each is held at the
// full fit's value by a quadratic term, -lambda/2 (u'(theta - b))^2 with u
// the unit direction and b r's estimates, which does not move the
// maximum of the directions it does not touch: from any maximum of d's
// log-likelihood a move along the flat directions reaches a point where
// every such term is 0. Once the iterations end, the check that the
// log-likelihood itself is at a maximum there (its Newton decrement, with
// the held information, at most 1e-8 |LL|) confirms that the directions
// were flat; else the refit is not usable and says why. The result's
// covariance is not read.
func refitFlat(d *Data, r *Result, flat [][]float64, opt Options) (*Result, error) {
	if err := d.validateRows(true); err != nil {
		return nil, err
	}
	ly, err := newLayout(r.Model, d.J, d.Predictors)
	if err != nil {
		return nil, err
	}
	if opt.MaxIter <= 0 {
		opt.MaxIter = 200
	}
	P := len(r.Estimates)
	pr := newProblem(d.design(), r.Model, ly, opt.Workers)
	base := pr.evaluator(false)
	units := make([][]float64, len(flat))
	for k, v := range flat {
		n := math.Sqrt(dot(v, v))
		units[k] = make([]float64, P)
		for j := range v {
			units[k][j] = v[j] / n
		}
	}
	b0 := r.Estimates
	// lambda: the mean of the information's diagonal at the start, so
	// that the held directions are as well conditioned as the others.
	lambda := 0.0
	if a := base(b0, 2); !a.bad {
		for j := 0; j < P; j++ {
			lambda += math.Abs(a.H[j*P+j]) / float64(P)
		}
	}
	if !(lambda > 0) || math.IsInf(lambda, 0) {
		lambda = 1
	}
	held := func(th []float64) []float64 {
		c := make([]float64, len(units))
		for k, u := range units {
			for j := range u {
				c[k] += u[j] * (th[j] - b0[j])
			}
		}
		return c
	}
	ev := func(th []float64, order int) evalOut {
		a := base(th, order)
		if a.bad {
			return a
		}
		c := held(th)
		for k, u := range units {
			a.ll -= lambda / 2 * c[k] * c[k]
			if order >= 1 {
				a.g = slices.Clone(a.g)
				for j := range u {
					a.g[j] -= lambda * c[k] * u[j]
				}
			}
			if order >= 2 {
				a.H = slices.Clone(a.H)
				for i := range u {
					for j := range u {
						a.H[i*P+j] -= lambda * u[i] * u[j]
					}
				}
			}
		}
		return a
	}
	st := newtonLoop(b0, opt.MaxIter, ev)
	src := localSource(d, pr, nil, opt.Sampling)
	src.loglik = ev
	res, err := finish(src, r.Model, ly, st, opt)
	if err != nil || !res.OK() || !res.Converged {
		return res, err
	}
	// The log-likelihood's own score there, against the held information.
	g := slices.Clone(st.grad)
	c := held(st.theta)
	for k, u := range units {
		for j := range u {
			g[j] += lambda * c[k] * u[j]
		}
	}
	if _, dec, pd := newtonDirection(st.hess, g); !pd || dec > 1e-8*math.Max(1, math.Abs(st.ll)) {
		res.fail(StatusNotConverged, "the parameters it cannot estimate do not leave the log-likelihood flat without the cluster, so the others have no maximum of their own")
	}
	return res, nil
}
