package queue

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
	"ordplan/runner/queue/localserver"
)

// splitCSV deals the data rows of a CSV file in turn into k files with the
// header (the file is sorted by the outcome, so blocks would hold one
// category each) and returns them as partitions.
func splitCSV(t *testing.T, path string, k int) []PartitionRef {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(strings.TrimRight(string(b), "\n")+"\n", "\n")
	header, rows := lines[0], lines[1:len(lines)-1]
	dir := t.TempDir()
	var parts []PartitionRef
	for p := range k {
		body := header
		for i := p; i < len(rows); i += k {
			body += rows[i]
		}
		parts = append(parts, writePart(t, dir, "part"+string(rune('0'+p))+".csv", body))
	}
	return parts
}

func writePart(t *testing.T, dir, name, body string) PartitionRef {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	return PartitionRef{Name: name, Hash: hashBytes([]byte(body)), Path: p}
}

// A fit whose likelihood is summed over four partitions evaluated by
// workers equals the local fit of the whole file to 1e-8, and so does the
// Lipsitz test over the partitions (General Social Survey extract, Long
// 1997).
func TestPartitionedFitEqualsLocal(t *testing.T) {
	ctx := testContext(t, 60*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	startWorker(t, url, "w1", 5*time.Second, 0)
	startWorker(t, url, "w2", 5*time.Second, 0)

	path := filepath.Join(refDir, "gsswarm.csv")
	dopt := data.Options{Outcome: "warm", Predictors: gssPredictors}
	ds, err := data.Load(path, dopt)
	if err != nil {
		t.Fatal(err)
	}
	whole := fit.Whole{J: len(ds.Categories), Predictors: ds.Predictors, Categories: ds.Categories, Counts: ds.Counts, Rows: ds.N}
	parts := splitCSV(t, path, 4)
	specs := []runner.Spec{
		{Approach: fit.Cumulative, Link: fit.Logit, Predictors: gssPredictors, Nonparallel: []string{"yr89", "male"}},
		{Approach: fit.Stage, Link: fit.Probit, Predictors: gssPredictors},
		{Approach: fit.Adjacent, Link: fit.Logit, Predictors: gssPredictors, Nonparallel: gssPredictors},
	}
	for _, s := range specs {
		m, err := s.Model()
		if err != nil {
			t.Fatal(err)
		}
		local, err := fit.Fit(runner.FitData(ds), m, fit.Options{Workers: 1})
		if err != nil || !local.OK() {
			t.Fatalf("%s: local fit: %v", m.Name(), err)
		}
		r, err := FitPartitioned(ctx, c, parts, whole, m, PartitionOptions{Data: dopt})
		if err != nil {
			t.Fatalf("%s: %v", m.Name(), err)
		}
		if r.Status != local.Status || math.Abs(r.LogLik-local.LogLik) > 1e-8 {
			t.Fatalf("%s: %s ll %.12f, local %s %.12f", m.Name(), r.Status, r.LogLik, local.Status, local.LogLik)
		}
		for i := range r.Estimates {
			if math.Abs(r.Estimates[i]-local.Estimates[i]) > 1e-8 || math.Abs(r.StdErrors[i]-local.StdErrors[i]) > 1e-8 {
				t.Errorf("%s %s: %v (%v), local %v (%v)", m.Name(), r.ParamNames[i], r.Estimates[i], r.StdErrors[i], local.Estimates[i], local.StdErrors[i])
			}
		}
		if r.NegativeRows != local.NegativeRows || math.Abs(r.MinFittedProb-local.MinFittedProb) > 1e-12 {
			t.Errorf("%s: diagnostics %d %v, local %d %v", m.Name(), r.NegativeRows, r.MinFittedProb, local.NegativeRows, local.MinFittedProb)
		}
		// The Lipsitz test of the local fit over the partitions: the local
		// test's groups, its statistic.
		want, err := fit.LipsitzTest(runner.FitData(ds), local, 0, fit.Options{})
		if err != nil {
			t.Fatal(err)
		}
		got, err := LipsitzPartitioned(ctx, c, parts, whole, local, PartitionOptions{Data: dopt})
		if err != nil {
			t.Fatalf("%s: Lipsitz test over the partitions: %v", m.Name(), err)
		}
		if !got.Test.OK || got.Test.DF != want.Test.DF || math.Abs(got.Test.Chi2-want.Test.Chi2) > 1e-6 || !slices.Equal(got.Table.Weight, want.Table.Weight) {
			t.Errorf("%s: Lipsitz %+v %v over the partitions, %+v %v here", m.Name(), got.Test, got.Table.Weight, want.Test, want.Table.Weight)
		}
	}
}

// Partitions must code the outcome alike: without the whole data's
// category labels the fit is refused with a clear error.
func TestPartitionedFitNeedsCategories(t *testing.T) {
	ctx := testContext(t, 30*time.Second)
	c := connect(t, ctx, localserver.ForTest(t))
	whole := fit.Whole{J: 4, Predictors: []string{"male"}, Counts: []float64{1, 1, 1, 1}, Rows: 4}
	m, _ := runner.Spec{Approach: fit.Cumulative, Link: fit.Logit, Predictors: []string{"male"}}.Model()
	_, err := FitPartitioned(ctx, c, []PartitionRef{{Name: "p", Hash: strings.Repeat("0", 64)}}, whole, m, PartitionOptions{Data: data.Options{Outcome: "warm"}})
	if err == nil || !strings.Contains(err.Error(), "category labels") {
		t.Fatalf("got %v", err)
	}
}

// Parts coded by integers, without declared categories: the codes are read
// as numbers in every part (a part writing +2 or 02 is coded as one writing
// 2), each part is read once to describe the whole, and the summed fit
// equals the local fit of the whole file (General Social Survey extract,
// Long 1997).
func TestPartitionedFitCodesAsNumbers(t *testing.T) {
	ctx := testContext(t, 60*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	startWorker(t, url, "w1", 5*time.Second, 0)

	path := filepath.Join(refDir, "gsswarm.csv")
	dopt := data.Options{Outcome: "warm", Predictors: gssPredictors}
	ds, err := data.Load(path, dopt)
	if err != nil {
		t.Fatal(err)
	}
	parts := splitCSV(t, path, 3)
	// The second part writes its codes with a plus sign, the third with a
	// leading zero; the first part lacks category 4.
	rewrite := func(p PartitionRef, f func(code string) string, drop string) PartitionRef {
		b, err := os.ReadFile(p.Path)
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.SplitAfter(string(b), "\n")
		out := lines[0]
		for _, ln := range lines[1:] {
			code, rest, ok := strings.Cut(ln, ",")
			if !ok || code == drop {
				continue
			}
			out += f(code) + "," + rest
		}
		return writePart(t, filepath.Dir(p.Path), p.Name, out)
	}
	parts[0] = rewrite(parts[0], func(c string) string { return c }, "4")
	parts[1] = rewrite(parts[1], func(c string) string { return "+" + c }, "")
	parts[2] = rewrite(parts[2], func(c string) string { return "0" + c }, "")
	var paths []string
	for _, p := range parts {
		paths = append(paths, p.Path)
	}
	whole, refs, sum, err := PartitionFiles(paths, dopt)
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(whole.Categories, " ") != "1 2 3 4" || whole.J != 4 {
		t.Fatalf("categories %v (J %d), want 1 2 3 4", whole.Categories, whole.J)
	}
	// The whole file less the dropped rows of the first part.
	local, err := data.LoadFiles(paths, data.Options{Outcome: "warm", Predictors: gssPredictors, Categories: []string{"1", "2", "3", "4", "+1", "+2", "+3", "+4", "01", "02", "03", "04"}})
	if err != nil {
		t.Fatal(err)
	}
	if read := sum.RowsRead(); read != local.RowsRead || whole.Rows != local.N || whole.Rows >= ds.N || sum.DropSummary() != local.DropSummary() {
		t.Fatalf("rows read %d, kept %d (%s); the parts have %d (%d kept; %s)", read, whole.Rows, sum.DropSummary(), local.RowsRead, local.N, local.DropSummary())
	}
	for j := range 4 {
		if want := local.Counts[j] + local.Counts[4+j] + local.Counts[8+j]; whole.Counts[j] != want {
			t.Fatalf("category %d: count %v, want %v", j+1, whole.Counts[j], want)
		}
	}
	// The local fit of the same rows, read with plain codes.
	var plain strings.Builder
	for i, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		s := string(b)
		if i > 0 {
			_, s, _ = strings.Cut(s, "\n")
		}
		for _, ln := range strings.SplitAfter(s, "\n") {
			plain.WriteString(strings.TrimLeft(strings.TrimPrefix(ln, "+"), "0"))
		}
	}
	dsPlain, err := data.Read(strings.NewReader(plain.String()), "plain.csv", dopt)
	if err != nil {
		t.Fatal(err)
	}
	m, err := runner.Spec{Approach: fit.Cumulative, Link: fit.Logit, Predictors: gssPredictors}.Model()
	if err != nil {
		t.Fatal(err)
	}
	want, err := fit.Fit(runner.FitData(dsPlain), m, fit.Options{Workers: 1})
	if err != nil || !want.OK() {
		t.Fatalf("local fit: %v", err)
	}
	got, err := FitPartitioned(ctx, c, refs, whole, m, PartitionOptions{Data: dopt})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(got.LogLik-want.LogLik) > 1e-8 {
		t.Fatalf("ll %.12f, local %.12f", got.LogLik, want.LogLik)
	}
	for i := range got.Estimates {
		if math.Abs(got.Estimates[i]-want.Estimates[i]) > 1e-8 {
			t.Errorf("%s: %v, local %v", got.ParamNames[i], got.Estimates[i], want.Estimates[i])
		}
	}
}

// A run with no jobs on data held as parts has no replies (no job to take
// the outcome's name from).
func TestExecutePartsNoJobs(t *testing.T) {
	replies, err := (&Coordinator{}).executeParts(nil, []string{"p1.csv", "p2.csv"}, nil)
	if err != nil || len(replies) != 0 {
		t.Fatalf("got %v, %v", replies, err)
	}
}

// The fits a run on parts makes on the coordinator (here, under expected
// information) share one read of the parts per data options, and give
// each the fit of the parts read as one data set, as before (General
// Social Survey extract, Long 1997).
func TestExecutePartsReadsOnceForFitsHere(t *testing.T) {
	parts := splitCSV(t, filepath.Join(refDir, "gsswarm.csv"), 3)
	var paths []string
	for _, p := range parts {
		paths = append(paths, p.Path)
	}
	dopt := data.Options{Outcome: "warm", Predictors: gssPredictors}
	var jobs []runner.Job
	for i, s := range []runner.Spec{
		{Approach: fit.Cumulative, Link: fit.Logit, Predictors: gssPredictors},
		{Approach: fit.Stage, Link: fit.Probit, Predictors: gssPredictors},
		{Approach: fit.Adjacent, Link: fit.Logit, Predictors: gssPredictors, Nonparallel: []string{"male"}},
	} {
		jobs = append(jobs, runner.Job{Outcome: "warm", Index: i, ID: "job" + string(rune('0'+i)), Spec: s, DataOptions: dopt,
			FitOptions: fit.Options{Covariance: fit.Expected, Workers: 1}})
	}
	reads := 0
	defer func(f func([]string, data.Options) (*data.Dataset, error)) { loadParts = f }(loadParts)
	loadParts = func(p []string, o data.Options) (*data.Dataset, error) {
		reads++
		return data.LoadFiles(p, o)
	}
	replies, err := (&Coordinator{}).executeParts(jobs, paths, nil)
	if err != nil {
		t.Fatal(err)
	}
	if reads != 1 {
		t.Errorf("the parts were read %d times for %d fits made here, want once", reads, len(jobs))
	}
	for i, r := range replies {
		want, err := runner.ExecuteJobFiles(paths, jobs[i])
		if err != nil || r.Err != "" || r.Result == nil {
			t.Fatalf("%s: %v %s", jobs[i].ID, err, r.Err)
		}
		if r.Result.LogLik != want.LogLik || !slices.Equal(r.Result.Estimates, want.Estimates) || !slices.Equal(r.Result.StdErrors, want.StdErrors) {
			t.Errorf("%s: %v %v, each read on its own %v %v", jobs[i].ID, r.Result.LogLik, r.Result.Estimates, want.LogLik, want.Estimates)
		}
	}
}

// Predictors far from zero for their spread (age and ed of the General
// Social Survey extract, Long 1997, moved by 1e6, as a time stamp would
// be): the fit summed over parts by workers runs centred by the whole
// data's shift, as the fit of the whole file does, and gives its
// estimates, errors and Lipsitz test (runner/fit's TestPartitionedFarFromZero
// and the far-from-zero check of TestAgainstR check those fits against
// the published data's fit and against R's glm). Summed over the parts
// without centring, the fit reported no finite maximum.
func TestPartitionedFarFromZero(t *testing.T) {
	ctx := testContext(t, 60*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	startWorker(t, url, "w1", 5*time.Second, 0)
	startWorker(t, url, "w2", 5*time.Second, 0)

	b, err := os.ReadFile(filepath.Join(refDir, "gsswarm.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(b), "\n"), "\n")
	if lines[0] != "warm,yr89,male,white,age,ed,prst" {
		t.Fatalf("header %q", lines[0])
	}
	var moved strings.Builder
	moved.WriteString(lines[0] + "\n")
	for _, ln := range lines[1:] {
		f := strings.Split(ln, ",")
		for _, k := range []int{4, 5} {
			v, err := strconv.Atoi(f[k])
			if err != nil {
				t.Fatal(err)
			}
			f[k] = strconv.Itoa(v + 1_000_000)
		}
		moved.WriteString(strings.Join(f, ",") + "\n")
	}
	path := filepath.Join(t.TempDir(), "moved.csv")
	if err := os.WriteFile(path, []byte(moved.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	dopt := data.Options{Outcome: "warm", Predictors: gssPredictors}
	ds, err := data.Load(path, dopt)
	if err != nil {
		t.Fatal(err)
	}
	var paths []string
	for _, p := range splitCSV(t, path, 3) {
		paths = append(paths, p.Path)
	}
	whole, refs, _, err := PartitionFiles(paths, dopt)
	if err != nil {
		t.Fatal(err)
	}
	if len(whole.Shift) != len(gssPredictors) || whole.Shift[3] == 0 || whole.Shift[4] == 0 || whole.Shift[5] != 0 {
		t.Fatalf("shift %v: want age and ed shifted alone", whole.Shift)
	}
	for _, s := range []runner.Spec{
		{Approach: fit.Cumulative, Link: fit.Logit, Predictors: gssPredictors, Nonparallel: []string{"age"}},
		{Approach: fit.Stage, Link: fit.Probit, Predictors: gssPredictors},
	} {
		m, err := s.Model()
		if err != nil {
			t.Fatal(err)
		}
		local, err := fit.Fit(runner.FitData(ds), m, fit.Options{Workers: 1})
		if err != nil || !local.OK() {
			t.Fatalf("%s: the whole file's fit: %v", m.Name(), err)
		}
		r, err := FitPartitioned(ctx, c, refs, whole, m, PartitionOptions{Data: dopt})
		if err != nil {
			t.Fatalf("%s: %v", m.Name(), err)
		}
		if !r.OK() || math.Abs(r.LogLik-local.LogLik) > 1e-9*math.Abs(local.LogLik) {
			t.Fatalf("%s: %s (%s) ll %.12f, the whole file %.12f", m.Name(), r.Status, r.Message, r.LogLik, local.LogLik)
		}
		for i := range r.Estimates {
			if math.Abs(r.Estimates[i]-local.Estimates[i]) > 1e-6*local.StdErrors[i] || math.Abs(r.StdErrors[i]-local.StdErrors[i]) > 1e-6*local.StdErrors[i] {
				t.Errorf("%s %s: %v (%v), the whole file %v (%v)", m.Name(), r.ParamNames[i], r.Estimates[i], r.StdErrors[i], local.Estimates[i], local.StdErrors[i])
			}
		}
		want, err := fit.LipsitzTest(runner.FitData(ds), local, 0, fit.Options{})
		if err != nil {
			t.Fatal(err)
		}
		got, err := LipsitzPartitioned(ctx, c, refs, whole, r, PartitionOptions{Data: dopt})
		if err != nil {
			t.Fatalf("%s: Lipsitz test over the parts: %v", m.Name(), err)
		}
		if !want.Test.OK || !got.Test.OK || got.Test.DF != want.Test.DF || math.Abs(got.Test.Chi2-want.Test.Chi2) > 1e-6*want.Test.Chi2 {
			t.Errorf("%s: Lipsitz %+v over the parts, %+v on the whole file", m.Name(), got.Test, want.Test)
		}
	}
}
