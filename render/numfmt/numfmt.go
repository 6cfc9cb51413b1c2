package numfmt

import (
	"fmt"
	"math"
	"strings"
)

// Num formats a number for tables: six significant digits, fixed where
// that reads well.
func Num(x float64) string {
	switch {
	case math.IsNaN(x):
		return "n/a"
	case math.IsInf(x, 1):
		return "inf"
	case math.IsInf(x, -1):
		return "-inf"
	case x == 0:
		return "0"
	}
	a := math.Abs(x)
	if a >= 1e-4 && a < 1e6 {
		s := fmt.Sprintf("%.6g", x)
		if !strings.ContainsAny(s, "e") {
			return s
		}
	}
	return fmt.Sprintf("%.4e", x)
}

// Fixed formats with d decimals.
func Fixed(x float64, d int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return Num(x)
	}
	return fmt.Sprintf("%.*f", d, x)
}

// PValue formats a p-value.
func PValue(p float64) string {
	switch {
	case math.IsNaN(p):
		return "n/a"
	case p < 0.0001:
		return "<0.0001"
	}
	return fmt.Sprintf("%.4f", p)
}
