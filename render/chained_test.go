package render

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
)

// TestChainedReport: a run that imputes by chained equations states the
// method, the sets, iterations and seed, each column's model, the
// convergence table it asked for and the missing-at-random assumption,
// and the methods paragraph cites the sources of the method.
func TestChainedReport(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(8, 2))
	var b strings.Builder
	b.WriteString("y,x1,x2\n")
	for i := 0; i < 200; i++ {
		y, x1, x2 := testsurvey.Report.Row(rng)
		if rng.Float64() < 0.1*float64(y) {
			fmt.Fprintf(&b, "%d,%.5f,\n", y, x1)
		} else {
			fmt.Fprintf(&b, "%d,%.5f,%.5f\n", y, x1, x2)
		}
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: imputed here
seed: 5
data: {file: d.csv, missing: impute, imputation: {sets: 3, iterations: 2, convergence_table: true}}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr]}
rules:
  - choose: {by: bic}
`
	md := string(renderSource(t, dir, src, 2)["report.md"])
	hasAll(t, "report.md", md,
		"imputed by this run from `d.csv`, as described below",
		"The imputed sets were made by this run by chained equations (fully conditional specification; van Buuren 2018): 3 sets, each after 2 iterations through the incomplete columns, with seed 5",
		"| `x2` | numeric |",
		"| Column | Kind | Imputed rows | Share of rows | Model | Predictors |",
		"predictive mean matching (5 donors)",
		"Imputed values by iteration",
		"Multiple imputation assumes that the values are missing at random given the columns in the imputation models",
		"were multiply imputed by chained equations [1, 2]: 3 imputed sets, each after 2 iterations (seed 5), with predictive mean matching with 5 donors [3] for x2",
		"[3] Little, R.J.A. (1988). Missing-data adjustments in large surveys.",
	)
	// The Methods draft gives the share of incomplete rows and the rows
	// missing each column, the numbers of the Data section's table.
	m := regexp.MustCompile("The ([0-9]+) rows \\(([0-9.]+%) of 200\\) with a missing value in the outcome or a predictor were kept \\(missing by column: `x2` ([0-9]+) \\(([0-9.]+%)\\)\\)").FindStringSubmatch(md)
	if m == nil || m[1] != m[3] || m[2] != m[4] || !strings.Contains(md, "| `x2` | "+m[3]+" | "+m[4]+" |") {
		t.Errorf("the Methods draft's count of incomplete rows: %q", m)
	}
	if strings.Contains(md, "The imputation models hold main effects only") {
		t.Error("the caution about terms the imputation models lack is given for a plan of main effects")
	}
	if strings.Contains(md, "leave out the clusters") {
		t.Error("a plan without clusters: the report speaks of clusters the imputation left out")
	}
	// No constrained or stereotype model in the plan: neither the limits
	// nor the methods speak of their random starts.
	for _, s := range []string{"several local maxima", "random starts of constrained fits"} {
		if strings.Contains(md, s) {
			t.Errorf("a plan without constrained or stereotype models: the report says %q", s)
		}
	}
	// With an interaction and a curve among the terms, the methods
	// paragraph cautions that the imputation models (main effects only)
	// do not carry them.
	src = strings.Replace(src, "predictors: [x1, x2]", "predictors: [x1, {name: x2q, column: x2, polynomial: {degree: 2}}, {name: x1x2, interact: [x1, x2q]}]", 1)
	files := renderSource(t, dir, src, 2)
	want := "The imputation models hold main effects only (each column linear in the others), while the analysis has the interaction x1x2 and the nonlinear term x2q (polynomial); as these terms were computed from values imputed without them, their estimates can be biased toward zero (toward no interaction and no curvature)."
	hasAll(t, "report.md", string(files["report.md"]), want,
		// The polynomial's constants come from set 1 and serve every set
		// (runner's designSets), and the report says so.
		"On imputed data they are computed on the first imputed set and used for every set, so that each parameter means the same in every set, as pooling by Rubin's rules needs.")

	// With a cluster column (not a column of the imputation models), the
	// limits under the imputation models and the methods paragraph say
	// that the imputation ignored the clusters.
	var c strings.Builder
	for i, line := range strings.Split(strings.TrimSpace(b.String()), "\n") {
		if i == 0 {
			fmt.Fprintf(&c, "%s,site\n", line)
		} else {
			fmt.Fprintf(&c, "%s,s%d\n", line, i%45)
		}
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(c.String()), 0o644)
	src = strings.Replace(src, "data: {file: d.csv,", "data: {file: d.csv, cluster: site,", 1) + "covariance: clustered\n"
	md = string(renderSource(t, dir, src, 2)["report.md"])
	if n := strings.Count(md, "The imputation models leave out the clusters of `site`: values were imputed as if the rows of one cluster were no more alike than rows of different clusters."); n != 2 {
		t.Errorf("the report says %d times that the imputation left the clusters out, want twice (under the imputation models and in the methods)", n)
	}
	hasAll(t, "report.md", md, "The imputation assumes that values are missing at random given these columns. The imputation models leave out the clusters of `site`")
}

// TestChainedReportDescribesObservedData: on data imputed by this run the
// outcome's counts and the predictors by outcome category are those of the
// original file's observed values (tabulated here from the file the test
// wrote), with the rows whose outcome is missing counted apart, never the
// values of one imputed set; decisions.json records the same counts.
func TestChainedReportDescribesObservedData(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(8, 3))
	var b strings.Builder
	b.WriteString("y,x1,x2\n")
	counts := map[int]int{}
	missingY, n := 0, 0
	sumX2, nX2 := 0.0, 0
	for i := 0; i < 240; i++ {
		y, x1, x2 := testsurvey.Report.Row(rng)
		ys, x2s := fmt.Sprint(y), fmt.Sprintf("%.5f", x2)
		if rng.Float64() < 0.3 {
			ys = ""
			missingY++
		} else {
			counts[y]++
			n++
		}
		if rng.Float64() < 0.2 {
			x2s = ""
		} else if ys != "" {
			v, _ := strconv.ParseFloat(x2s, 64)
			sumX2 += v
			nX2++
		}
		fmt.Fprintf(&b, "%s,%.5f,%s\n", ys, x1, x2s)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: imputed here
seed: 5
data: {file: d.csv, missing: impute, imputation: {sets: 3, iterations: 2}}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
`
	files := renderSource(t, dir, src, 2)
	md := string(files["report.md"])
	want := []string{
		// The file as the plan names it, whatever the folder the command
		// runs from (it was the path from there).
		fmt.Sprintf("describe the observed values of the original data `d.csv` (%d observations with the outcome observed, %d with it missing), not an imputed set", n, missingY),
		"Missing values in the columns the analysis uses, in the original data `d.csv`.",
		"Outcome categories, observed values of the original data",
		fmt.Sprintf("| (missing, imputed) | %d |  |", missingY),
	}
	for y := 1; y <= 3; y++ {
		want = append(want, fmt.Sprintf("| %d | %d | %.1f%% |", y, counts[y], 100*float64(counts[y])/float64(n)))
	}
	hasAll(t, "report.md", md, want...)
	// x2's mean over the rows where it and the outcome are observed, in
	// the last column (All) of the predictors by outcome category, with
	// the rows it counts.
	if m := regexp.MustCompile(`(?m)^\| x2 \|.* ([-0-9.]+) \([0-9.]+\), ([0-9]+) rows \|$`).FindStringSubmatch(md); m == nil || m[1] != fmt.Sprintf("%.3f", sumX2/float64(nX2)) || m[2] != fmt.Sprint(nX2) {
		t.Errorf("x2 over all observed rows: got %v, want mean %.3f over %d rows", m, sumX2/float64(nX2), nX2)
	}
	var dec struct {
		Outcomes []struct {
			Counts []float64 `json:"counts"`
		} `json:"outcomes"`
	}
	if err := json.Unmarshal(files["decisions.json"], &dec); err != nil || len(dec.Outcomes) != 1 {
		t.Fatalf("decisions.json: %v", err)
	}
	for y := 1; y <= 3; y++ {
		if got := dec.Outcomes[0].Counts[y-1]; got != float64(counts[y]) {
			t.Errorf("decisions.json counts[%d] = %g, want the observed %d", y-1, got, counts[y])
		}
	}
}

// TestChainedReportUnheldValues: normal draws outside the range the data
// dictionary declares (an age below 18) are counted and said in the
// report's imputation section and in decisions.json, with mean matching
// suggested; the invented data have many ages near the lower bound.
func TestChainedReportUnheldValues(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(12, 5))
	var b strings.Builder
	b.WriteString("y,age\n")
	for i := 0; i < 300; i++ {
		age := 18 + math.Round(72*math.Pow(rng.Float64(), 3))
		y := 1
		if rng.Float64() < 1/(1+math.Exp(1.5-0.04*age)) {
			y = 2
		}
		if rng.Float64() < 0.3 {
			y++
		}
		if rng.Float64() < 0.25 {
			fmt.Fprintf(&b, "%d,\n", y)
		} else {
			fmt.Fprintf(&b, "%d,%g\n", y, age)
		}
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: normal draws
seed: 5
data: {file: d.csv, missing: impute, imputation: {sets: 3, iterations: 2, column_models: {age: normal_draw}}}
outcomes: [{column: y}]
predictors: [age]
dictionary:
  age: {range: [18, 90], label: Age}
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr]}
rules:
  - choose: {by: bic}
`
	files := renderSource(t, dir, src, 2)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"Imputed values the data cannot hold (counted in the final sets; decisions.json gives the counts per column):",
		"%) are outside the range [18, 90] the data dictionary declares (dictionary.age): the analysis uses them as drawn; mean_matching, which imputes values observed in the data, keeps every imputed value among them")
	if !strings.Contains(string(files["decisions.json"]), `"outside_dictionary": `) {
		t.Errorf("decisions.json lacks the count:\n%s", files["decisions.json"])
	}
}

// TestChainedMethodsCountRowsKept: with frequency weights some of them
// missing, the Methods draft counts the rows imputation kept among the
// rows used (those missing a weight were dropped, as the sentence before
// says), the units the weights count apart, and lists by column only the
// imputed columns over the kept rows; every count is tallied here from
// the file the test wrote.
func TestChainedMethodsCountRowsKept(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(8, 4))
	var b strings.Builder
	b.WriteString("y,x1,x2,w\n")
	used, kept, keptX2, units, unitsKept := 0, 0, 0, 0, 0
	for i := 0; i < 240; i++ {
		y, x1, x2 := testsurvey.Report.Row(rng)
		x2s, w := fmt.Sprintf("%.5f", x2), 1+rng.IntN(3)
		ws := fmt.Sprint(w)
		missX2, missW := rng.Float64() < 0.2, rng.Float64() < 0.1
		if missX2 {
			x2s = ""
		}
		if missW {
			ws = ""
		}
		if !missW {
			used++
			units += w
			if missX2 {
				kept++
				keptX2++
				unitsKept += w
			}
		}
		fmt.Fprintf(&b, "%d,%.5f,%s,%s\n", y, x1, x2s, ws)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: imputed here
seed: 5
data: {file: d.csv, missing: impute, weights: w, imputation: {sets: 3, iterations: 2}}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
`
	files := renderSource(t, dir, src, 2)
	md := string(files["report.md"])
	want := fmt.Sprintf("The %d rows (%s of %d) with a missing value in the outcome or a predictor were kept (%d of the %d units the frequency weights count, each imputed on its own; missing by column: `x2` %d (%s)), and",
		kept, sharePct(kept, used), used, unitsKept, units, keptX2, sharePct(keptX2, used))
	// The section on imputation and the records count rows as the
	// Methods draft does, the units apart: rows_incomplete counted the
	// units, and the section called them rows.
	section := fmt.Sprintf("Of the %d rows, %d (%s) had a missing value in the outcome or a predictor column and were imputed rather than dropped (%d of the %d units the frequency weights count, each imputed on its own).",
		used, kept, sharePct(kept, used), unitsKept, units)
	hasAll(t, "report.md", md, want, section)
	// The table of imputation models counts units too, and says so: its
	// header said "Imputed" and "Share" alone.
	table := "| Column | Kind | Imputed units | Share of units | Model | Predictors |"
	x2Row := fmt.Sprintf("| `x2` | numeric | %d | %s |", unitsKept, sharePct(unitsKept, units))
	below := fmt.Sprintf("Imputed units and their share count the %d units the frequency weights count, each imputed on its own, not the %d rows.", units, used)
	hasAll(t, "report.md", md, table, x2Row, below)
	record := fmt.Sprintf("\"rows_incomplete\": %d,\n          \"units_incomplete\": %d,", kept, unitsKept)
	hasAll(t, "decisions.json", string(files["decisions.json"]), record)
	if regexp.MustCompile("missing by column: [^)]*`w`").MatchString(md) {
		t.Error("the Methods draft lists the weights among the imputed columns")
	}
}

// TestChainedRowsDroppedWholeSaid: on data imputed here, rows missing a
// weight are dropped whole, and the Data section and the limits say that
// this is a complete-case analysis of those rows, with what it assumes;
// without such rows the limits say nothing of it.
func TestChainedRowsDroppedWholeSaid(t *testing.T) {
	for _, missW := range []bool{true, false} {
		dir := t.TempDir()
		rng := rand.New(rand.NewPCG(8, 5))
		var b strings.Builder
		b.WriteString("y,x1,x2,w\n")
		for i := 0; i < 200; i++ {
			y, x1, x2 := testsurvey.Report.Row(rng)
			x2s, ws := fmt.Sprintf("%.5f", x2), fmt.Sprint(1+rng.IntN(3))
			if rng.Float64() < 0.2 {
				x2s = ""
			}
			if missW && i%10 == 0 {
				ws = ""
			}
			fmt.Fprintf(&b, "%d,%.5f,%s,%s\n", y, x1, x2s, ws)
		}
		os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
		src := `version: 1
title: imputed here
seed: 5
data: {file: d.csv, missing: impute, weights: w, imputation: {sets: 3, iterations: 2}}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
`
		md := string(renderSource(t, dir, src, 2)["report.md"])
		limit := "Rows missing a column that imputation does not fill (weights, offset, cluster, or a column the subset's conditions read) were dropped whole, as a complete-case analysis drops them (the Data section counts them): the estimates can be biased unless missing those is unrelated to the outcome given the predictors."
		if !missW {
			if strings.Contains(md, limit) || strings.Contains(md, "dropped whole") {
				t.Error("no row was dropped, yet the report says rows were dropped whole")
			}
			continue
		}
		hasAll(t, "report.md", md, limit, "and were dropped whole, as a complete-case analysis drops them (see Assumptions and limits), the ")
	}
}
