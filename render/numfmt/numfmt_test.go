package numfmt

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// Num: six significant digits in fixed notation between 1e-4 and 1e6,
// four decimals of scientific notation outside (and where six significant
// digits round up to 1e6), words for what is not a number.
func TestNum(t *testing.T) {
	cases := []struct {
		x    float64
		want string
	}{
		{0, "0"},
		{math.Copysign(0, -1), "0"}, // no "-0"
		{1, "1"},
		{-1, "-1"},
		{12.5, "12.5"},
		{0.1 + 0.2, "0.3"}, // binary noise below six digits is not shown
		{1.0 / 3, "0.333333"},
		{-2.0 / 3, "-0.666667"},
		{123456.7, "123457"},
		{999999.4, "999999"},
		{999999.5, "1.0000e+06"}, // rounds to 1e6: scientific, never "1e+06"
		{1e6, "1.0000e+06"},
		{1234567, "1.2346e+06"},
		{1e-4, "0.0001"},
		{0.00012345678, "0.000123457"},
		{9.9999e-5, "9.9999e-05"},
		{-3.2e-7, "-3.2000e-07"},
		{1e-10, "1.0000e-10"},
		{math.NaN(), "n/a"},
		{math.Inf(1), "inf"},
		{math.Inf(-1), "-inf"},
	}
	for _, c := range cases {
		if got := Num(c.x); got != c.want {
			t.Errorf("Num(%v) = %q, want %q", c.x, got, c.want)
		}
	}
}

// Count: whole counts and sums of weights in full, up to 2^53; fractions
// and what is not a number as Num.
func TestCount(t *testing.T) {
	cases := []struct {
		x    float64
		want string
	}{
		{0, "0"},
		{math.Copysign(0, -1), "0"},
		{1734, "1734"},
		{1e6, "1000000"},
		{950000, "950000"},
		{1 << 52, "4503599627370496"},
		{1 << 53, "9.0072e+15"},
		{1734.5, "1734.5"},
		{1234567.5, "1.2346e+06"},
		{math.NaN(), "n/a"},
		{math.Inf(1), "inf"},
	}
	for _, c := range cases {
		if got := Count(c.x); got != c.want {
			t.Errorf("Count(%v) = %q, want %q", c.x, got, c.want)
		}
	}
}

// Fixed rounds the exact binary value (0.125 is exact and goes to the even
// neighbour; 1.005 is stored just below and goes down); what is not a
// number reads as in Num.
func TestFixed(t *testing.T) {
	cases := []struct {
		x    float64
		d    int
		want string
	}{
		{3.14159, 2, "3.14"},
		{1234.5678, 3, "1234.568"},
		{2.5, 0, "2"},
		{3.5, 0, "4"},
		{0.125, 2, "0.12"},
		{-1.005, 2, "-1.00"},
		{7, 3, "7.000"},
		{math.NaN(), 3, "n/a"},
		{math.Inf(-1), 2, "-inf"},
	}
	for _, c := range cases {
		if got := Fixed(c.x, c.d); got != c.want {
			t.Errorf("Fixed(%v, %d) = %q, want %q", c.x, c.d, got, c.want)
		}
	}
}

// PValue: four decimals, and "<0.0001" below 1e-4 (never a rounded 0).
func TestPValue(t *testing.T) {
	cases := []struct {
		p    float64
		want string
	}{
		{0, "<0.0001"},
		{9.999e-5, "<0.0001"},
		{1e-4, "0.0001"},
		{0.00015, "0.0001"},
		{0.049999, "0.0500"},
		{0.05, "0.0500"},
		{0.5, "0.5000"},
		{1, "1.0000"},
		{math.NaN(), "n/a"},
	}
	for _, c := range cases {
		if got := PValue(c.p); got != c.want {
			t.Errorf("PValue(%v) = %q, want %q", c.p, got, c.want)
		}
	}
}

func ExampleNum() {
	fmt.Println(Num(-1234.56789), Num(0.000123456789), Num(2.5e7), Num(math.NaN()))
	// Output: -1234.57 0.000123457 2.5000e+07 n/a
}

func ExampleFixed() {
	fmt.Println(Fixed(-2842.6881769, 3), Fixed(1.96, 1))
	// Output: -2842.688 2.0
}

func ExamplePValue() {
	fmt.Println(PValue(0.03125), PValue(2e-9))
	// Output: 0.0312 <0.0001
}

// A negative value that rounds to zero at the shown decimals is written
// without a sign; a negative value that shows a digit keeps it.
func TestFixedNegativeZero(t *testing.T) {
	for _, c := range []struct {
		x    float64
		d    int
		want string
	}{{-0.0001, 3, "0.000"}, {-0.0004, 3, "0.000"}, {-0.0005001, 3, "-0.001"}, {-0.2, 0, "0"}, {-1.5, 0, "-2"}, {-0.0, 2, "0.00"}} {
		if got := Fixed(c.x, c.d); got != c.want {
			t.Errorf("Fixed(%v, %d) = %q, want %q", c.x, c.d, got, c.want)
		}
	}
}

// Ratios: four decimals while every value is 1e-3 or more away from 1;
// otherwise enough for two significant digits of the smallest distance from
// 1 (at most 12), the same decimals for the ratio and its limits.
func TestRatios(t *testing.T) {
	cases := []struct {
		x    []float64
		want string
	}{
		{[]float64{1.5, 1.2, 1.875}, "1.5000 1.2000 1.8750"},
		{[]float64{1.0032, 0.99871, 1.0077}, "1.0032 0.9987 1.0077"},
		{[]float64{1.00032, 1.00011, 1.00053}, "1.00032 1.00011 1.00053"},
		{[]float64{1.0000065, 1.0000053, 1.0000077}, "1.0000065 1.0000053 1.0000077"},
		{[]float64{0.9999935, 0.99999, 1.0000012}, "0.9999935 0.9999900 1.0000012"},
		{[]float64{1, 1, 1}, "1.0000 1.0000 1.0000"},
		{[]float64{1 + 1e-15, 1, 1}, "1.000000000000 1.000000000000 1.000000000000"},
		{[]float64{math.Inf(1), 2, math.NaN()}, "inf 2.0000 n/a"},
	}
	for _, c := range cases {
		if got := strings.Join(Ratios(c.x...), " "); got != c.want {
			t.Errorf("Ratios(%v) = %q, want %q", c.x, got, c.want)
		}
	}
}

// TestSummary: a mean or SD of the data keeps three decimals, and a
// column in units of 1e-12 (or 1e12) is written in scientific notation,
// not 0.000, which read as a constant column; Est keeps its own bounds.
func TestSummary(t *testing.T) {
	for _, c := range []struct {
		x    float64
		want string
	}{
		{0.4884, "0.488"}, {-1.5, "-1.500"}, {0, "0.000"}, {0.0005, "0.001"}, {0.0004999, "4.999e-04"},
		{-3.03e-13, "-3.030e-13"}, {1.001e12, "1.001e+12"}, {123456.7, "123456.700"},
	} {
		if got := Summary(c.x); got != c.want {
			t.Errorf("Summary(%g) = %q, want %q", c.x, got, c.want)
		}
	}
	for x, want := range map[float64]string{0.00005: "0.0001", 0.0000499: "4.990e-05", 1e9: "1.000e+09", 12.34567: "12.3457"} {
		if got := Est(x); got != want {
			t.Errorf("Est(%g) = %q, want %q", x, got, want)
		}
	}
}

// TestSpaced: a grid of values is written with one number of decimals,
// enough for three significant digits of its step, whatever the ends
// (an integer end reads 18.0 beside 29.2); what has no step is as Num.
func TestSpaced(t *testing.T) {
	grid := func(lo, hi float64, n int) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = lo + (hi-lo)*float64(i)/float64(n-1)
		}
		out[n-1] = hi
		return out
	}
	for _, c := range []struct {
		x    []float64
		want string
	}{
		{grid(18, 85, 7), "18.0 29.2 40.3 51.5 62.7 73.8 85.0"},
		{grid(-2.0236712, 3.0901234, 7), "-2.024 -1.171 -0.319 0.533 1.386 2.238 3.090"},
		{grid(0, 1000, 5), "0 250 500 750 1000"},
		{grid(1e-6, 4e-6, 4), "0.00000100 0.00000200 0.00000300 0.00000400"},
		{[]float64{-2.0236712}, "-2.02367"},
		{[]float64{3, 3}, "3 3"},
		{[]float64{1e9, 2e9}, "1.0000e+09 2.0000e+09"},
		{[]float64{0, math.NaN()}, "0 n/a"},
	} {
		if got := strings.Join(Spaced(c.x), " "); got != c.want {
			t.Errorf("Spaced(%v) = %q, want %q", c.x, got, c.want)
		}
	}
}
