package runner

import (
	"math"
	"ordplan/internal/refdata"
	"ordplan/runner/fit"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The plan's inference section on the General Social Survey extract (Long
// 1997): the hypothesis of equal yr89 slopes in the nonparallel cumulative
// logit is the reference per-variable Wald test (chi2(2) = 12.2606);
// marginal effects at the means and at given values; predictions for new
// rows.
func TestRunInference(t *testing.T) {
	dir := t.TempDir()
	abs, _ := filepath.Abs(refdata.Path("gsswarm.csv"))
	os.WriteFile(filepath.Join(dir, "new.csv"), []byte("yr89,male,white,age,ed,prst\n1,0,1,40,12,40\n0,1,1,,12,40\n0,1,0,60,16,60\n"), 0o644)
	src := `version: 1
title: inference
data: {file: ` + abs + `}
outcomes: [{column: warm}]
predictors: [yr89, male, white, age, ed, prst]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
report: {confidence_level: 0.9}
inference:
  hypotheses: ["yr89[1] = yr89[2] = yr89[3]", "2*male = -1.2"]
  marginal_effects: [average, means, profile]
  profile: {age: 30}
  predict: new.csv
`
	p := planIn(t, dir, src)
	r := runPlan(t, p, 0)
	or := r.Outcomes[0]
	var found bool
	for _, h := range or.Hypotheses {
		switch {
		case strings.HasPrefix(h.Text, "yr89") && h.Model == "cumulative/nonparallel/logit":
			found = true
			if h.Test.DF != 2 || math.Abs(h.Test.Chi2-12.2606264804328) > 1e-4 {
				t.Errorf("%+v", h.Test)
			}
		}
	}
	if !found {
		t.Fatalf("hypothesis not tested in the nonparallel model: %+v", or.Hypotheses)
	}
	// The estimate of each restriction (left minus right side): the
	// published estimates and observed-information errors of Long (1997)
	// as held in testdata/reference/gsswarm.models.json: the difference of
	// two nonparallel yr89 slopes, and 2 male + 1.2 in the parallel model
	// (standard error 2 se(male)), with 90% intervals.
	z90 := 1.6448536269514722
	for _, h := range or.Hypotheses {
		var want []fit.Contrast
		switch {
		case strings.HasPrefix(h.Text, "yr89") && h.Model == "cumulative/nonparallel/logit":
			want = []fit.Contrast{{Text: "yr89[1] - yr89[2]", Estimate: 0.955750031302794 - 0.536370713703802},
				{Text: "yr89[2] - yr89[3]", Estimate: 0.536370713703802 - 0.33121839890057}}
		case strings.HasPrefix(h.Text, "2*male") && h.Model == "cumulative/parallel/logit":
			want = []fit.Contrast{{Text: "2*male + 1.2", Estimate: 2*-0.733299730240673 + 1.2, SE: 2 * 0.0784826968949641}}
		default:
			continue
		}
		if len(h.Contrasts) != len(want) {
			t.Fatalf("%s in %s: contrasts %+v", h.Text, h.Model, h.Contrasts)
		}
		for i, c := range h.Contrasts {
			w := want[i]
			if c.Text != w.Text || math.Abs(c.Estimate-w.Estimate) > 1e-5*c.SE || w.SE > 0 && math.Abs(c.SE-w.SE) > 1e-5*w.SE ||
				math.Abs(c.Low-(c.Estimate-z90*c.SE)) > 1e-12 || math.Abs(c.High-(c.Estimate+z90*c.SE)) > 1e-12 {
				t.Errorf("%s in %s: contrast %+v, want %+v", h.Text, h.Model, c, w)
			}
		}
		if len(want) == 1 {
			if z := h.Contrasts[0].Estimate / h.Contrasts[0].SE; math.Abs(z*z-h.Test.Chi2) > 1e-9*h.Test.Chi2 {
				t.Errorf("%s: (estimate/se)^2 = %g, Wald chi2 %g", h.Text, z*z, h.Test.Chi2)
			}
		}
	}
	if len(or.Marginal) != 3 || or.Marginal[2].Point[3] != 30 || or.Marginal[1].Point[3] == 30 {
		t.Fatalf("marginal sets %+v", or.Marginal)
	}
	for _, set := range or.Marginal {
		if set.Error != "" || len(set.Effects) != 6*4 {
			t.Errorf("%s: %d effects, %s", set.Kind, len(set.Effects), set.Error)
		}
	}
	nr := or.NewRows
	if nr == nil || nr.Pred == nil || nr.Rows.N != 2 || len(nr.Rows.Skipped) != 1 || nr.Rows.Lines[1] != 4 {
		t.Fatalf("new rows %+v", nr)
	}
}
