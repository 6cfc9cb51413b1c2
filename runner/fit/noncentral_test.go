package fit

import (
	"math"
	"testing"
)

// TestNoncentralChi2AgainstR: P(X > x) of the noncentral chi-squared
// against base R's pchisq(x, df, ncp = ncp, lower.tail = FALSE) (R 4.2.2),
// from the middle of the distribution to tails of 5e-8 and 2e-12, with
// small and large noncentrality and ncp = 0 (the central tail).
func TestNoncentralChi2AgainstR(t *testing.T) {
	for _, c := range [][4]float64{
		// x, df, ncp, R's value
		{3.841458820694124, 1, 0.176, 0.07039487947017864},
		{5.9914645471079799, 2, 2.096, 0.23471839997462013},
		{10, 3, 0, 0.018566135463043233},
		{0.5, 4, 50, 0.99999999999798905},
		{200, 5, 150, 0.040691654122274046},
		{0.001, 1, 0.3, 0.97828573052075607},
		{40, 1, 1, 5.0600270162907732e-08},
		{9.2100000000000009, 2, 7.5, 0.45258139526609542},
		{100, 10, 400, 1},
	} {
		got := NoncentralChi2Survival(c[0], c[1], c[2])
		want := c[3]
		if rel := math.Abs(got-want) / want; rel > 1e-9 {
			t.Errorf("P(X > %g | df %g, ncp %g) = %.17g, R %.17g (relative %.1e)", c[0], c[1], c[2], got, want, rel)
		}
	}
}
