package fit

import (
	"fmt"
	"math"
	"testing"
)

// The smallest fitted probability a fit records is the one value the
// fitted check gives at the estimates, bit for bit, whether finish took it
// from the last evaluation (models whose probabilities cannot be negative)
// or from the check itself: every comparison, link and effect structure,
// four categories and two (the binary kernel), weights and offsets. It also
// equals, to rounding, the smallest probability of the observed category
// among the rows' category probabilities computed by Result.Probabilities
// (the prediction path, probabilities not logarithms).
func TestMinFittedProbIsTheCheck(t *testing.T) {
	fits := 0
	for _, J := range []int{4, 2} {
		d := synthData(5, 150, 3, J, true, true)
		for _, cc := range allComparisons {
			for _, l := range allLinks {
				for _, sc := range structCases {
					m := Model{Comparison: cc.cmp, Backward: cc.backward, Link: l, Effects: sc.eff}
					r, err := Fit(d, m, Options{})
					if err != nil || !r.OK() {
						continue
					}
					name := fmt.Sprintf("J=%d %s", J, r.Name)
					ly, err := newLayout(m, d.J, d.Predictors)
					if err != nil {
						t.Fatal(err)
					}
					minP, neg := newProblem(d.design(), m, ly, 1).fittedCheck(r.Estimates)
					if r.MinFittedProb != minP || r.NegativeRows != neg {
						t.Errorf("%s: recorded %.17g (%d negative rows), the check gives %.17g (%d)", name, r.MinFittedProb, r.NegativeRows, minP, neg)
					}
					P, err := r.Probabilities(d.X, d.Offset)
					if err != nil {
						t.Fatal(err)
					}
					want := math.Inf(1)
					for i, y := range d.Y {
						want = math.Min(want, P[i*J+y])
					}
					if math.Abs(r.MinFittedProb-want) > 1e-12*want {
						t.Errorf("%s: recorded %.17g, smallest predicted probability of the observed category %.17g", name, r.MinFittedProb, want)
					}
					fits++
				}
			}
		}
	}
	if fits < 100 {
		t.Errorf("only %d usable fits checked", fits)
	}
}
