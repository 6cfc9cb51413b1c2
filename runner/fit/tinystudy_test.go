package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"testing"
)

// tinyStudy is a small invented study drawn from seed alone, of the size
// at which a fit's maximum can be finite yet nearly flat: 12 to 40 rows,
// 3 to 5 ordered categories, 1 to 3 predictors named x1, x2, x3, each
// binary (0/1, probability 0.2 to 0.8 of 1) or standard normal with
// probability 1/2. The outcome comes from a latent variable
//
//	y* = sum_k b_k x_k / sd_k + e,  e standard logistic,
//
// with slopes b_k drawn uniformly from [-2.5, 2.5] (per SD of the
// predictor: large effects, so that some categories are rare at some
// values), the rows ranked by y* and split into J groups of about equal
// size, each group a category. A draw in which some predictor is
// constant is drawn again from the same generator (the seed still fixes
// the study). Nothing else enters: the same seed gives the same rows on
// every machine.
func tinyStudy(seed uint64) *Data { return tinyStudySpread(seed, 2.5) }

// tinyStudySpread is tinyStudy with the slopes drawn from [-spread,
// spread] (per SD of the predictor) instead.
func tinyStudySpread(seed uint64, spread float64) *Data {
	rng := rand.New(rand.NewPCG(seed, 0x7469_6e79))
	for {
		n := 12 + rng.IntN(29)
		J := 3 + rng.IntN(3)
		K := 1 + rng.IntN(3)
		d := &Data{J: J, Y: make([]int, n), X: make([]float64, n*K)}
		for k := 0; k < K; k++ {
			d.Predictors = append(d.Predictors, fmt.Sprintf("x%d", k+1))
		}
		binary := make([]float64, K) // probability of 1, 0 for a normal predictor
		slope := make([]float64, K)
		for k := range binary {
			if rng.IntN(2) == 0 {
				binary[k] = 0.2 + 0.6*rng.Float64()
			}
			slope[k] = spread * (2*rng.Float64() - 1)
		}
		latent := make([]float64, n)
		for i := 0; i < n; i++ {
			for k := 0; k < K; k++ {
				v, sd := rng.NormFloat64(), 1.0
				if binary[k] > 0 {
					v, sd = b2f(rng.Float64() < binary[k]), math.Sqrt(binary[k]*(1-binary[k]))
				}
				d.X[i*K+k] = v
				latent[i] += slope[k] / sd * v
			}
			u := rng.Float64()
			latent[i] += math.Log(u / (1 - u))
		}
		// Categories by rank of the latent value: J groups of about n/J.
		order := make([]int, n)
		for i := range order {
			order[i] = i
		}
		for i := 1; i < n; i++ { // insertion sort: deterministic, n small
			for j := i; j > 0 && latent[order[j]] < latent[order[j-1]]; j-- {
				order[j], order[j-1] = order[j-1], order[j]
			}
		}
		for r, i := range order {
			d.Y[i] = r * J / n
		}
		if !constantPredictor(d) {
			return d
		}
	}
}

// constantPredictor: some predictor takes one value in every row.
func constantPredictor(d *Data) bool {
	for k := range d.Predictors {
		same := true
		for i := 1; i < d.N(); i++ {
			same = same && d.at(i, k) == d.at(0, k)
		}
		if same {
			return true
		}
	}
	return false
}

// searchModels is the grid the search runs over each tiny study:
// comparisons (cumulative, stage forward and backward, adjacent) x links x
// effect structures (parallel; nonparallel; with two predictors or more,
// partial with the first predictor nonparallel).
func searchModels(K int) []Model {
	var out []Model
	type cmp struct {
		c        Comparison
		backward bool
	}
	for _, c := range []cmp{{Cumulative, false}, {Stage, false}, {Stage, true}, {Adjacent, false}} {
		for _, l := range []Link{Logit, Probit, Cloglog, Loglog, Cauchy} {
			structures := [][]Effect{allEffects(K, Parallel), allEffects(K, Nonparallel)}
			if K > 1 {
				partial := allEffects(K, Parallel)
				partial[0] = Nonparallel
				structures = append(structures, partial)
			}
			for _, e := range structures {
				out = append(out, Model{Comparison: c.c, Backward: c.backward, Link: l, Effects: e})
			}
		}
	}
	return out
}

// TestSearchFlatMaxima is the search that found the cases of
// TestFlatMaximumIsFinite: over seeds 1..N (N from ORDPLAN_FLAT_SEARCH;
// the test is skipped without it), every model of searchModels is fitted
// to tinyStudySpread(seed, spread) (spread from ORDPLAN_FLAT_SPREAD,
// default 2.5: tinyStudy), and each fit is listed unless it is OK or its
// separation is proved (the programme found a direction of recession),
// with whether the programme decides for the model (programmeDecides).
func TestSearchFlatMaxima(t *testing.T) {
	n, _ := strconv.Atoi(os.Getenv("ORDPLAN_FLAT_SEARCH"))
	if n <= 0 {
		t.Skip("set ORDPLAN_FLAT_SEARCH=N to search seeds 1..N")
	}
	spread := 2.5
	if s, err := strconv.ParseFloat(os.Getenv("ORDPLAN_FLAT_SPREAD"), 64); err == nil && s > 0 {
		spread = s
	}
	for seed := uint64(1); seed <= uint64(n); seed++ {
		d := tinyStudySpread(seed, spread)
		for _, m := range searchModels(len(d.Predictors)) {
			r, err := Fit(d, m, Options{Workers: 1})
			if err != nil {
				continue
			}
			if r.OK() || (r.Status == StatusNoFiniteMaximum && r.Separation != nil && r.Separation.Proved) {
				continue
			}
			t.Logf("seed %d n %d J %d K %d %s: %s; decides %v; %s", seed, d.N(), d.J, len(d.Predictors), m.Name(), r.Status, programmeDecides(m), r.Message)
		}
	}
}
