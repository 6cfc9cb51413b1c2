package fit

import (
	"fmt"
	"math"
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
// by the sandwich estimate V, recording its type and clusters.
func (r *Result) UseCovariance(V []float64, info SandwichInfo) {
	P := len(r.Estimates)
	r.Cov = V
	r.CovType = info.Type
	r.Clusters = info.Clusters
	r.StdErrors = make([]float64, P)
	for i := 0; i < P; i++ {
		r.StdErrors[i] = math.Sqrt(math.Max(V[i*P+i], 0))
	}
	r.CheckScale()
}

// FewClusters is the number of clusters below which cluster-robust errors
// are flagged (runner's Analysis.FewClusters): with fewer, the sandwich of summed
// cluster scores is biased downward even with the factor G/(G-1), and its
// z and Wald tests, referred to the normal and chi-square, reject a true
// hypothesis too often (docs/models.md, "Sandwich and cluster-robust
// errors", says why 40).
const FewClusters = 40
