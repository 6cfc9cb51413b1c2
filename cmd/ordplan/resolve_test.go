package main

import (
	"io"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// TestResolvePlanAndFlagsAgree resolves a plan and the `ordplan fit` flags
// that state the same analysis (parsed as the command parses them), and
// checks that both give the same value: how the data are read, the design,
// the fit options and the covariance policy (which weights imply which
// errors). Only the words messages use (plan keys against flag names)
// differ.
func TestResolvePlanAndFlagsAgree(t *testing.T) {
	dir := t.TempDir()
	dataPath := filepath.Join(dir, "d.csv")
	// Two parts with the same columns, not one file's bytes twice.
	os.WriteFile(filepath.Join(dir, "p1.csv"), []byte("y,x1\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "p2.csv"), []byte("x1,y\n"), 0o644)
	cases := []struct {
		name  string
		plan  string   // the data and covariance sections, and predictors
		flags []string // besides --outcome and --categories (and --data, unless they give --parts)
		want  runner.CovariancePolicy
	}{
		{"data held as parts",
			"data: {parts: [p1.csv, p2.csv]}\npredictors: [x1]\n",
			[]string{"--parts", filepath.Join(dir, "p1.csv") + "," + filepath.Join(dir, "p2.csv"), "--predictors", "x1"},
			runner.CovariancePolicy{Covariance: fit.Observed}},
		{"plain columns, frequency weights",
			"data: {file: d.csv, weights: w}\npredictors: [x1, x2]\n",
			[]string{"--predictors", "x1,x2", "--weights", "w"},
			runner.CovariancePolicy{Covariance: fit.Observed}},
		{"sampling weights imply the sandwich",
			"data: {file: d.csv, weights: w, weight_kind: sampling}\npredictors: [x1]\n",
			[]string{"--predictors", "x1", "--weights", "w", "--weight-kind", "sampling"},
			runner.CovariancePolicy{Covariance: fit.Sandwich, Sampling: true}},
		{"sampling weights keep the sandwich asked for",
			"data: {file: d.csv, weights: w, weight_kind: sampling}\ncovariance: sandwich_plain\npredictors: [x1]\n",
			[]string{"--predictors", "x1", "--weights", "w", "--weight-kind", "sampling", "--covariance", "sandwich_plain"},
			runner.CovariancePolicy{Covariance: fit.SandwichPlain, Sampling: true}},
		{"expected information",
			"data: {file: d.csv}\ncovariance: expected\npredictors: [x1]\n",
			[]string{"--predictors", "x1", "--covariance", "expected"},
			runner.CovariancePolicy{Covariance: fit.Expected}},
		{"clustered, offset, refuse, dialect",
			"data: {file: d.csv, cluster: site, offset: off, missing: refuse, delimiter: semicolon, decimal: comma}\ncovariance: clustered\npredictors: [x1]\n",
			[]string{"--predictors", "x1", "--cluster", "site", "--offset", "off", "--missing", "refuse",
				"--delimiter", "semicolon", "--decimal", "comma", "--covariance", "clustered"},
			runner.CovariancePolicy{Covariance: fit.Clustered}},
		{"a column's own missing-value codes",
			"data: {file: d.csv}\npredictors: [x1, x2]\ndictionary:\n  x1: {missing: [\"-9\", \"-99\"]}\n  x2: {label: X2}\n",
			[]string{"--predictors", "x1,x2", "--missing-codes", "x1=-9/-99"},
			runner.CovariancePolicy{Covariance: fit.Observed}},
		{"categorical column, transformation, interaction",
			"data: {file: d.csv}\ncategorical:\n  g: {levels: [a, b, c], reference: b}\n" +
				"predictors:\n  - {name: dose_log, column: dose, log: {shift: 1}}\n  - g\n  - {interact: [dose_log, g]}\n",
			[]string{"--predictors", "dose|log+1|as=dose_log,g|levels=a/b/c|ref=b,dose_log&g"},
			runner.CovariancePolicy{Covariance: fit.Observed}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := "version: 1\n" + c.plan + "outcomes:\n  - column: y\n    categories: [lo, mid, hi]\n" +
				"models: {approaches: [cumulative], links: [logit], effects: [parallel]}\nrules: [{choose: {by: tic}}]\n"
			p, err := plan.Parse([]byte(src), filepath.Join(dir, "p.yaml"))
			if err != nil {
				t.Fatalf("plan: %v", err)
			}
			fromPlan := runner.ResolvePlan(p)

			fs := newFlags("fit", io.Discard)
			f := defineFitFlags(fs)
			args := append([]string{"--outcome", "y", "--categories", "lo,mid,hi"}, c.flags...)
			if !slices.Contains(c.flags, "--parts") {
				args = append(args, "--data", dataPath)
			}
			if stop, code := parseFlags(fs, args); stop {
				t.Fatalf("flags: exit %d", code)
			}
			if msg := f.usageProblem(fs); msg != "" {
				t.Fatalf("flags: %s", msg)
			}
			s, err := f.single()
			if err != nil {
				t.Fatalf("flags: %v", err)
			}
			s.Workers = 1 // a plan's fits run one worker each (the grid runs in parallel)
			fromFlags, err := runner.ResolveFit(s)
			if err != nil {
				t.Fatalf("flags: %v", err)
			}

			if fromPlan.Errors != c.want || fromFlags.Errors != c.want {
				t.Errorf("covariance policy: plan %+v, flags %+v, want %+v", fromPlan.Errors, fromFlags.Errors, c.want)
			}
			if !reflect.DeepEqual(fromPlan.Fit, fromFlags.Fit) {
				t.Errorf("fit options: plan %+v, flags %+v", fromPlan.Fit, fromFlags.Fit)
			}
			if !reflect.DeepEqual(fromPlan.Paths(), fromFlags.Paths()) {
				t.Errorf("data: plan %s %v, flags %s %v", fromPlan.DataFile, fromPlan.Paths(), fromFlags.DataFile, fromFlags.Paths())
			}
			if len(fromPlan.Outcomes) != 1 || len(fromFlags.Outcomes) != 1 {
				t.Fatalf("outcomes: plan %d, flags %d", len(fromPlan.Outcomes), len(fromFlags.Outcomes))
			}
			rp, rf := fromPlan.Outcomes[0], fromFlags.Outcomes[0]
			// The plan's entries reading each column (with their places)
			// are for messages only, as the terms' keys below.
			if len(rp.Options.Entries) == 0 {
				t.Errorf("the plan's options name no entry reading a column")
			}
			rp.Options.Entries = nil
			if !reflect.DeepEqual(rp.Options, rf.Options) {
				t.Errorf("data options:\nplan  %+v\nflags %+v", rp.Options, rf.Options)
			}
			// Term keys and places name where a term was written (plan key
			// and line, or flag item), for messages only.
			for _, r := range []*runner.Reading{&rp, &rf} {
				for i := range r.Design.Terms {
					r.Design.Terms[i].Key, r.Design.Terms[i].Line, r.Design.Terms[i].Col = "", 0, 0
				}
			}
			if !reflect.DeepEqual(rp.Design, rf.Design) {
				t.Errorf("design:\nplan  %+v\nflags %+v", rp.Design, rf.Design)
			}
		})
	}
}
