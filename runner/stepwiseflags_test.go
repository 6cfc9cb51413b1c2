package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/runner/fit"
)

// TestStepwiseFitsFlagCollinearity: the fits of a stepwise selection take
// the step the grid's fits take (CovariancePolicy.Settle), so a step whose
// model has nearly collinear terms says so, on one data set and pooled
// over imputed sets, with the grid's factors for the same model. Data:
// invented (seeded), x2 = x1 plus noise of SD 0.01; z missing in about
// 30% of the rows of d.csv, imputed twice (s1.csv, s2.csv).
func TestStepwiseFitsFlagCollinearity(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(44, 4))
	var one, s1, s2 strings.Builder
	for _, b := range []*strings.Builder{&one, &s1, &s2} {
		b.WriteString("y,x1,x2,z\n")
	}
	for i := 0; i < 500; i++ {
		x1, z, u := rng.NormFloat64(), rng.NormFloat64(), rng.Float64()
		x2 := x1 + 0.01*rng.NormFloat64()
		lat := math.Log(u/(1-u)) + 0.5*x1 + 0.4*z
		y := 1
		for _, c := range []float64{-0.8, 0.3, 1.2} {
			if lat > c {
				y++
			}
		}
		row := fmt.Sprintf("%d,%.6f,%.6f,", y, x1, x2)
		if rng.Float64() < 0.3 { // z missing, imputed twice
			fmt.Fprintf(&one, "%s\n", row)
			fmt.Fprintf(&s1, "%s%.6f\n", row, z+0.1*rng.NormFloat64())
			fmt.Fprintf(&s2, "%s%.6f\n", row, z+0.1*rng.NormFloat64())
			continue
		}
		for _, b := range []*strings.Builder{&one, &s1, &s2} {
			fmt.Fprintf(b, "%s%.6f\n", row, z)
		}
	}
	for name, b := range map[string]*strings.Builder{"d.csv": &one, "s1.csv": &s1, "s2.csv": &s2} {
		os.WriteFile(filepath.Join(dir, name), []byte(b.String()), 0o644)
	}
	for _, data := range []string{"{file: s1.csv}", "{file: d.csv, imputed: {files: [s1.csv, s2.csv]}}"} {
		or := runPlan(t, planIn(t, dir, `version: 1
data: `+data+`
outcomes: [{column: y}]
predictors: [x1, x2, z]
models: {approaches: [cumulative], effects: [parallel, partial], partial: {select: {}}}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`), 0).Outcomes[0]
		if len(or.Stepwise) != 1 || !or.Stepwise[0].Result.OK {
			t.Fatalf("%s: %+v", data, or.Stepwise)
		}
		steps := or.Stepwise[0].Result.Steps
		last := steps[len(steps)-1]
		var flagged []string
		for _, v := range last.Collinear {
			flagged = append(flagged, v.Term)
		}
		if strings.Join(flagged, " ") != "x1 x2" {
			t.Errorf("%s: the last step's model flags %v", data, flagged)
		}
		// Every candidate made parallel: the last step's model is the
		// grid's parallel model, flagged alike.
		if len(or.Stepwise[0].Result.FinalNonparallel) == 0 {
			par := or.Cell(fit.Cumulative, fit.ParallelEffects, fit.Logit)
			if par == nil || par.Result == nil || len(par.Result.Collinear) != 2 || math.Abs(par.Result.Collinear[0].Factor-last.Collinear[0].Factor) > 1e-6*last.Collinear[0].Factor {
				t.Errorf("%s: grid's parallel model %+v, the step's %+v", data, par, last.Collinear)
			}
		}
		t.Logf("%s: %d steps; last step flags %+v", data, len(steps), last.Collinear)
	}
}
