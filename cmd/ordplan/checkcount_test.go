package main

import (
	"strings"
	"testing"
)

// ordplan check counts the plan's outcomes and predictors in words: "1
// outcome, 1 predictor", "2 predictors"; it wrote "1 outcome(s)".
func TestCheckCountsInWords(t *testing.T) {
	csv := "y,x,z\n1,0.5,1\n2,1.5,0\n3,2.5,1\n1,3.5,0\n2,0.1,1\n3,1.1,0\n1,2.2,1\n2,0.7,0\n3,3.1,1\n1,1.9,0\n"
	plan := "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [x]\nmodels: {approaches: [cumulative], effects: [parallel]}\nrules: [{choose: {by: aic}}]\n"
	p := writeStudy(t, t.TempDir(), csv, plan)
	out, errs, code := runCLI("check", p)
	if code != 0 || !strings.Contains(out, "plan is valid (1 outcome, 1 predictor, sha256 ") {
		t.Errorf("exit %d, want the counts in words:\n%s%s", code, out, errs)
	}
	p = writeStudy(t, t.TempDir(), csv, strings.Replace(plan, "predictors: [x]", "predictors: [x, z]", 1))
	if out, errs, code = runCLI("check", p); code != 0 || !strings.Contains(out, "plan is valid (1 outcome, 2 predictors, sha256 ") {
		t.Errorf("exit %d, want the counts in words:\n%s%s", code, out, errs)
	}
}
