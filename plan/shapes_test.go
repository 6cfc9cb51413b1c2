package plan_test

import (
	"path/filepath"
	"testing"

	"ordplan/internal/planshapes"
	"ordplan/plan"
)

// FuzzPlanShapes is FuzzParse on plans made by planshapes: the fuzz bytes
// choose a base plan and the keys and values changed in it, so that the
// inputs are YAML plans of nearly the right shape and reach the checks
// behind the decoder (terms, partial effects, rules, inference,
// assumptions). The property is FuzzParse's (CheckParse).
func FuzzPlanShapes(f *testing.F) {
	bases := planshapes.Bases(filepath.Join(".."))
	f.Add([]byte{})
	for i := range bases {
		f.Add([]byte{byte(i)})
		f.Add([]byte{byte(i), 3, 17, 2, 5, 40, 1, 9, 200, 7, 4, 4, 81, 33, 6})
		f.Add([]byte{byte(i), 250, 5, 0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15})
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		plan.CheckParse(t, planshapes.Plan(b, bases))
	})
}
