package fit

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// TestStepwiseSaysWhatItSkips: a candidate whose likelihood-ratio
// statistic is negative (here made so: the test of z always is) has no
// p-value; every step passes over it and records which and why, so it
// stays nonparallel while the other candidates are weighed as usual.
func TestStepwiseSaysWhatItSkips(t *testing.T) {
	d := simCollinear(400, 4, 1)
	sf := DataStepwiseFits(d, Options{})
	z := slices.Index(d.Predictors, "z")
	sf.LR = func(r, f *Result) Test {
		if r.Model.Effects[z] == Parallel && f.Model.Effects[z] == Nonparallel {
			return Test{Name: TestLR.String(), Negative: true, Chi2: -0.25, DF: 2, P: math.NaN(), Reason: "made negative"}
		}
		return LRTest(r, f)
	}
	base := Model{Comparison: Cumulative, Link: Logit}
	sr := StepwiseWith(sf, base, singleTerms("x3", "z"), 0.05, TestLR)
	if !sr.OK || len(sr.Steps) == 0 {
		t.Fatalf("%+v", sr)
	}
	for _, st := range sr.Steps {
		if len(st.Skipped) != 1 || st.Skipped[0].Term != "z" || !strings.Contains(st.Skipped[0].Reason, "likelihood-ratio statistic is negative (-0.25)") || st.Imposed == "z" {
			t.Errorf("step %d: skipped %+v, imposed %q", st.Step, st.Skipped, st.Imposed)
		}
	}
	if !slices.Contains(sr.FinalNonparallel, "z") {
		t.Errorf("final nonparallel %v", sr.FinalNonparallel)
	}
	t.Logf("steps %d, made parallel %v; %s", len(sr.Steps), sr.FinalParallel, sr.Steps[0].Skipped[0].Reason)
}
