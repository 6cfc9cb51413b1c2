package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestImputedFitsFlagCollinearity: an invented data set (seeded) where x2
// = x1 + N(0, 0.001^2) and y (three categories) comes from a cumulative
// logit in x1 and x3, with y and x3 missing in some rows and imputed by
// chained equations: every set's fit takes the near-collinearity check,
// and the pooled fit flags x1 and x2 (neither x3), naming the sets (all
// three: x1 and x2 are never imputed, so every set holds the same near
// combination), as decisions.json says. The expected flag is the one the
// weighted least squares 1/(1-R^2) gives for such a pair (about 1e6, far
// above the limit 100): see TestInflationIsWeightedVIF.
func TestImputedFitsFlagCollinearity(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(21, 8))
	var b strings.Builder
	b.WriteString("y,x1,x2,x3\n")
	for i := 0; i < 300; i++ {
		x1, x3 := rng.NormFloat64(), rng.NormFloat64()
		x2 := x1 + 1e-3*rng.NormFloat64()
		u := rng.Float64()
		lat := 0.8*x1 + 0.5*x3 + math.Log(u/(1-u))
		y := 1
		if lat > -0.7 {
			y = 2
		}
		if lat > 0.9 {
			y = 3
		}
		ys, x3s := fmt.Sprint(y), fmt.Sprintf("%.5f", x3)
		if rng.Float64() < 0.12 {
			x3s = ""
		}
		if rng.Float64() < 0.05 {
			ys = ""
		}
		fmt.Fprintf(&b, "%s,%.6f,%.6f,%s\n", ys, x1, x2, x3s)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	p := planIn(t, dir, `version: 1
seed: 5
data:
  file: d.csv
  missing: impute
  imputation: {sets: 3, iterations: 2}
outcomes: [{column: y}]
predictors: [x1, x2, x3]
models: {approaches: [cumulative], effects: [parallel]}
rules:
  - choose: {by: bic}
`)
	r := runPlan(t, p, 1)
	or := r.Outcomes[0]
	if or.Imputed == nil || or.Imputed.M != 3 {
		t.Fatalf("not imputed: %+v", or.Imputed)
	}
	for k, set := range or.Imputed.Fits {
		for _, f := range set {
			if f.OK() && len(f.Result.Collinear) != 2 {
				t.Errorf("imputed set %d, %s: flagged %+v, want x1 and x2", k+1, f.ID, f.Result.Collinear)
			}
		}
	}
	f := or.Find("cumulative/parallel/logit")
	if !f.OK() || f.Pooled == nil {
		t.Fatalf("not pooled: %+v", f)
	}
	c := f.Result.Collinear
	if len(c) != 2 || c[0].Term != "x1" || c[1].Term != "x2" {
		t.Fatalf("pooled fit flags %+v, want x1 and x2", c)
	}
	for _, v := range c {
		if !slices.Equal(v.Sets, []int{1, 2, 3}) || v.Factor < 1e4 {
			t.Errorf("%s: sets %v, factor %g; want sets 1, 2 and 3 and a factor near 1e6", v.Term, v.Sets, v.Factor)
		}
	}
	if n := f.Result.CollinearNote(func(s string) string { return s }); !strings.Contains(n, "(imputed sets 1, 2 and 3)") {
		t.Errorf("note does not name the sets: %s", n)
	}
	js, _ := MarshalStable(BuildDecisions(r))
	if !strings.Contains(string(js), `"collinear": [`) || !strings.Contains(string(js), `"imputed_sets": [`) {
		t.Error("decisions.json does not carry the pooled fit's collinear terms and their sets")
	}
}
