package testsurvey

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
)

// Category draws the outcome of a cumulative logit from u, uniform on
// (0, 1): 1 plus the number of cutpoints c with u > F(c - eta), F the
// logistic distribution function, so that P(y <= j) = F(c_j - eta) for
// y in 1..len(cuts)+1.
func Category(u, eta float64, cuts []float64) int {
	y := 1
	for _, c := range cuts {
		if u > 1/(1+math.Exp(-(c-eta))) {
			y++
		}
	}
	return y
}

// Numeric is the survey of two correlated numeric predictors: x1 standard
// normal, x2 = 0.5 x1 + a standard normal (X2), and y in 1..3 from a
// cumulative logit (Category) with linear predictor
// Slopes[0] x1 + Slopes[1] x2 and cutpoints Cuts.
type Numeric struct {
	Slopes [2]float64
	Cuts   []float64
}

// The variants the tests use.
var (
	// Report is the survey of the report's tests (render).
	Report = Numeric{Slopes: [2]float64{0.8, -0.5}, Cuts: []float64{-0.4, 0.9}}
	// Pooling is the survey of the pooling tests (runner).
	Pooling = Numeric{Slopes: [2]float64{0.7, -0.5}, Cuts: []float64{-0.5, 0.8}}
)

// Row draws one row: x1, then x2, then the outcome (in that order from
// rng).
func (s Numeric) Row(rng *rand.Rand) (y int, x1, x2 float64) {
	x1 = rng.NormFloat64()
	x2 = s.X2(rng, x1)
	y = Category(rng.Float64(), s.Slopes[0]*x1+s.Slopes[1]*x2, s.Cuts)
	return y, x1, x2
}

// X2 draws x2 given x1 from its distribution in the survey: a missing x2
// imputed from the model the data came from.
func (Numeric) X2(rng *rand.Rand, x1 float64) float64 {
	return 0.5*x1 + rng.NormFloat64()
}

// Imputed is a survey whose x2 is missing in some rows, as CSV texts with
// a header: Orig the data as observed (y,x1,x2; a missing x2 empty),
// Complete the same rows with every x2, Stacked the imputed sets stacked
// (imp,y,x1,x2).
type Imputed struct {
	Orig, Complete, Stacked string
}

// ImputedOptions shapes Numeric.Imputed.
type ImputedOptions struct {
	Rows, Sets int
	Missing    float64 // the probability that a row's x2 is missing
	Digits     int     // decimals of x1 and x2
	// Same: every set has the true x2 (identical sets); otherwise a
	// missing x2 is drawn afresh by X2 in every set.
	Same bool
	// Original: Stacked also holds the data as observed, as set 0.
	Original bool
}

// Imputed draws the rows (Row, then whether x2 is missing), then the sets
// 1..Sets in order, each row in order.
func (s Numeric) Imputed(rng *rand.Rand, o ImputedOptions) Imputed {
	var orig, comp, stack strings.Builder
	orig.WriteString("y,x1,x2\n")
	comp.WriteString("y,x1,x2\n")
	stack.WriteString("imp,y,x1,x2\n")
	type row struct {
		y      int
		x1, x2 float64
		miss   bool
	}
	num := func(x float64) string { return fmt.Sprintf("%.*f", o.Digits, x) }
	rows := make([]row, o.Rows)
	for i := range rows {
		y, x1, x2 := s.Row(rng)
		rows[i] = row{y, x1, x2, rng.Float64() < o.Missing}
		seen := num(x2)
		if rows[i].miss {
			seen = ""
		}
		fmt.Fprintf(&comp, "%d,%s,%s\n", y, num(x1), num(x2))
		fmt.Fprintf(&orig, "%d,%s,%s\n", y, num(x1), seen)
		if o.Original {
			fmt.Fprintf(&stack, "0,%d,%s,%s\n", y, num(x1), seen)
		}
	}
	for k := 1; k <= o.Sets; k++ {
		for _, r := range rows {
			x2 := r.x2
			if r.miss && !o.Same {
				x2 = s.X2(rng, r.x1)
			}
			fmt.Fprintf(&stack, "%d,%d,%s,%s\n", k, r.y, num(r.x1), num(x2))
		}
	}
	return Imputed{Orig: orig.String(), Complete: comp.String(), Stacked: stack.String()}
}

// Levels are the levels of the grouped survey's categorical predictor g.
var Levels = []string{"a", "b", "c"}

// Grouped draws a row of the survey of one numeric and one categorical
// predictor: x standard normal, then g uniform over the three Levels
// (its index), then y in 1..3 from a cumulative logit (Category) with
// linear predictor 0.8 x + (0, 0.5, -0.4)[g] and cutpoints -0.4 and 0.9.
func Grouped(rng *rand.Rand) (y int, x float64, g int) {
	x = rng.NormFloat64()
	g = rng.IntN(3)
	y = Category(rng.Float64(), 0.8*x+[]float64{0, 0.5, -0.4}[g], []float64{-0.4, 0.9})
	return y, x, g
}

// RareThird is the CSV text (header y,x) of n rows of a survey whose
// third outcome category is rare: x standard normal, then y in 1..3 from
// a cumulative logit (Category) with linear predictor x and cutpoints 0
// and 4 (P(y = 3) about 0.03), so that outcomes drawn anew at its rows
// often lack category 3.
func RareThird(rng *rand.Rand, n int) string {
	var b strings.Builder
	b.WriteString("y,x\n")
	for range n {
		x := rng.NormFloat64()
		fmt.Fprintf(&b, "%d,%.5f\n", Category(rng.Float64(), x, []float64{0, 4}), x)
	}
	return b.String()
}
