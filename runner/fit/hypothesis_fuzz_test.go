package fit

import (
	"math"
	"testing"
)

// FuzzHypothesis feeds arbitrary text to ParseHypothesis over the parameter
// names of a fit. It must never panic; a success is at least one
// restriction, each a finite row over the parameters that restricts one,
// with a finite constant.
func FuzzHypothesis(f *testing.F) {
	names := []string{"tau[1]", "tau[2]", "tau[3]", "a", "b[1]", "b[2]", "b[3]", "site.east", "pilot&street_type.cul_de_sac", "phi[1]"}
	for _, s := range []string{"a = 0", "b[1] = b[2] = b[3]", "2*a - b[3] = 0.5; site.east = 0", "tau[1] = -tau[3]",
		"a + a - 2*a = 0", "1e308*a + 1e308*a = 0", "a = 1e-3", ".5a = 1", "a*b = 0", "= =", ";;", "a = 0; ", "-(a) = 0",
		"pilot&street_type.cul_de_sac = phi[1]", "3 = 3", "a = a = a", "1.5e3 * a + 2 = b[1]", "b[1] + 1e308 = -1e308", "1e308*a = -1e308*a"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		h, err := ParseHypothesis(s, names)
		// What the plan check refuses (CheckHypothesisText, any names
		// taken for parameters) no model can accept.
		if cerr := CheckHypothesisText(s); cerr != nil && err == nil {
			t.Fatalf("%q: refused by the plan check (%v), accepted by a model", s, cerr)
		}
		if err != nil {
			if err.Error() == "" {
				t.Fatal("empty error")
			}
			return
		}
		if len(h.R) == 0 || len(h.R) != len(h.C) {
			t.Fatalf("%q: %d rows, %d constants", s, len(h.R), len(h.C))
		}
		for i, row := range h.R {
			nonzero := false
			for _, v := range row {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("%q: row %d is not finite: %v", s, i, row)
				}
				nonzero = nonzero || v != 0
			}
			if len(row) != len(names) || !nonzero {
				t.Fatalf("%q: row %d %v", s, i, row)
			}
			if math.IsNaN(h.C[i]) || math.IsInf(h.C[i], 0) {
				t.Fatalf("%q: constant %d is %v", s, i, h.C[i])
			}
		}
	})
}
