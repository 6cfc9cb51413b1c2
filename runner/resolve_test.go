package runner

import (
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// TestResolvePlanAndFlagsAgree resolves a plan and the `ordplan fit` flags
// that state the same analysis, and checks that both give the same value:
// how the data are read, the design, the fit options and the covariance
// policy (which weights imply which errors). Only the words messages use
// (plan keys against flag names) differ.
func TestResolvePlanAndFlagsAgree(t *testing.T) {
	dir := t.TempDir()
	dataPath := filepath.Join(dir, "d.csv")
	base := SingleFit{DataFile: dataPath, Outcome: "y", Approach: fit.Cumulative, Link: fit.Logit, Workers: 1}
	base.Dialect, _ = data.ParseDialect("comma", "point") // the flags' defaults
	cases := []struct {
		name string
		plan string // the data and covariance sections, and predictors
		flag func(s *SingleFit)
		want CovariancePolicy
	}{
		{
			name: "plain columns, frequency weights",
			plan: "data: {file: d.csv, weights: w}\npredictors: [x1, x2]\n",
			flag: func(s *SingleFit) { s.Weights = "w"; s.Predictors = []string{"x1", "x2"} },
			want: CovariancePolicy{Covariance: fit.Observed},
		},
		{
			name: "sampling weights imply the sandwich",
			plan: "data: {file: d.csv, weights: w, weight_kind: sampling}\npredictors: [x1]\n",
			flag: func(s *SingleFit) { s.Weights, s.Sampling = "w", true; s.Predictors = []string{"x1"} },
			want: CovariancePolicy{Covariance: fit.Sandwich, Sampling: true},
		},
		{
			name: "sampling weights keep the sandwich asked for",
			plan: "data: {file: d.csv, weights: w, weight_kind: sampling}\ncovariance: sandwich_plain\npredictors: [x1]\n",
			flag: func(s *SingleFit) {
				s.Weights, s.Sampling, s.Covariance = "w", true, fit.SandwichPlain
				s.Predictors = []string{"x1"}
			},
			want: CovariancePolicy{Covariance: fit.SandwichPlain, Sampling: true},
		},
		{
			name: "expected information",
			plan: "data: {file: d.csv}\ncovariance: expected\npredictors: [x1]\n",
			flag: func(s *SingleFit) { s.Covariance = fit.Expected; s.Predictors = []string{"x1"} },
			want: CovariancePolicy{Covariance: fit.Expected},
		},
		{
			name: "clustered, offset, refuse, dialect",
			plan: "data: {file: d.csv, cluster: site, offset: off, missing: refuse, delimiter: semicolon, decimal: comma}\ncovariance: clustered\npredictors: [x1]\n",
			flag: func(s *SingleFit) {
				s.Cluster, s.Offset, s.Refuse, s.Covariance = "site", "off", true, fit.Clustered
				s.Dialect, _ = data.ParseDialect("semicolon", "comma")
				s.Predictors = []string{"x1"}
			},
			want: CovariancePolicy{Covariance: fit.Clustered},
		},
		{
			name: "categorical column, transformation, interaction",
			plan: "data: {file: d.csv}\ncategorical:\n  g: {levels: [a, b, c], reference: b}\n" +
				"predictors:\n  - {name: dose_log, column: dose, log: {shift: 1}}\n  - g\n  - {interact: [dose_log, g]}\n",
			flag: func(s *SingleFit) {
				spec, err := ParseCompactTerms("dose|log+1|as=dose_log,g|levels=a/b/c|ref=b,dose_log&g")
				if err != nil {
					t.Fatal(err)
				}
				s.Design = &spec
				for _, tm := range spec.Terms {
					s.Predictors = append(s.Predictors, tm.Name)
				}
			},
			want: CovariancePolicy{Covariance: fit.Observed},
		},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := "version: 1\n" + c.plan + "outcomes:\n  - column: y\n    categories: [lo, mid, hi]\n" +
				"models: {approaches: [cumulative], links: [logit], effects: [parallel]}\nrules: [{choose: {by: tic}}]\n"
			p, err := plan.Parse([]byte(src), filepath.Join(dir, "p.yaml"))
			if err != nil {
				t.Fatalf("plan: %v", err)
			}
			fromPlan := ResolvePlan(p)
			s := base
			s.Categories = []string{"lo", "mid", "hi"}
			c.flag(&s)
			fromFlags, err := ResolveFit(s)
			if err != nil {
				t.Fatalf("flags: %v", err)
			}
			if fromPlan.Errors != c.want || fromFlags.Errors != c.want {
				t.Errorf("covariance policy: plan %+v, flags %+v, want %+v", fromPlan.Errors, fromFlags.Errors, c.want)
			}
			if !reflect.DeepEqual(fromPlan.Fit, fromFlags.Fit) {
				t.Errorf("fit options: plan %+v, flags %+v", fromPlan.Fit, fromFlags.Fit)
			}
			if fromPlan.DataPath != fromFlags.DataPath {
				t.Errorf("data path: plan %s, flags %s", fromPlan.DataPath, fromFlags.DataPath)
			}
			if len(fromPlan.Outcomes) != 1 || len(fromFlags.Outcomes) != 1 {
				t.Fatalf("outcomes: plan %d, flags %d", len(fromPlan.Outcomes), len(fromFlags.Outcomes))
			}
			rp, rf := fromPlan.Outcomes[0], fromFlags.Outcomes[0]
			if !reflect.DeepEqual(rp.Options, rf.Options) {
				t.Errorf("data options:\nplan  %+v\nflags %+v", rp.Options, rf.Options)
			}
			// Term keys name where a term was written (plan key or flag
			// item), for messages only.
			for _, sp := range []*Reading{&rp, &rf} {
				for i := range sp.Design.Terms {
					sp.Design.Terms[i].Key = ""
				}
			}
			if !reflect.DeepEqual(rp.Design, rf.Design) {
				t.Errorf("design:\nplan  %+v\nflags %+v", rp.Design, rf.Design)
			}
		})
	}
}

// TestUnobservedCategoryOneWording checks that a declared category no row
// has is refused by the same check, with the same sentence, for a plan
// and for the flags of `ordplan fit`; only the names differ.
func TestUnobservedCategoryOneWording(t *testing.T) {
	dir := t.TempDir()
	src := "y,x\n1,0.5\n2,1.5\n1,2.5\n2,0.1\n"
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := plan.Parse([]byte("version: 1\ndata: {file: d.csv}\noutcomes:\n  - column: y\n    categories: [\"1\", \"2\", \"3\"]\n"+
		"predictors: [x]\nmodels: {approaches: [cumulative], links: [logit], effects: [parallel]}\nrules: [{choose: {by: tic}}]\n"), filepath.Join(dir, "p.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	a := ResolvePlan(p)
	_, errPlan := a.Load(a.Outcomes[0])
	_, _, errFlags := FitOne(SingleFit{DataFile: filepath.Join(dir, "d.csv"), Outcome: "y", Categories: []string{"1", "2", "3"},
		Predictors: []string{"x"}, Approach: fit.Cumulative, Link: fit.Logit, Workers: 1})
	tail := `category "3" is declared but never observed in the 4 rows used; remove it from `
	for _, c := range []struct {
		err  error
		want string
	}{
		{errPlan, filepath.Join(dir, "p.yaml") + ": outcomes: y: " + tail + "categories or merge it with a neighbour"},
		{errFlags, filepath.Join(dir, "d.csv") + `: outcome "y": ` + tail + "--categories or merge it with a neighbour"},
	} {
		if c.err == nil || c.err.Error() != c.want {
			t.Errorf("got %v\nwant %s", c.err, c.want)
		}
	}
}
