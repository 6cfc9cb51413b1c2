package fit

import (
	"math"
	"testing"
)

// logitGrid is a grid of z reaching far into both tails, with the values
// next to 0.
func logitGrid() []float64 {
	var zs []float64
	for _, z := range []float64{0, math.Copysign(0, -1), 1e-300, 1e-17, 1e-16, 5e-16, 1e-15, 2e-15, 1e-8, 0.3, 1, 2.5, 17, 36, 37, 40, 300, 690, 700, 709, 745, 800} {
		zs = append(zs, z, -z)
	}
	for i := -200; i <= 200; i++ {
		zs = append(zs, float64(i)*0.173)
	}
	return zs
}

// logitNear reports whether got is within tol of want relative to |want|, or
// absolutely when |want| < 1 (values are logarithms or probabilities).
func logitNear(got, want, tol float64) bool {
	if math.IsInf(want, 0) || math.IsNaN(want) {
		return got == want || (math.IsNaN(got) && math.IsNaN(want))
	}
	return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
}

// TestLogitPointAccuracy checks the logit quantities formed from one
// exponential per point (newLogitPoint) against the textbook
// formulas through the standard library's log1p, which keep every digit
// (log F = -log1p(e^-z) for z >= 0, z - log1p(e^z) below; the density
// f = F (1 - F)), to a few units in the last place.
func TestLogitPointAccuracy(t *testing.T) {
	const tol = 8 * 0x1p-52
	softplus := func(x float64) float64 { // log(1 + e^x)
		if x > 0 {
			return x + math.Log1p(math.Exp(-x))
		}
		return math.Log1p(math.Exp(x))
	}
	for _, z := range logitGrid() {
		p := newLogitPoint(z)
		F, Fc := 1/(1+math.Exp(-z)), math.Exp(-z)/(1+math.Exp(-z))
		if z < 0 {
			F, Fc = math.Exp(z)/(1+math.Exp(z)), 1/(1+math.Exp(z))
		}
		checks := []struct {
			what      string
			got, want float64
		}{
			{"log F", p.logF(), -softplus(-z)},
			{"log(1-F)", p.logFc(), -softplus(z)},
			{"F", p.F, F},
			{"1-F", p.Fc, Fc},
		}
		lf, r := p.logDensity()
		checks = append(checks,
			struct {
				what      string
				got, want float64
			}{"log f", lf, -softplus(-z) - softplus(z)},
			struct {
				what      string
				got, want float64
			}{"f'/f", r, Fc - F})
		for _, c := range checks {
			if c.what == "F" || c.what == "1-F" {
				if math.Abs(c.got-c.want) > tol*c.want {
					t.Fatalf("%s(%g) = %v, want %v", c.what, z, c.got, c.want)
				}
				continue
			}
			if !logitNear(c.got, c.want, tol) {
				t.Fatalf("%s(%g) = %v, want %v", c.what, z, c.got, c.want)
			}
		}
	}
}

// TestLogitBetween checks the probability of a middle category from the
// two points' exponentials (logitBetween) against the log-space path
// (logitDiff, from whichever tail keeps the digits) and its derivatives
// f(a)/P, f(b)/P against exp(log f - log P), over pairs of the grid, and
// that the far tails are left to the log-space path.
func TestLogitBetween(t *testing.T) {
	zs := logitGrid()
	fast := 0
	for _, a := range zs {
		for _, b := range zs {
			if !(b > a) {
				continue
			}
			pa, pb := newLogitPoint(a), newLogitPoint(b)
			lp, ra, rb, ok := logitBetween(pa, pb)
			want := logitDiff(pa, pb)
			if !ok {
				if want > -600 {
					t.Fatalf("logitBetween(%g, %g) declined, log P = %v", a, b, want)
				}
				continue
			}
			fast++
			// The log-space path loses digits of b - a itself when the two
			// points are close (both are exact to rounding of b - a); closer
			// than 1e-8, P is f((a+b)/2) (b - a) to 1e-15 relative.
			tol := 1e-13 / math.Min(1, b-a)
			if b-a < 1e-8 {
				lf, _ := newLogitPoint(0.5 * (a + b)).logDensity()
				want, tol = lf+math.Log(b-a), 1e-12
				if !logitNear(lp, want, tol) {
					t.Fatalf("log P(%g, %g) = %v, f(mid)(b-a) gives %v", a, b, lp, want)
				}
			}
			if !logitNear(lp, want, tol) {
				t.Fatalf("log P(%g, %g) = %v, log space %v", a, b, lp, want)
			}
			lfa, _ := pa.logDensity()
			lfb, _ := pb.logDensity()
			if wa, wb := math.Exp(lfa-want), math.Exp(lfb-want); !logitNear(ra, wa, tol) || !logitNear(rb, wb, tol) {
				t.Fatalf("f/P at (%g, %g) = %v, %v; log space %v, %v", a, b, ra, rb, wa, wb)
			}
		}
	}
	if fast == 0 {
		t.Fatal("logitBetween took no pair")
	}
}

// TestLogitTails checks sums of log-tails with one shared log1p
// (logitTails) against the sum of each point's own log F or log(1 - F),
// over runs of up to six points of the grid, each side.
func TestLogitTails(t *testing.T) {
	zs := logitGrid()
	for i := range zs {
		for n := 1; n <= 6 && i+n <= len(zs); n++ {
			for side := 0; side < 1<<n; side++ {
				var s logitTails
				want := 0.0
				for j, z := range zs[i : i+n] {
					p := newLogitPoint(z)
					upper := side>>j&1 == 1
					s.add(p, upper)
					if upper {
						want += p.logFc()
					} else {
						want += p.logF()
					}
				}
				if got := s.sum(); !logitNear(got, want, 1e-14) {
					t.Fatalf("tails of %v (sides %b) = %v, one by one %v", zs[i:i+n], side, got, want)
				}
			}
		}
	}
}

// TestLogitCumulativeProbs checks the category probabilities of a
// cumulative logit model (logitCumulativeProbs, through
// CategoryProbabilities) against the textbook logistic F(z) = 1/(1 + e^-z)
// and 1 - F(z) = 1/(1 + e^z), each formed directly: differences of F for
// boundaries at or below 0, of 1 - F above it (where each is exact to
// rounding and their difference loses no digits), the top category 1 -
// F; within 4e-16 of the sum of the terms (of the probability itself
// when it is one term), also where every probability but one is far in a
// tail.
func TestLogitCumulativeProbs(t *testing.T) {
	F := func(z float64) float64 { return 1 / (1 + math.Exp(-z)) }
	Fc := func(z float64) float64 { return 1 / (1 + math.Exp(z)) }
	for _, L := range [][]float64{
		{0.3}, {-2, -1, 0.5, 3}, {30, 31}, {-40, 40}, {-31, -30}, {36, 37, 40}, {-800, 0, 800}, {1e-17, 2e-17}, {-3, -2.9, -2.8},
	} {
		q := len(L)
		p := make([]float64, q+1)
		CategoryProbabilities(Cumulative, false, Logit, L, p)
		for m := 0; m <= q; m++ {
			var want, scale float64 // scale: the sum of the terms
			switch {
			case m == 0:
				want, scale = F(L[0]), F(L[0])
			case m == q:
				want, scale = Fc(L[q-1]), Fc(L[q-1])
			case L[m] <= 0:
				want, scale = F(L[m])-F(L[m-1]), F(L[m])+F(L[m-1])
			default:
				want, scale = Fc(L[m-1])-Fc(L[m]), Fc(L[m-1])+Fc(L[m])
			}
			if d := math.Abs(p[m] - want); d > 4e-16*scale {
				t.Errorf("L %v: P(y=%d) = %v, textbook %v", L, m, p[m], want)
			}
		}
	}
}
