package chained

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The draws of each imputation model reproduce the conditional
// distribution they impute from. With values missing completely at random
// (no missing-data mechanism), the observed rows and the rows to impute
// share the distribution of the column given the others, which the test
// knows because it drew the data: the imputed values must match its
// moments at the imputed rows' predictors, within Monte Carlo error (the
// sampling of the draws and the uncertainty of the drawn parameters).

const (
	momentRows = 20000
	momentMiss = 0.3 // share of the target column missing, completely at random
	momentSets = 5
)

// momentTable draws x ~ N(0, 1) and the target from draw(x, rng); the
// target is missing in about 30% of the rows, whatever x and its value.
func momentTable(seed uint64, target Column, draw func(x float64, rng *rand.Rand) float64) ([]Column, []int) {
	rng := rand.New(rand.NewPCG(seed, 91))
	x, v := make([]float64, momentRows), make([]float64, momentRows)
	var miss []int
	for i := range x {
		x[i] = rng.NormFloat64()
		v[i] = draw(x[i], rng)
		if rng.Float64() < momentMiss {
			v[i] = math.NaN()
			miss = append(miss, i)
		}
	}
	target.Values = v
	return []Column{{Name: "x", Kind: Numeric, Values: x}, target}, miss
}

// moment is one check: at imputed row i with imputed value v, f is a
// function whose expectation under the true conditional distribution is 0,
// and sd the standard deviation of f there (its Monte Carlo error over
// the rows to impute).
type moment struct {
	name string
	f    func(v, x float64) float64
	sd   float64
}

// checkMoments imputes the table and checks that every moment averages to
// 0 over the imputed rows of every set, within 5 Monte Carlo standard
// errors of one set (the parameters drawn once per set make the sets'
// errors correlated, so their mean is held to the error of one set).
func checkMoments(t *testing.T, cols []Column, miss []int, ms []moment) {
	t.Helper()
	res, err := Impute(cols, Config{Sets: momentSets, Iterations: 1, Seed: 42})
	if err != nil {
		t.Fatal(err)
	}
	x := cols[0].Values
	for _, m := range ms {
		mean := 0.0
		for _, set := range res.Sets {
			for _, i := range miss {
				mean += m.f(set[1][i], x[i]) / float64(len(miss)*len(res.Sets))
			}
		}
		se := m.sd / math.Sqrt(float64(len(miss)))
		t.Logf("%s: %.4f (Monte Carlo standard error of one set %.4f, z = %.2f)", m.name, mean, se, mean/se)
		if math.Abs(mean) > 5*se {
			t.Errorf("%s: the imputed values give %.4f, more than 5 standard errors (%.4f) from 0", m.name, mean, se)
		}
	}
}

func logistic(z float64) float64 { return 1 / (1 + math.Exp(-z)) }

// Predictive mean matching and the normal draw: c = 1 + 2x + e. The mean
// and the slope in x of the imputed values, and the spread of their
// residuals, are the model's; with skewed errors (e = Exp(1) - 1, third
// moment 2) predictive mean matching, which imputes observed values of
// donors, also keeps the skewness, which the normal draw cannot.
func TestNumericDrawMoments(t *testing.T) {
	skewed := func(x float64, rng *rand.Rand) float64 { return 1 + 2*x + rng.ExpFloat64() - 1 }
	resid := func(v, x float64) float64 { return v - 1 - 2*x }
	common := []moment{
		{"mean of the residual", resid, 1},
		{"residual times x (slope)", func(v, x float64) float64 { return resid(v, x) * x }, 1},
		{"squared residual - 1 (variance)", func(v, x float64) float64 { r := resid(v, x); return r*r - 1 }, math.Sqrt(8)}, // Var((E-1)^2) = 9 - 1
	}
	t.Run("mean_matching", func(t *testing.T) {
		cols, miss := momentTable(1, Column{Name: "c", Kind: Numeric}, skewed)
		third := moment{"cubed residual - 2 (skewness)", func(v, x float64) float64 { r := resid(v, x); return r*r*r - 2 }, math.Sqrt(265 - 4)}
		checkMoments(t, cols, miss, append(common, third))
	})
	t.Run("normal_draw", func(t *testing.T) {
		normal := func(x float64, rng *rand.Rand) float64 { return 1 + 2*x + rng.NormFloat64() }
		cols, miss := momentTable(2, Column{Name: "c", Kind: Numeric, Method: NormalDraw}, normal)
		checkMoments(t, cols, miss, append(common[:2:2],
			moment{"squared residual - 1 (variance)", func(v, x float64) float64 { r := resid(v, x); return r*r - 1 }, math.Sqrt(2)},
			moment{"cubed residual (symmetry)", func(v, x float64) float64 { r := resid(v, x); return r * r * r }, math.Sqrt(15)}))
	})
}

// levelMoments are, for every level k of a column with probabilities
// p(x), the moments 1[v = k] - p_k(x) (the share) and their product with
// x (the association with x).
func levelMoments(p func(x float64) []float64, levels int) []moment {
	var ms []moment
	for k := 0; k < levels; k++ {
		ind := func(v, x float64) float64 {
			if int(v) == k {
				return 1 - p(x)[k]
			}
			return -p(x)[k]
		}
		// sd: at most 1/2 for the share; x times it, at most sqrt(E x^2)/2.
		ms = append(ms, moment{"share of level " + string(rune('0'+k)), ind, 0.5},
			moment{"share of level " + string(rune('0'+k)) + " times x", func(v, x float64) float64 { return ind(v, x) * x }, 0.5})
	}
	return ms
}

// levelDraw draws a level from the probabilities p.
func levelDraw(p []float64, rng *rand.Rand) float64 {
	u := rng.Float64()
	for k, pk := range p {
		if u < pk {
			return float64(k)
		}
		u -= pk
	}
	return float64(len(p) - 1)
}

// The logistic draw of a column with two levels: P(b = 1) = F(-0.5 + 1.2x).
func TestLogisticDrawMoments(t *testing.T) {
	p := func(x float64) []float64 { q := logistic(-0.5 + 1.2*x); return []float64{1 - q, q} }
	cols, miss := momentTable(3, Column{Name: "b", Kind: Categorical, Levels: 2}, func(x float64, rng *rand.Rand) float64 { return levelDraw(p(x), rng) })
	checkMoments(t, cols, miss, levelMoments(p, 2))
}

// The multinomial draw of unordered levels: baseline-category logits 0,
// 0.3 + x and -0.2 - 0.8x.
func TestMultinomialDrawMoments(t *testing.T) {
	p := func(x float64) []float64 {
		e := []float64{1, math.Exp(0.3 + x), math.Exp(-0.2 - 0.8*x)}
		s := e[0] + e[1] + e[2]
		return []float64{e[0] / s, e[1] / s, e[2] / s}
	}
	cols, miss := momentTable(4, Column{Name: "g", Kind: Categorical, Levels: 3}, func(x float64, rng *rand.Rand) float64 { return levelDraw(p(x), rng) })
	checkMoments(t, cols, miss, levelMoments(p, 3))
}

// The ordinal draw of ordered levels: the cumulative logit
// P(o <= m) = F(tau_m - 0.9x), tau = (-1, 0.3, 1.5).
func TestOrdinalDrawMoments(t *testing.T) {
	tau := []float64{-1, 0.3, 1.5}
	p := func(x float64) []float64 {
		out, prev := make([]float64, 4), 0.0
		for m, c := range tau {
			cum := logistic(c - 0.9*x)
			out[m], prev = cum-prev, cum
		}
		out[3] = 1 - prev
		return out
	}
	cols, miss := momentTable(5, Column{Name: "o", Kind: Ordered, Levels: 4}, func(x float64, rng *rand.Rand) float64 { return levelDraw(p(x), rng) })
	mean := func(x float64) float64 {
		s := 0.0
		for k, pk := range p(x) {
			s += float64(k) * pk
		}
		return s
	}
	checkMoments(t, cols, miss, append(levelMoments(p, 4),
		moment{"score - its mean", func(v, x float64) float64 { return v - mean(x) }, 1.5},
		moment{"(score - its mean) times x", func(v, x float64) float64 { return (v - mean(x)) * x }, 1.5}))
}
