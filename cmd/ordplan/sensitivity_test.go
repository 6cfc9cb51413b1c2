package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
	"ordplan/render/numfmt"
)

// sensitivityPlan is a small plan with two sensitivity analyses: a
// subset of rows and imputation in place of complete cases.
const sensitivityPlan = `version: 1
title: Sensitivity analyses
data:
  file: sens.csv
  missing: drop
outcomes:
  - column: y
predictors: [x1, x2]
models:
  approaches: [cumulative, adjacent]
  effects: [parallel, nonparallel]
tests: {parallel_lines: [lr]}
rules:
  - reject_unconverged: true
  - choose: {by: bic}
`

const sensitivitySection = `sensitivity:
  - name: without_s3
    why: Site s3 changed its protocol halfway.
    change:
      subset:
        - {column: site, none_of: [s3]}
  - name: imputed
    why: Complete cases assume the rows dropped are like those kept.
    change:
      data.missing: impute
      data.imputation: {sets: 3, iterations: 2}
`

// sensitivityData writes sens.csv: 300 rows of the report's invented
// survey (testsurvey.Report), x2 missing in about one row in eight, each
// row at one of three sites and in one of 12 districts.
func sensitivityData(t *testing.T, dir string) {
	t.Helper()
	rng := rand.New(rand.NewPCG(20261205, 3))
	var b strings.Builder
	b.WriteString("y,x1,x2,site,district\n")
	for i := 0; i < 300; i++ {
		y, x1, x2 := testsurvey.Report.Row(rng)
		x2s := strconv.FormatFloat(x2, 'f', 4, 64)
		if rng.IntN(8) == 0 {
			x2s = "NA"
		}
		fmt.Fprintf(&b, "%d,%.4f,%s,s%d,d%d\n", y, x1, x2s, 1+i%3, i%12)
	}
	if err := os.WriteFile(filepath.Join(dir, "sens.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// writeIn writes src as dir/name and gives its path.
func writeIn(t *testing.T, dir, name, src string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

type sensDecisions struct {
	Outcomes []struct {
		Chosen   *string `json:"chosen"`
		RowsUsed int     `json:"rows_used"`
		Fits     []struct {
			ID        string             `json:"id"`
			Estimates map[string]float64 `json:"estimates"`
			StdErrors map[string]float64 `json:"std_errors"`
		} `json:"fits"`
	} `json:"outcomes"`
	Sensitivity []struct {
		Name     string   `json:"name"`
		Changes  []string `json:"changes"`
		Error    string   `json:"error"`
		Outcomes []struct {
			RowsUsed      int     `json:"rows_used"`
			Chosen        *string `json:"chosen"`
			SameAsPrimary bool    `json:"same_as_primary"`
			PrimaryModel  struct {
				Model     string `json:"model"`
				Estimates []struct {
					Parameter string   `json:"parameter"`
					Estimate  float64  `json:"estimate"`
					StdError  float64  `json:"std_error"`
					Reference string   `json:"reference"`
					DF        *float64 `json:"df"`
				} `json:"estimates"`
			} `json:"primary_model"`
		} `json:"outcomes"`
	} `json:"sensitivity"`
}

// readCSVTable reads the CSV table out/name: its header and its rows as
// maps from the header's names.
func readCSVTable(t *testing.T, out, name string) []map[string]string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(out, name))
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil || len(recs) == 0 {
		t.Fatalf("%s: %v", name, err)
	}
	var rows []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		rows = append(rows, m)
	}
	return rows
}

func readSensDecisions(t *testing.T, out string) sensDecisions {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(out, "decisions.json"))
	if err != nil {
		t.Fatal(err)
	}
	var d sensDecisions
	if err := json.Unmarshal(b, &d); err != nil {
		t.Fatal(err)
	}
	return d
}

// A plan with two sensitivity analyses: each analysis's numbers in the
// report and decisions.json are those of the same plan, changed as the
// analysis says, run on its own (the same fit, bit for bit), and a rerun
// gives the same bytes.
func TestSensitivityAnalysesAsSeparatePlans(t *testing.T) {
	dir := t.TempDir()
	sensitivityData(t, dir)
	write := func(name, src string) string { return writeIn(t, dir, name, src) }
	main := write("main.yaml", sensitivityPlan+sensitivitySection)
	separate := []string{
		write("subset.yaml", sensitivityPlan+"subset:\n  - {column: site, none_of: [s3]}\n"),
		write("imputed.yaml", strings.Replace(sensitivityPlan, "  missing: drop\n", "  missing: impute\n  imputation: {sets: 3, iterations: 2}\n", 1)),
	}
	run := func(plan, out string) {
		t.Helper()
		stdout, stderr, code := runCLI("run", plan, "--out", out, "--quiet")
		if code != 0 {
			t.Fatalf("%s: exit %d: %s %s", plan, code, stdout, stderr)
		}
	}
	a, b := filepath.Join(dir, "a"), filepath.Join(dir, "b")
	run(main, a)
	run(main, b)
	for _, f := range []string{"decisions.json", "report.md", "report.html", "run.json"} {
		x, err1 := os.ReadFile(filepath.Join(a, f))
		y, err2 := os.ReadFile(filepath.Join(b, f))
		if err1 != nil || err2 != nil || !bytes.Equal(x, y) {
			t.Errorf("%s differs between runs (%v %v)", f, err1, err2)
		}
	}
	d := readSensDecisions(t, a)
	if len(d.Sensitivity) != 2 || d.Sensitivity[0].Name != "without_s3" || d.Sensitivity[1].Name != "imputed" {
		t.Fatalf("sensitivity records: %+v", d.Sensitivity)
	}
	primary := *d.Outcomes[0].Chosen
	report, _ := os.ReadFile(filepath.Join(a, "report.md"))
	table, _ := os.ReadFile(filepath.Join(a, "table-sensitivity-y.csv"))
	for i, plan := range separate {
		s := d.Sensitivity[i]
		if s.Error != "" || len(s.Outcomes) != 1 {
			t.Fatalf("%s: %+v", s.Name, s)
		}
		so := s.Outcomes[0]
		out := filepath.Join(dir, fmt.Sprintf("separate%d", i))
		run(plan, out)
		sep := readSensDecisions(t, out).Outcomes[0]
		// The separate plan's table of estimates: the interval and its
		// degrees of freedom (on imputed data, Barnard-Rubin; empty when
		// infinite, as for the normal).
		sepEst := map[string]map[string]string{}
		for _, row := range readCSVTable(t, out, "table-estimates-y.csv") {
			if row["model"] == primary {
				sepEst[row["parameter"]] = row
			}
		}
		if *so.Chosen != *sep.Chosen || so.RowsUsed != sep.RowsUsed || so.SameAsPrimary != (*sep.Chosen == primary) {
			t.Errorf("%s: chose %s on %d rows (same as primary %v); the separate plan %s on %d rows", s.Name, *so.Chosen, so.RowsUsed, so.SameAsPrimary, *sep.Chosen, sep.RowsUsed)
		}
		if so.PrimaryModel.Model != primary || len(so.PrimaryModel.Estimates) == 0 {
			t.Fatalf("%s: primary model %+v", s.Name, so.PrimaryModel)
		}
		var fitted bool
		for _, f := range sep.Fits {
			if f.ID != primary {
				continue
			}
			fitted = true
			for _, e := range so.PrimaryModel.Estimates {
				if e.Estimate != f.Estimates[e.Parameter] || e.StdError != f.StdErrors[e.Parameter] {
					t.Errorf("%s: %s = %v (%v), the separate plan's %v (%v)", s.Name, e.Parameter, e.Estimate, e.StdError, f.Estimates[e.Parameter], f.StdErrors[e.Parameter])
				}
				se := sepEst[e.Parameter]
				low, _ := strconv.ParseFloat(se["low_95"], 64)
				high, _ := strconv.ParseFloat(se["high_95"], 64)
				ref, df, dfMD := "normal", "inf", "inf"
				if se["df"] != "" {
					x, _ := strconv.ParseFloat(se["df"], 64)
					ref, df, dfMD = "t", se["df"], numfmt.Fixed(x, 1)
				}
				if wantT := i == 1; (ref == "t") != wantT || e.Reference != ref || (e.DF == nil) != (ref == "normal") {
					t.Errorf("%s: %s refers to %s (df %v) in decisions.json, the separate plan's table of estimates to %s (df %s)", s.Name, e.Parameter, e.Reference, e.DF, ref, df)
				}
				row := fmt.Sprintf("| %s | %s | %s | %s | %s | %s | %s | %s |", e.Parameter, s.Name, numfmt.Est(f.Estimates[e.Parameter]), numfmt.Est(f.StdErrors[e.Parameter]), numfmt.Est(low), numfmt.Est(high), ref, dfMD)
				if !bytes.Contains(report, []byte(row)) {
					t.Errorf("report.md lacks the row %s", row)
				}
				line := fmt.Sprintf("\n%s,%s,%s,%s,%s,%s,%s,%s\n", s.Name, e.Parameter, strconv.FormatFloat(e.Estimate, 'g', 12, 64), strconv.FormatFloat(e.StdError, 'g', 12, 64), se["low_95"], se["high_95"], ref, df)
				if !bytes.Contains(table, []byte(line)) {
					t.Errorf("table-sensitivity-y.csv lacks the line %s", line)
				}
			}
		}
		if !fitted {
			t.Errorf("%s: the separate plan did not fit %s", s.Name, primary)
		}
	}
	for _, w := range []string{"## Sensitivity analyses", "The sensitivity analyses shown are those the plan fixed in advance, and only those.",
		"it is not proof that the results are robust to changes not tried", "The plan fixed 2 sensitivity analyses in advance",
		"Agreement between them shows that the choice and the estimates did not move", // no analysis changes only the errors
		"`data.missing`: `\"drop\"` → `\"impute\"`"} {
		if !bytes.Contains(report, []byte(w)) {
			t.Errorf("report.md lacks %q", w)
		}
	}
	var rec struct {
		Sensitivity []struct {
			Name       string            `json:"name"`
			Changes    []string          `json:"changes"`
			Imputation []json.RawMessage `json:"imputation"`
		} `json:"sensitivity"`
	}
	rj, _ := os.ReadFile(filepath.Join(a, "run.json"))
	if err := json.Unmarshal(rj, &rec); err != nil || len(rec.Sensitivity) != 2 || rec.Sensitivity[1].Name != "imputed" ||
		strings.Join(rec.Sensitivity[1].Changes, ",") != "data.missing,data.imputation" || len(rec.Sensitivity[1].Imputation) != 1 {
		t.Errorf("run.json's sensitivity: %v %+v", err, rec.Sensitivity)
	}
}

// The sensitivity analyses of a run through the queue are fitted by the
// workers as the primary analysis's are, with the local run's outputs
// byte for byte (imputed sets of an analysis included).
func TestSensitivityThroughQueue(t *testing.T) {
	if testing.Short() {
		t.Skip("starts worker processes")
	}
	dir := t.TempDir()
	sensitivityData(t, dir)
	plan := writeIn(t, dir, "main.yaml", sensitivityPlan+sensitivitySection)
	local, remote, r := runHereAndQueued(t, plan, 2)
	t.Logf("through the queue:\n%s", r[1])
	sameOutputs(t, local, remote)
	// The coordinator's lines of each batch name the analysis it is of.
	for _, want := range []string{"queue: y: run ", "queue: y: all 8 fits collected in ",
		"queue: sensitivity analysis without_s3: y: run ", "queue: sensitivity analysis without_s3: y: all 8 fits collected in ",
		"queue: sensitivity analysis imputed: y: run ", "queue: sensitivity analysis imputed: y: all 24 fits collected in "} {
		if strings.Count("\n"+r[1], "\n"+want) != 1 {
			t.Errorf("the log has not one line beginning %q", want)
		}
	}
}

// An analysis that changes only the errors (clusters and covariance) on
// the same rows has the primary analysis's estimates by construction (the
// fits do not read the covariance): the report says that only its errors
// and intervals, and the decisions that read the covariance (a Wald-test
// rule, named), are informative, and does not count it as agreement. Its
// warnings (too few clusters) are printed, named by it, its key and its
// plan line as check names them, and reported.
func TestSensitivityErrorsOnly(t *testing.T) {
	dir := t.TempDir()
	sensitivityData(t, dir)
	section := `sensitivity:
  - name: clustered
    why: Rows of a district share it.
    change:
      data.cluster: district
      covariance: clustered
`
	for _, tc := range []struct {
		name, rules, want string
	}{
		{"lr", "", "its choice can differ only through the decisions that read the covariance (the rejection of a model whose robust covariance cannot be computed)."},
		{"wald", "  - reject_if_test_rejects: {test: wald, alpha: 0.05}\n", "(the Wald-test rule at line 15; the rejection of a model whose robust covariance cannot be computed)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			src := strings.Replace(sensitivityPlan, "  - choose: {by: bic}\n", tc.rules+"  - choose: {by: bic}\n", 1) + section
			plan := writeIn(t, dir, tc.name+".yaml", src)
			out := filepath.Join(dir, tc.name)
			stdout, stderr, code := runCLI("run", plan, "--out", out, "--quiet")
			if code != 0 {
				t.Fatalf("exit %d: %s %s", code, stdout, stderr)
			}
			report, _ := os.ReadFile(filepath.Join(out, "report.md"))
			// The analysis's own warnings (12 districts, fewer than 40),
			// on the console named by it and in its section.
			few := `outcome y: data.cluster: column "district" holds 12 clusters in the`
			// Named as check names it: by its key and plan line.
			line := strings.Count(src[:strings.Index(src, "  - name: clustered")], "\n") + 1
			if !strings.Contains(stderr, fmt.Sprintf("warning: %s: sensitivity analysis \"clustered\" (sensitivity[0], line %d): %s", plan, line, few)) {
				t.Errorf("stderr lacks the analysis's few-clusters warning:\n%s", stderr)
			}
			if !bytes.Contains(report, []byte("**Warnings of the sensitivity analysis clustered**")) || !bytes.Contains(report, []byte("- "+few)) {
				t.Error("report.md lacks the analysis's warnings")
			}
			for _, w := range []string{
				"**clustered** changes only how the standard errors are computed (`data.cluster`, `covariance`), on the same rows",
				"its estimates are the primary analysis's by construction", tc.want,
				"The analysis clustered changes only how the standard errors are computed",
				"The agreement of clustered is by construction, not evidence",
			} {
				if !bytes.Contains(report, []byte(w)) {
					t.Errorf("report.md lacks %q", w)
				}
			}
			if bytes.Contains(report, []byte("Agreement between them shows")) {
				t.Error("report.md counts the errors-only analysis as agreement")
			}
			// Each interval names its reference: the primary analysis's the
			// normal, the clustered analysis's t on G-1 = 11 degrees of
			// freedom, and its half-width over the standard error is that
			// reference's 0.975 quantile (R: qnorm(0.975) = 1.959964,
			// qt(0.975, 11) = 2.200985, as R prints them).
			analyses := map[string]int{}
			for _, row := range readCSVTable(t, out, "table-sensitivity-y.csv") {
				analyses[row["analysis"]]++
				ref, df, q := "normal", "inf", 1.959964
				if row["analysis"] == "clustered" {
					ref, df, q = "t", "11", 2.200985
				}
				se, _ := strconv.ParseFloat(row["std_error"], 64)
				low, _ := strconv.ParseFloat(row["low_95"], 64)
				high, _ := strconv.ParseFloat(row["high_95"], 64)
				if row["reference"] != ref || row["df"] != df || math.Abs((high-low)/(2*se)-q) > 1e-6 {
					t.Errorf("table-sensitivity-y.csv: %s %s: reference %s on df %s, interval %v to %v of standard error %v; want %s on %s, half-width %v standard errors", row["analysis"], row["parameter"], row["reference"], row["df"], low, high, se, ref, df, q)
				}
			}
			// The CSV names the analyses as the report's table does.
			if len(analyses) != 2 || analyses["primary analysis"] == 0 || analyses["clustered"] != analyses["primary analysis"] || !bytes.Contains(report, []byte(" | primary analysis | ")) {
				t.Errorf("table-sensitivity-y.csv names the analyses %v; want primary analysis and clustered, as report.md", analyses)
			}
			if !bytes.Contains(report, []byte("| clustered | ")) || !bytes.Contains(report, []byte(" | t | 11.0 |\n")) || !bytes.Contains(report, []byte(" | normal | inf |\n")) {
				t.Error("report.md's estimates under each analysis lack the reference and its df")
			}
			// The claim itself: the same estimates as the primary's fit.
			d := readSensDecisions(t, out)
			primary := *d.Outcomes[0].Chosen
			for _, f := range d.Outcomes[0].Fits {
				if f.ID != primary {
					continue
				}
				for _, e := range d.Sensitivity[0].Outcomes[0].PrimaryModel.Estimates {
					if math.Abs(e.Estimate-f.Estimates[e.Parameter]) > 1e-8*(1+math.Abs(e.Estimate)) {
						t.Errorf("%s: %v under clustered errors, %v in the primary analysis", e.Parameter, e.Estimate, f.Estimates[e.Parameter])
					}
				}
			}
		})
	}
}

// Beside its choice, each sensitivity analysis says the rows it read and
// used, the rows dropped by reason (the subset's), how it imputed (sets,
// iterations, seed, each column's model with its count of imputed values
// and its predictors) and the clusters of its clustered errors: what a
// reviewer asks of it. The counts are checked against sens.csv as written
// (its NA cells and its 12 districts) and decisions.json's rows used.
func TestSensitivityRowsAndMethods(t *testing.T) {
	dir := t.TempDir()
	sensitivityData(t, dir)
	section := sensitivitySection + `  - name: clustered
    why: Rows of a district share it.
    change:
      data.cluster: district
      covariance: clustered
  - name: imputed_clustered
    why: Both.
    change:
      data.missing: impute
      data.imputation: {sets: 3, iterations: 2}
      data.cluster: district
      covariance: clustered
      few_clusters: jackknife
`
	plan := writeIn(t, dir, "main.yaml", sensitivityPlan+section)
	out := filepath.Join(dir, "out")
	if stdout, stderr, code := runCLI("run", plan, "--out", out, "--quiet"); code != 0 {
		t.Fatalf("exit %d: %s %s", code, stdout, stderr)
	}
	csvRows := readCSVTable(t, dir, "sens.csv")
	na, s3, s3na := 0, 0, 0
	for _, r := range csvRows {
		if r["x2"] == "NA" {
			na++
		}
		if r["site"] == "s3" {
			s3++
			if r["x2"] == "NA" {
				s3na++
			}
		}
	}
	d := readSensDecisions(t, out)
	report, _ := os.ReadFile(filepath.Join(out, "report.md"))
	for _, w := range []string{
		"The rows each analysis used, and how it handled missing values and clusters:",
		fmt.Sprintf("- **without_s3**: 300 rows read, %d used; %d of 300 rows dropped for the subset or missing values (x2: %d, outside the subset site not in {s3}: %d;", d.Sensitivity[0].Outcomes[0].RowsUsed, 300-d.Sensitivity[0].Outcomes[0].RowsUsed, na-s3na, s3),
		fmt.Sprintf("- **imputed**: 300 rows read, 300 used; no rows dropped for missing values. Of these, %d (%s) had a missing value in the outcome or a predictor and were kept: their values were imputed by chained equations, 3 sets, each after 2 iterations, seed ", na, numfmt.Fixed(100*float64(na)/300, 1)+"%"),
		fmt.Sprintf("`x2` (%d values) by predictive mean matching (5 donors) given y, x1. The fits of the 3 sets were pooled by Rubin's rules, intervals on t with Barnard-Rubin degrees of freedom. This assumes that values are missing at random", na),
		fmt.Sprintf("- **clustered**: 300 rows read, %d used; %d of 300 rows dropped for missing values (x2: %d).", 300-na, na, na),
		"Standard errors by the cluster-robust sandwich over the 12 clusters of `district` in the rows used, intervals on t with G-1 = 11 degrees of freedom.\n",
		// Imputed and clustered: the pooling's complete-data df, and the
		// imputation models' leaving out the clusters.
		"Standard errors by the delete-one-cluster jackknife over the 12 clusters of `district` in the rows used, pooled with G-1 = 11 complete-data degrees of freedom. The imputation models leave out the clusters of `district`",
		// The Methods draft says the same in a sentence per analysis.
		fmt.Sprintf("In imputed, the %d rows (%s of 300) with a missing value were multiply imputed by chained equations (3 sets, 2 iterations each; predictive mean matching (5 donors) for `x2`; every model given the outcome and the other columns used) and the fits pooled by Rubin's rules. In clustered, standard errors were cluster-robust over the 12 clusters of `district`, with t on 11 degrees of freedom. In imputed_clustered, ", na, numfmt.Fixed(100*float64(na)/300, 1)+"%"),
		"standard errors were the delete-one-cluster jackknife's over the 12 clusters of `district`, pooled with 11 complete-data degrees of freedom. For each, the model the rules chose",
	} {
		if !bytes.Contains(report, []byte(w)) {
			t.Errorf("report.md lacks %q", w)
		}
	}
	if t.Failed() {
		i := bytes.Index(report, []byte("The rows each analysis used"))
		t.Logf("report.md has:\n%s", report[i:i+min(2000, len(report)-i)])
	}
}

// A sensitivity analysis added to a frozen plan (and one changed after
// it) is not said to be fixed in advance: the report's summary, its
// section, its limits and its methods name it as not registered, with
// the reason stated, and decisions.json and run.json record its changes
// from the lock (since_frozen); an analysis as registered carries none.
func TestSensitivityAddedAfterFreezing(t *testing.T) {
	dir := t.TempDir()
	sensitivityData(t, dir)
	frozen := sensitivityPlan + `sensitivity:
  - name: without_s3
    why: Site s3 changed its protocol halfway.
    change:
      subset:
        - {column: site, none_of: [s3]}
`
	planPath := writeIn(t, dir, "main.yaml", frozen)
	if stdout, stderr, code := runCLI("freeze", planPath); code != 0 {
		t.Fatalf("freeze: exit %d: %s %s", code, stdout, stderr)
	}
	writeIn(t, dir, "main.yaml", frozen+`  - name: probit
    why: Another link.
    change:
      models.links: [probit]
deviations:
  - key: sensitivity[1]
    reason: A reviewer asked for another link.
`)
	out := filepath.Join(dir, "out")
	if stdout, stderr, code := runCLI("run", planPath, "--out", out, "--quiet"); code != 0 {
		t.Fatalf("run: exit %d: %s %s", code, stdout, stderr)
	}
	report, err := os.ReadFile(filepath.Join(out, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{
		"**Sensitivity analyses** in the plan: 2, of which 1 **not as registered** (added or changed after the plan was frozen: probit)",
		"not fixed in advance, since they are not as registered (added or changed after the plan was frozen: see Deviations from the registered plan): probit.",
		"| Another link. **Added after the plan was frozen; stated reason: A reviewer asked for another link.** |",
		"The plan has 2 sensitivity analyses, 1 of them fixed in advance and 1 not as registered",
	} {
		if !bytes.Contains(report, []byte(want)) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	for _, bad := range []string{"The sensitivity analyses shown are those the plan fixed in advance", "The plan fixed 2 sensitivity analyses in advance", "fixed in the plan: 2"} {
		if bytes.Contains(report, []byte(bad)) {
			t.Errorf("report.md still says %q", bad)
		}
	}
	type since struct {
		Sensitivity []struct {
			Name        string `json:"name"`
			SinceFrozen []struct {
				Key, From, Reason string
			} `json:"since_frozen"`
		} `json:"sensitivity"`
	}
	for _, f := range []string{"decisions.json", "run.json"} {
		b, err := os.ReadFile(filepath.Join(out, f))
		if err != nil {
			t.Fatal(err)
		}
		var s since
		if err := json.Unmarshal(b, &s); err != nil {
			t.Fatal(err)
		}
		if len(s.Sensitivity) != 2 || len(s.Sensitivity[0].SinceFrozen) != 0 || len(s.Sensitivity[1].SinceFrozen) != 1 ||
			s.Sensitivity[1].SinceFrozen[0].Key != "sensitivity[1]" || s.Sensitivity[1].SinceFrozen[0].From != "(absent)" ||
			s.Sensitivity[1].SinceFrozen[0].Reason != "A reviewer asked for another link." {
			t.Errorf("%s: sensitivity records %+v", f, s.Sensitivity)
		}
	}

	// A key of the registered analysis changed, without a reason: said so
	// with the key.
	writeIn(t, dir, "main.yaml", strings.Replace(frozen, "none_of: [s3]", "none_of: [s2]", 1))
	if stdout, stderr, code := runCLI("run", planPath, "--out", out, "--quiet", "--allow-unregistered-changes"); code != 0 {
		t.Fatalf("run: exit %d: %s %s", code, stdout, stderr)
	}
	report, _ = os.ReadFile(filepath.Join(out, "report.md"))
	if want := "**Changed after the plan was frozen (`sensitivity[0].change.subset[0].none_of`); no stated reason.**"; !bytes.Contains(report, []byte(want)) {
		t.Errorf("report.md lacks %q", want)
	}
}

// A sensitivity analysis that clusters the errors by a copy of a
// categorical predictor (site fixed effects) shows the chosen model's
// site effects as n/a in the table of estimates under each analysis, and
// says why below the table, naming the analysis; the primary analysis's
// own table had the note, the comparison table had bare n/a cells.
func TestSensitivityNotEstimableNote(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,y,site,site2\n")
	for i := range 120 {
		fmt.Fprintf(&b, "%d,%d,s%d,s%d\n", i%13, 1+(i*7+i%13)%3, i%4, i%4)
	}
	planPath := writeStudy(t, dir, b.String(), "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [x, site]\n"+
		"categorical: {site: {levels: [s0, s1, s2, s3]}}\n"+
		"models: {approaches: [cumulative], effects: [parallel]}\n"+
		"rules:\n  - reject_unconverged: true\n  - choose: {by: aic}\n"+
		"sensitivity:\n  - name: by site\n    why: rows of a site may be alike\n    change: {covariance: clustered, data.cluster: site2}\n")
	report := runReport(t, planPath, filepath.Join(dir, "out"))
	for _, want := range []string{"| site.s1 | by site | ", " | n/a | n/a | n/a | t | 3.0 |",
		"n/a under by site: the standard errors of `tau[1]`, `tau[2]`, `site.s1`, `site.s2`, `site.s3` are not estimable under clustered errors"} {
		if !strings.Contains(report, want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
}
