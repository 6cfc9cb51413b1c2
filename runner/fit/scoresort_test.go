package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"strings"
	"testing"
)

// TestSortByScoreStable: the radix sort of the score groups gives the order
// of a stable comparison sort, ties (many, and -0 against 0) included, on
// lists long enough to take it, whole and as subsets of the rows.
func TestSortByScoreStable(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	for _, n := range []int{600, 5000, 100000} {
		score := make([]float64, n)
		for i := range score {
			switch rng.IntN(5) {
			case 0:
				score[i] = float64(rng.IntN(7)) - 3 // ties, negative values, 0
			case 1:
				score[i] = math.Copysign(0, -1)
			case 2:
				score[i] = -rng.ExpFloat64() * 1e-300
			default:
				score[i] = 1 + rng.Float64()
			}
		}
		for _, every := range []int{1, 3} {
			var order []int
			for i := 0; i < n; i += every {
				order = append(order, i)
			}
			want := append([]int(nil), order...)
			sort.SliceStable(want, func(a, b int) bool { return score[want[a]] < score[want[b]] })
			sortByScore(order, score)
			for j := range order {
				if order[j] != want[j] {
					t.Fatalf("n %d, every %d: position %d has row %d, want %d", n, every, j, order[j], want[j])
				}
			}
		}
	}
}

// TestIndicatorsAsGroups: a fit whose group indicators are held as each
// row's group (Data.ind, as LipsitzTest fits them) equals, bit for bit, the
// fit of the same columns written out in X: on rows (gsswarm, Long 1997)
// on weighted cells (housing, Madsen 1976) and on those cells expanded to
// one row per person, which the engine merges back (compressed); with
// parallel indicators (summed by group) and a nonparallel one (held as a
// column of the blocks); through the subsample stage of large fits. The
// rank check of held indicators (summed by group) gives the columns' SDs
// to rounding, and the same refusal of an indicator that repeats a
// predictor.
func TestIndicatorsAsGroups(t *testing.T) {
	// Fits of 1000 rows or more take the subsample stage (gsswarm).
	opt := Options{SubsampleAbove: 1000}
	for _, c := range []struct {
		name   string
		preds  []string
		expand bool
	}{
		{"gsswarm", []string{"yr89", "male", "white", "age", "ed", "prst"}, false},
		{"housing", []string{"inflmed", "inflhigh", "apartment", "atrium", "terrace", "conthigh"}, false},
		{"housing", []string{"inflmed", "inflhigh", "apartment", "atrium", "terrace", "conthigh"}, true},
	} {
		t.Logf("data: %s", refSources[c.name])
		d := loadRef(t, c.name).data(c.preds)
		n, K, G := d.N(), len(c.preds), 4
		var cell []int // expanded: the cell of each row
		if c.expand {
			ex := &Data{J: d.J, Predictors: d.Predictors}
			for i, y := range d.Y {
				for r := 0; r < int(d.Weights[i]); r++ {
					cell = append(cell, i)
					ex.Y = append(ex.Y, y)
					ex.X = append(ex.X, d.X[i*K:(i+1)*K]...)
				}
			}
			d, n = ex, len(ex.Y)
			if des := d.design().compressed(); des.n >= n {
				t.Fatalf("expanded housing: %d rows not merged", n)
			}
		}
		group := make([]int, n)
		for i := range group {
			group[i] = (i * 7) % G
			if c.expand {
				group[i] = (cell[i] * 7) % G // constant within cells
			}
		}
		names := append([]string(nil), c.preds...)
		for g := 1; g < G; g++ {
			names = append(names, fmt.Sprintf("g%d", g))
		}
		held := &Data{Y: d.Y, J: d.J, X: d.X, Weights: d.Weights, Predictors: names, ind: &indicators{group: group, count: G - 1}}
		dense := &Data{Y: d.Y, J: d.J, Weights: d.Weights, Predictors: names, X: make([]float64, n*(K+G-1))}
		for i := 0; i < n; i++ {
			copy(dense.X[i*(K+G-1):], d.X[i*K:(i+1)*K])
			if group[i] > 0 {
				dense.X[i*(K+G-1)+K+group[i]-1] = 1
			}
		}
		// The rank check sums the held indicators by group: the same
		// standard deviations as the columns written out, to rounding.
		sdHeld, errH := held.checkRank(0)
		sdDense, errD := dense.checkRank(0)
		if errH != nil || errD != nil {
			t.Fatalf("%s: rank check %v, %v", c.name, errH, errD)
		}
		for k := range sdDense {
			if math.Abs(sdHeld[k]-sdDense[k]) > 1e-12*sdDense[k] {
				t.Errorf("%s: SD of %s %.17g held, %.17g written out", c.name, names[k], sdHeld[k], sdDense[k])
			}
		}
		// Taking X's sums from the check of the rows alone (as the refit of
		// LipsitzTest does) gives the same SDs, bit for bit; sums of other
		// rows are not taken.
		_, base, _ := d.checkRankWith(0, nil)
		if !base.of(held) {
			t.Fatalf("%s: the sums of the rows are not taken for the same rows with indicators", c.name)
		}
		if other := (&Data{Y: d.Y, J: d.J, X: slices.Clone(d.X), Weights: d.Weights, Predictors: names, ind: held.ind}); base.of(other) {
			t.Fatalf("%s: the sums of the rows are taken for a copy of X", c.name)
		}
		sdBase, _, errB := held.checkRankWith(0, base)
		if errB != nil || !slices.Equal(sdBase, sdHeld) {
			t.Errorf("%s: rank check from the rows' sums: %v %v, summed again: %v", c.name, sdBase, errB, sdHeld)
		}
		for _, k := range []int{-1, 0, K} { // all parallel; a predictor or an indicator nonparallel
			m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(K+G-1, Parallel)}
			if k >= 0 {
				m.Effects[k] = Nonparallel
			}
			a, errA := Fit(held, m, opt)
			b, errB := Fit(dense, m, opt)
			if errA != nil || errB != nil {
				t.Fatalf("%s: %v, %v", c.name, errA, errB)
			}
			if a.LogLik != b.LogLik || !slices.Equal(a.Estimates, b.Estimates) || !slices.Equal(a.StdErrors, b.StdErrors) || a.Status != b.Status {
				t.Errorf("%s %s: held %v %v, dense %v %v", c.name, m.Name(), a.LogLik, a.Estimates, b.LogLik, b.Estimates)
			}
		}
		// A group column that repeats a predictor is refused the same way.
		for i := range group {
			group[i] = 0
			if d.X[i*K+1] == 1 {
				group[i] = 1
			}
		}
		one := &Data{Y: d.Y, J: d.J, X: d.X, Weights: d.Weights, Predictors: append(append([]string(nil), c.preds...), "g1"), ind: &indicators{group: group, count: 1}}
		_, err := Fit(one, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(K+1, Parallel)}, Options{})
		if err == nil || !strings.Contains(err.Error(), "collinear") {
			t.Errorf("%s: indicator equal to %s: got %v", c.name, c.preds[1], err)
		}
		if _, errB := fitFrom(one, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(K+1, Parallel)}, Options{}, base); errB == nil || errB.Error() != err.Error() {
			t.Errorf("%s: from the rows' sums: %v, summed again: %v", c.name, errB, err)
		}
		oneDense := &Data{Y: d.Y, J: d.J, Weights: d.Weights, Predictors: one.Predictors, X: make([]float64, n*(K+1))}
		for i := 0; i < n; i++ {
			copy(oneDense.X[i*(K+1):], d.X[i*K:(i+1)*K])
			oneDense.X[i*(K+1)+K] = float64(group[i])
		}
		if _, errD := Fit(oneDense, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(K+1, Parallel)}, Options{}); err == nil || errD == nil || err.Error() != errD.Error() {
			t.Errorf("%s: held %v, written out %v", c.name, err, errD)
		}
	}
}

// TestRankSumsFromBase: on rows enough for every stripe of the rank
// check's sums (generated, seeded), with and without weights, the check of
// the rows with indicator columns taking X's sums from the check of the
// rows alone gives the SDs of the check that sums everything, bit for bit.
func TestRankSumsFromBase(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 5))
	n, K, G := 70000, 5, 6
	d := &Data{J: 3, Y: make([]int, n), X: make([]float64, n*K)}
	for k := 0; k < K; k++ {
		d.Predictors = append(d.Predictors, fmt.Sprintf("x%d", k+1))
	}
	group := make([]int, n)
	for i := 0; i < n; i++ {
		d.Y[i] = rng.IntN(3)
		for k := 0; k < K; k++ {
			d.X[i*K+k] = 1000*float64(k) + rng.NormFloat64()
		}
		group[i] = rng.IntN(G)
	}
	weighted := *d
	weighted.Weights = make([]float64, n)
	for i := range weighted.Weights {
		weighted.Weights[i] = rng.ExpFloat64()
	}
	for _, d := range []*Data{d, &weighted} {
		held := &Data{Y: d.Y, J: d.J, X: d.X, Weights: d.Weights, Predictors: slices.Clone(d.Predictors), ind: &indicators{group: group, count: G - 1}}
		for g := 1; g < G; g++ {
			held.Predictors = append(held.Predictors, fmt.Sprintf("g%d", g))
		}
		_, base, err := d.checkRankWith(0, nil)
		if err != nil {
			t.Fatal(err)
		}
		sdAll, errAll := held.checkRank(0)
		sdBase, _, errBase := held.checkRankWith(0, base)
		if errAll != nil || errBase != nil || !slices.Equal(sdAll, sdBase) {
			t.Errorf("weights %t: from the rows' sums %v %v, summed again %v %v", d.Weights != nil, sdBase, errBase, sdAll, errAll)
		}
	}
}

// TestCutByCounts: rows of weight 1 cut by counts (no weights) get the
// groups of the sort with weights of 1 given, row for row: scores spread
// out, clustered in a narrow range with far outliers, heavily tied at the
// cuts, -0 against 0, and a subset of the rows; 2 and 10 groups.
func TestCutByCounts(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, n := range []int{cutByCountsFrom, 5000, 60000} {
		for kind := 0; kind < 4; kind++ {
			score := make([]float64, n)
			for i := range score {
				switch kind {
				case 0:
					score[i] = 1 + 4*rng.Float64()
				case 1: // a narrow cluster and far outliers
					score[i] = 2 + 1e-9*rng.Float64()
					if rng.IntN(1000) == 0 {
						score[i] = 1 + 4*rng.Float64()
					}
				case 2: // few values, long runs at every cut
					score[i] = float64(1 + rng.IntN(13))
				default:
					score[i] = float64(rng.IntN(3)-1) * rng.Float64()
					if rng.IntN(7) == 0 {
						score[i] = math.Copysign(0, -1)
					}
				}
			}
			for _, every := range []int{1, 2} {
				var order []int
				for i := 0; i < n; i += every {
					order = append(order, i)
				}
				ones := make([]float64, n)
				for i := range ones {
					ones[i] = 1
				}
				for _, groups := range []int{2, 10} {
					want, got := make([]int, n), make([]int, n)
					cutByScore(slices.Clone(order), score, ones, groups, want)
					cutByScore(slices.Clone(order), score, nil, groups, got)
					if !slices.Equal(got, want) {
						t.Fatalf("n %d, kind %d, every %d, %d groups: the groups by counts differ from the sort's", n, kind, every, groups)
					}
				}
			}
		}
	}
}

// TestNonFiniteXFoundByRankCheck: a NaN, +Inf or -Inf in X (one row of
// many, generated and seeded, with and without weights, a zero weight on
// the row itself too) is refused with the row and predictor named, by Fit,
// FitGrid and CheckDesign alike (the rank check's first pass finds it, the
// message is validate's), and never read as a predictor too large to fit;
// finite values whose sums overflow are not taken for one.
func TestNonFiniteXFoundByRankCheck(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 4))
	n, K := 50000, 3
	base := &Data{J: 2, Y: make([]int, n), X: make([]float64, n*K), Predictors: []string{"a", "b", "c"}}
	for i := 0; i < n; i++ {
		base.Y[i] = rng.IntN(2)
		for k := 0; k < K; k++ {
			base.X[i*K+k] = rng.NormFloat64()
		}
	}
	m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(K, Parallel)}
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		for _, weights := range []string{"none", "ones", "zero at the row"} {
			d := *base
			d.X = slices.Clone(base.X)
			row, k := 31234, 1
			d.X[row*K+k] = v
			if weights != "none" {
				d.Weights = make([]float64, n)
				for i := range d.Weights {
					d.Weights[i] = 1
				}
				if weights == "zero at the row" {
					d.Weights[row] = 0
				}
			}
			want := fmt.Sprintf("row %d: predictor %q has the non-finite value %g", row+1, "b", v)
			if err := d.validate(); err == nil || err.Error() != want {
				t.Fatalf("validate: %v, want %s", err, want)
			}
			_, err := Fit(&d, m, Options{})
			var gridErr error
			FitGrid(&d, []Model{m}, Options{}, 0, func(_ int, _ *Result, err error) { gridErr = err })
			for name, err := range map[string]error{"Fit": err, "FitGrid": gridErr, "CheckDesign": CheckDesign(&d)} {
				if err == nil || err.Error() != want {
					t.Errorf("%g, weights %s: %s says %v, want %s", v, weights, name, err, want)
				}
			}
		}
	}
	// Values near the largest float64, positive in the first half of the
	// rows, negative in the second: the stripes' sums overflow both ways
	// (their total NaN), none is non-finite; they are refused as too large.
	d := *base
	d.X = slices.Clone(base.X)
	for i := 0; i < n; i++ {
		d.X[i*K] = math.Copysign(1.7e308, float64(n/2-i)-0.5)
	}
	if err := CheckDesign(&d); err == nil || !strings.Contains(err.Error(), "too large to fit") {
		t.Errorf("overflowing sums: %v, want the predictor refused as too large", err)
	}
}
