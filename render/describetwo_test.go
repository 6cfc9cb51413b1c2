package render

import (
	"math"
	"testing"

	"ordplan/runner/data"
)

// A numeric predictor of two values other than 0 and 1 (1/2) is counted at
// its higher value, labelled so, as a 0/1 predictor is counted at 1: the
// same counts and shares as the column coded 0/1; a column of three values
// keeps its mean and SD, and a missing value (NaN) is left out.
func TestDescribeTwoValues(t *testing.T) {
	ds := &data.Dataset{Predictors: []string{"sex12", "female", "z"}, K: 3, N: 5, Categories: []string{"lo", "hi"},
		Y: []int{0, 0, 1, 1, 1},
		X: []float64{
			1, 0, 1,
			2, 1, 2,
			2, 1, 3,
			math.NaN(), math.NaN(), 1,
			1, 0, 2,
		}}
	got := describe(ds, nil)
	if len(got) != 3 {
		t.Fatalf("%d rows", len(got))
	}
	s12, f, z := got[0], got[1], got[2]
	if s12.Label != "sex12 = 2" || !s12.Counts || !s12.Higher || f.Label != "female" || !f.Counts || f.Higher || z.Counts || z.Higher {
		t.Fatalf("labels and kinds: %+v %+v %+v", s12, f, z)
	}
	for c := range s12.N {
		if s12.N[c] != f.N[c] || s12.Ones[c] != f.Ones[c] || s12.Mean[c] != f.Mean[c] {
			t.Errorf("category %d: coded 1/2 n %g, at 2 %g, share %g; coded 0/1 n %g, at 1 %g, share %g", c, s12.N[c], s12.Ones[c], s12.Mean[c], f.N[c], f.Ones[c], f.Mean[c])
		}
	}
	if s12.N[2] != 4 || s12.Ones[2] != 2 {
		t.Errorf("all rows: n %g, at 2 %g; want 4 and 2", s12.N[2], s12.Ones[2])
	}
}
