package render

import (
	"testing"

	"ordplan/runner/fit"
)

// The calibration chart's axis ends at the largest share of a group,
// rounded up to a tenth (at most 1): with five categories the shares stay
// below 0.5, and an axis to 1 pressed the lines into its lower half.
func TestShareAxisMax(t *testing.T) {
	for _, c := range []struct {
		obs, exp [][]float64
		want     float64
	}{
		{[][]float64{{2, 3, 5}, {4, 4, 2}}, [][]float64{{2.5, 3, 4.5}, {3.5, 4.2, 2.3}}, 0.5},
		{[][]float64{{2, 3, 5}, {4, 4, 2}}, [][]float64{{2.5, 3, 4.5}, {3.5, 4.21, 2.29}}, 0.5},
		{[][]float64{{1, 1, 8}, {4, 4, 2}}, [][]float64{{1, 1.4, 7.6}, {3.5, 4, 2.5}}, 0.8},
		{[][]float64{{0, 0, 10}, {4, 4, 2}}, [][]float64{{0.5, 0.5, 9}, {3.5, 4, 2.5}}, 1},
	} {
		sg := &fit.ScoreGroups{Groups: 2, Categories: []string{"a", "b", "c"}, Weight: []float64{10, 10}, Observed: c.obs, Expected: c.exp}
		if got := shareAxisMax(sg); got != c.want {
			t.Errorf("shareAxisMax(%v, %v) = %v, want %v", c.obs, c.exp, got, c.want)
		}
	}
}
