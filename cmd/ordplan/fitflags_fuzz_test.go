package main

import (
	"bytes"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzFitFlags runs `ordplan fit` on the data of FuzzPlanRun with fuzzed
// flag values: the compact forms of --predictors, --nonparallel and
// --constrained as text, and the other flags chosen by the bytes of sel.
// No flag value may panic, and a failure must say something.
func FuzzFitFlags(f *testing.F) {
	for _, c := range []struct{ pred, nonpar, constr string }{
		{"a, b", "", ""},
		{"site|levels=north/east/south/west|ref=east|coding=sum, a", "site", ""},
		{"treat|levels=placebo/drug, age|centre=mean|scale|as=age, treat&age", "", "treat,age"},
		{"dose|log+1|as=ld, bmi|polynomial=2raw|as=bmi, x|spline=q0.1/0.5/0.9|as=x", "ld", "g1:bmi;g2:x"},
		{"grade|levels=1/2/3|coding=successive|drop, age|spline=30/45/60", "", "grade"},
		{"b, a|sqrt, b&a|as=p", "p", ""},
	} {
		for _, sel := range [][]byte{{0}, {1, 1, 1, 1}, {2, 2, 3, 1, 1, 1}, {3, 0, 0, 0, 0, 0, 0, 1, 0, 1, 0, 1}} {
			f.Add(c.pred, c.nonpar, c.constr, sel)
		}
	}
	dir := f.TempDir()
	shapesData(f, dir)
	outcomes := [][2]string{{"y", ""}, {"z", "low,mid,high"}, {"safety", "very_unsafe,unsafe,neutral,safe,very_safe"},
		{"grade", ""}, {"y", "1,2,3"}, {"z", "high,low"}, {"x", ""}, {"y", "1,2,3,4,4"}}
	f.Fuzz(func(t *testing.T, pred, nonpar, constr string, sel []byte) {
		at := 0
		pick := func(xs ...string) string {
			if at >= len(sel) {
				return xs[0]
			}
			at++
			return xs[int(sel[at-1])%len(xs)]
		}
		o := outcomes[0]
		if len(sel) > 0 {
			o = outcomes[int(sel[0])%len(outcomes)]
			at = 1
		}
		args := []string{"fit", "--data", filepath.Join(dir, "d.csv"), "--outcome", o[0], "--predictors", pred}
		if o[1] != "" {
			args = append(args, "--categories", o[1])
		}
		if nonpar != "" {
			args = append(args, "--nonparallel", nonpar)
		}
		if constr != "" {
			args = append(args, "--constrained", constr)
		}
		args = append(args, "--approach", pick("cumulative", "stage", "adjacent"), "--link", pick("logit", "probit", "cloglog", "loglog", "cauchy"))
		for _, extra := range [][]string{
			{"", "--weights=w", "--weights=a", "--weights=treat"},
			{"", "--weight-kind=sampling"},
			{"", "--covariance=sandwich", "--covariance=clustered", "--covariance=expected", "--covariance=sandwich_plain"},
			{"", "--cluster=cl", "--cluster=site"},
			{"", "--offset=off", "--offset=age"},
			{"", "--stereotype", "--all-nonparallel", "--direction=backward"},
			{"", "--missing=refuse"},
			{"", "--baseline=1", "--baseline=mid", "--baseline=nothing"},
			{"", "--confidence-level=0.5", "--confidence-level=1", "--confidence-level=NaN"},
			{"", "--json"},
		} {
			if v := pick(extra...); v != "" {
				args = append(args, v)
			}
		}
		var stdout, stderr bytes.Buffer
		code := run(args, &stdout, &stderr)
		t.Logf("ordplan %q: exit %d %.200s", args, code, stderr.String())
		if strings.Contains(stderr.String(), "internal error") {
			t.Fatalf("ordplan %q: %s", args, stderr.String())
		}
		// A fit without usable estimates (no finite maximum, not converged)
		// is printed with its status and why, on stdout, and exits 1.
		if code != exitOK && strings.TrimSpace(stderr.String()) == "" && !strings.Contains(stdout.String(), "Status ") {
			t.Fatalf("ordplan %q: exit %d with nothing said", args, code)
		}
	})
}
