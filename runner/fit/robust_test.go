package fit

import (
	"fmt"
	"math"
	"testing"
)

// TestSandwichAgainstHandComputation checks the sandwich and cluster-robust
// covariances on the General Social Survey extract (Long 1997) against a
// computation from first principles: per-row scores by central differences
// of each row's log-likelihood, B = sum of their outer products (summed
// within clusters first), A^-1 from the fit's observed-information
// covariance, V = c A^-1 B A^-1 with c = N/(N-P) (HC1) or
// G/(G-1) (N-1)/(N-P) (CR1) -- the estimators of White (1980) and Liang &
// Zeger (1986).
func TestSandwichAgainstHandComputation(t *testing.T) {
	full := gssData(t)
	K := len(full.Predictors)
	// Every fourth row keeps the hand computation quick.
	d := &Data{J: full.J, Predictors: full.Predictors}
	for i := 0; i < full.N(); i += 4 {
		d.Y = append(d.Y, full.Y[i])
		d.X = append(d.X, full.X[i*K:(i+1)*K]...)
	}
	m := Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Nonparallel, Constrained, Parallel, Parallel, Parallel, Parallel}}
	r := fitOK(t, d, m)
	ly, _ := newLayout(m, d.J, d.Predictors)
	P := len(r.Estimates)
	// Clusters: years of education (an arbitrary grouping for the test).
	clusters := make([]string, d.N())
	for i := range clusters {
		clusters[i] = fmt.Sprint(d.X[i*K+4])
	}
	rowProblems := make([]*problem, d.N())
	for i := range rowProblems {
		one := &design{n: 1, K: K, x: d.X[i*K : (i+1)*K], y: d.Y[i : i+1]}
		rowProblems[i] = newProblem(one, m, ly, 1)
	}
	rowLL := func(i int, theta []float64) float64 {
		return rowProblems[i].evaluate(theta, 0, false).ll
	}
	Bhc := make([]float64, P*P)
	sums := map[string][]float64{}
	for i := 0; i < d.N(); i++ {
		s := centralJacobian(func(th []float64) []float64 { return []float64{rowLL(i, th)} }, r.Estimates)
		addOuter(Bhc, s, 1)
		if sums[clusters[i]] == nil {
			sums[clusters[i]] = make([]float64, P)
		}
		for a := range s {
			sums[clusters[i]][a] += s[a]
		}
	}
	Bcl := make([]float64, P*P)
	for _, s := range sums {
		addOuter(Bcl, s, 1)
	}
	N, G := float64(d.N()), float64(len(sums))
	for _, c := range []struct {
		clusters []string
		B        []float64
		factor   float64
	}{{nil, Bhc, N / (N - float64(P))}, {clusters, Bcl, G / (G - 1) * (N - 1) / (N - float64(P))}} {
		want := sandwichProduct(r.Cov, c.B, P)
		kind := Sandwich
		if c.clusters != nil {
			kind = Clustered
		}
		got, info, err := SandwichEstimate(d, r, kind, c.clusters, false)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(info.Factor-c.factor) > 1e-12 {
			t.Errorf("factor %v want %v", info.Factor, c.factor)
		}
		for i := 0; i < P; i++ {
			se, hand := math.Sqrt(got[i*P+i]), math.Sqrt(c.factor*want[i*P+i])
			if !near(se, hand, 1e-5, 1e-10) {
				t.Errorf("%s %s: se %.8g, hand %.8g", info.Type, r.ParamNames[i], se, hand)
			}
		}
	}
}

// With frequency weights, robust errors equal those of the expanded data.
func TestSandwichFrequencyWeights(t *testing.T) {
	d := gssData(t)
	w := &Data{J: d.J, Predictors: d.Predictors, Y: d.Y, X: d.X}
	dup := &Data{J: d.J, Predictors: d.Predictors}
	for range d.Y {
		w.Weights = append(w.Weights, 2)
	}
	dup.Y = append(append(dup.Y, d.Y...), d.Y...)
	dup.X = append(append(dup.X, d.X...), d.X...)
	m := Model{Comparison: Stage, Link: Logit, Effects: allEffects(len(d.Predictors), Parallel)}
	a, _, err := SandwichEstimate(w, fitOK(t, w, m), Sandwich, nil, false)
	if err != nil {
		t.Fatal(err)
	}
	b, _, _ := SandwichEstimate(dup, fitOK(t, dup, m), Sandwich, nil, false)
	for i := range a {
		if !near(a[i], b[i], 1e-6, 1e-12) {
			t.Fatalf("entry %d: %v vs %v", i, a[i], b[i])
		}
	}
}

// HC0 is HC1 without its factor N/(N-P).
func TestSandwichHC0(t *testing.T) {
	d := gssData(t) // General Social Survey 1977/1989 extract, Long (1997)
	r := fitOK(t, d, Model{Comparison: Adjacent, Link: Logit, Effects: allEffects(6, Parallel)})
	hc1, i1, _ := SandwichEstimate(d, r, Sandwich, nil, false)
	hc0, i0, err := SandwichEstimate(d, r, SandwichPlain, nil, false)
	if err != nil || i0.Type != SandwichPlain || i0.Factor != 1 {
		t.Fatalf("%v %+v", err, i0)
	}
	for k := range hc0 {
		if !near(hc0[k]*i1.Factor, hc1[k], 1e-12, 1e-15) {
			t.Fatalf("entry %d: %v vs %v", k, hc0[k]*i1.Factor, hc1[k])
		}
	}
}
