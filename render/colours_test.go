package render

import (
	"math"
	"strconv"
	"testing"
)

// TestBoundaryColoursApartUnderColourBlindness: the three series colours of
// a boundary chart stay apart (CIE76 distance in Lab of at least 40, a
// clear difference) in normal vision and as seen with protanopia,
// deuteranopia and tritanopia, simulated by the matrices of Machado,
// Oliveira and Fernandes (2009, IEEE TVCG 15:1291-1298, severity 1.0) on
// linear sRGB.
func TestBoundaryColoursApartUnderColourBlindness(t *testing.T) {
	sims := map[string][3][3]float64{
		"normal":       {{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
		"protanopia":   {{0.152286, 1.052583, -0.204868}, {0.114503, 0.786281, 0.099216}, {-0.003882, -0.048116, 1.051998}},
		"deuteranopia": {{0.367322, 0.860646, -0.227968}, {0.280085, 0.672501, 0.047413}, {-0.011820, 0.042940, 0.968881}},
		"tritanopia":   {{1.255528, -0.076749, -0.178779}, {-0.078411, 0.930809, 0.147602}, {0.004733, 0.691367, 0.303900}},
	}
	toLinear := func(c float64) float64 {
		if c <= 0.04045 {
			return c / 12.92
		}
		return math.Pow((c+0.055)/1.055, 2.4)
	}
	lab := func(hex string, m [3][3]float64) [3]float64 {
		var rgb [3]float64
		for i := range rgb {
			v, err := strconv.ParseUint(hex[1+2*i:3+2*i], 16, 8)
			if err != nil {
				t.Fatal(err)
			}
			rgb[i] = toLinear(float64(v) / 255)
		}
		var s [3]float64
		for i := range s {
			s[i] = math.Max(0, math.Min(1, m[i][0]*rgb[0]+m[i][1]*rgb[1]+m[i][2]*rgb[2]))
		}
		x := (0.4124*s[0] + 0.3576*s[1] + 0.1805*s[2]) / 0.95047
		y := 0.2126*s[0] + 0.7152*s[1] + 0.0722*s[2]
		z := (0.0193*s[0] + 0.1192*s[1] + 0.9505*s[2]) / 1.08883
		f := func(u float64) float64 {
			if u > 0.008856 {
				return math.Cbrt(u)
			}
			return 7.787*u + 16.0/116
		}
		return [3]float64{116*f(y) - 16, 500 * (f(x) - f(y)), 200 * (f(y) - f(z))}
	}
	colours := map[string]string{"estimate": colorEstimate, "parallel": colorParallel, "chosen": colorChosen}
	names := []string{"estimate", "parallel", "chosen"}
	for vision, m := range sims {
		for i, a := range names {
			for _, b := range names[i+1:] {
				p, q := lab(colours[a], m), lab(colours[b], m)
				if d := math.Hypot(math.Hypot(p[0]-q[0], p[1]-q[1]), p[2]-q[2]); d < 40 {
					t.Errorf("%s: %s %s and %s %s are %.1f apart, want at least 40", vision, a, colours[a], b, colours[b], d)
				}
			}
		}
	}
}
