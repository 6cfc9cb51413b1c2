package fit

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestOneClusterBothWays: the one-cluster combinations found from the
// clusters' own score cross-products (one pass) and from a second pass
// over the rows (gramBudget too small for the first) are the same
// parameters, clusters and covariance. Data: invented (seeded), 10
// clusters of 30 rows, x ~ N(0,1), the dummies of clusters 1 and 2 and x
// times the first, three categories.
func TestOneClusterBothWays(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 12))
	d := &Data{J: 3, Predictors: []string{"x", "s1", "s2", "xs1"}}
	var clusters []string
	for g := 0; g < 10; g++ {
		for i := 0; i < 30; i++ {
			x := rng.NormFloat64()
			s1, s2 := 0.0, 0.0
			if g == 0 {
				s1 = 1
			} else if g == 1 {
				s2 = 1
			}
			u := rng.Float64()
			e := 0.7*x + 0.3*s1 - 0.2*s2 + math.Log(u/(1-u))
			y := 0
			if e > -0.4 {
				y++
			}
			if e > 0.8 {
				y++
			}
			d.Y = append(d.Y, y)
			d.X = append(d.X, x, s1, s2, x*s1)
			clusters = append(clusters, string(rune('A'+g)))
		}
	}
	r, err := Fit(d, Model{Comparison: Cumulative, Link: Logit, Effects: make([]Effect, 4)}, Options{})
	if err != nil || !r.OK() {
		t.Fatal(err, r.Status)
	}
	one, info1, err := SandwichEstimate(d, r, Clustered, clusters, false)
	if err != nil {
		t.Fatal(err)
	}
	defer func(b int) { gramBudget = b }(gramBudget)
	gramBudget = 0
	two, info2, err := SandwichEstimate(d, r, Clustered, clusters, false)
	if err != nil {
		t.Fatal(err)
	}
	if info1.NotEstimable == nil || info2.NotEstimable == nil ||
		!slices.Equal(info1.NotEstimable.Parameters, []string{"s1", "s2", "xs1"}) ||
		!slices.Equal(info1.NotEstimable.Parameters, info2.NotEstimable.Parameters) ||
		!slices.Equal(info1.NotEstimable.Clusters, []string{"A", "B"}) ||
		!slices.Equal(info1.NotEstimable.Clusters, info2.NotEstimable.Clusters) {
		t.Fatalf("one pass %+v, two passes %+v", info1.NotEstimable, info2.NotEstimable)
	}
	for i := range one {
		if a, b := one[i], two[i]; !(math.IsNaN(a) && math.IsNaN(b)) && a != b {
			t.Errorf("covariance entry %d: %g in one pass, %g in two", i, a, b)
		}
	}
	if len(info1.bound.dirs) != len(info2.bound.dirs) {
		t.Errorf("%d combinations in one pass, %d in two", len(info1.bound.dirs), len(info2.bound.dirs))
	}
}
