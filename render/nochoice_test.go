package render

import (
	"path/filepath"
	"strings"
	"testing"
)

// TestReportSaysOnlyWhatTheRunDid: every sentence of the summary, the
// decision log, the assumptions and the methods is true of the run it is
// in. With every candidate rejected (otherwise: stop) no estimates,
// predicted probabilities or marginal effects follow, so the report does
// not announce them, does not speak of the chosen model's errors or of
// delta-method errors, and the methods do not say a model was chosen;
// with a single candidate no model was selected among others, so the
// selection-uncertainty caveat says that instead.
func TestReportSaysOnlyWhatTheRunDid(t *testing.T) {
	data, err := filepath.Abs(filepath.Join("testdata", "data", "small.csv"))
	if err != nil {
		t.Fatal(err)
	}
	plan := func(effects, rules string) string {
		return `version: 1
title: Sentences
seed: 1
data: {file: ` + data + `}
outcomes:
  - column: safety
    categories: [very_unsafe, unsafe, neutral, safe, very_safe]
predictors: [pilot, female, cyclist]
models: {approaches: [cumulative], effects: [` + effects + `], links: [logit]}
tests: {parallel_lines: []}
rules:
` + rules
	}
	for _, tc := range []struct {
		name, src string
		want, not []string
	}{
		{"every candidate rejected", plan("parallel, nonparallel", "  - reject_if_sparse: {per_parameter: 1000}\n  - choose: {by: bic}\n"),
			[]string{
				"each decision rule's verdict on each model; no model was chosen",
				"**Result: no model chosen:** every candidate was rejected, and the plan says to stop (otherwise: stop).",
				"The plan's decision rules were applied in order: (1) Reject",
				"No model met every rule.",
				"AIC and BIC of each candidate model (smaller is better); no model was chosen.",
			},
			[]string{
				"and then the chosen model's estimates",
				"no model chosen.** no model chosen",
				"The chosen model's standard errors",
				"use the delta method",
				"have delta-method standard errors",
				"A model was chosen by applying",
				"large diamond",
			}},
		{"one candidate", plan("parallel", "  - choose: {by: bic}\n"),
			[]string{
				"and then the chosen model's estimates",
				"The plan's one candidate model was not selected among others",
				"use the delta method",
				"have delta-method standard errors",
				"The model retained was cumulative/parallel/logit.",
			},
			[]string{"not as the result of the selection made by the rules"}},
		{"a choice", plan("parallel, nonparallel", "  - choose: {by: bic}\n"),
			[]string{
				"and then the chosen model's estimates",
				"not as the result of the selection made by the rules",
				"use the delta method",
			},
			nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			md := string(renderSource(t, t.TempDir(), tc.src, 1)["report.md"])
			hasAll(t, "report.md", md, tc.want...)
			for _, w := range tc.not {
				if strings.Contains(md, w) {
					t.Errorf("report.md has %q", w)
				}
			}
		})
	}
}
