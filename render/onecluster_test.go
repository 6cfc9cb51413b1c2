package render

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// siteData writes d.csv into dir: invented (seeded) four-category y from
// a cumulative logit in x and the site (a..h, 60 rows each), with c a copy
// of the site column (the clusters); x is missing in about the share
// missing of the rows.
func siteData(t *testing.T, dir string, missing float64) {
	t.Helper()
	rng := rand.New(rand.NewPCG(2026, 1205))
	var b strings.Builder
	b.WriteString("y,x,site,c\n")
	for s := range 8 {
		for range 60 {
			x, u := rng.NormFloat64(), rng.Float64()
			eta := 0.7*x + 0.1*float64(s%4) - 0.15
			y := 1
			for _, cut := range []float64{-1, 0, 1} {
				if math.Log(u/(1-u))+eta > cut {
					y++
				}
			}
			id := "abcdefgh"[s : s+1]
			xs := fmt.Sprintf("%.4f", x)
			if rng.Float64() < missing {
				xs = ""
			}
			fmt.Fprintf(&b, "%d,%s,%s,%s\n", y, xs, id, id)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

const sitePlan = `version: 1
data: {file: d.csv, cluster: c}
outcomes: [{column: y}]
categorical: {site: {levels: [a, b, c, d, e, f, g, h]}}
predictors: [x, site]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [wald, lr]}
rules:
  - choose: {by: aic}
covariance: clustered
inference:
  hypotheses: ["x = 0", "site = 0"]
  marginal_effects: [average, means]
`

// TestNotEstimableReadsOnce: with site fixed effects under errors
// clustered by a copy of the site column (every site, the reference too,
// one cluster: the thresholds and the site effects are not estimable), a
// table of tests says "not computed (clustered errors, see below)" in each
// cell such a test has and the reason once below the table, never in a
// cell; the tables of marginal effects and predictions, n/a throughout
// (an average runs over every site's effect), say why in one sentence;
// the table of odds ratios, n/a for the sites' intervals, has below it the
// warning the table of estimates has above it, in the same words.
func TestNotEstimableReadsOnce(t *testing.T) {
	dir := t.TempDir()
	siteData(t, dir, 0)
	md := string(renderSource(t, dir, sitePlan, 1)["report.md"])
	hasAll(t, "report.md", md,
		"| Wald (all predictors) |  |  | not computed (clustered errors, see below) |",
		"| site | (alone) | not computed (clustered errors, see below) |",
		"\n\nNot computed (clustered errors): the standard errors of tau[1], tau[2], tau[3], site.b",
		"The effects marked n/a have no standard error, test or interval because they depend on parameters of cumulative/parallel/logit whose clustered standard errors are not estimable (see the warning under the chosen model): an average runs over every row used, the rows those parameters describe (a level met in one cluster, a cluster's own effect) among them",
		"The effects marked n/a have no standard error, test or interval because at this point they depend on parameters of cumulative/parallel/logit",
		"An error shown as n/a is not available: at that point the prediction depends on parameters of cumulative/parallel/logit")
	for _, line := range strings.Split(md, "\n") {
		if strings.HasPrefix(line, "|") && strings.Contains(line, "are not estimable under clustered errors") {
			t.Errorf("report.md: a table cell gives the whole reason: %s", line)
		}
	}
	// The odds ratios of the site levels have n/a intervals, x's has
	// numbers; below the table the estimates' warning, word for word.
	between := func(s, from, to string) string {
		t.Helper()
		i := strings.Index(s, from)
		if i < 0 {
			t.Fatalf("report.md: no %q", from)
		}
		j := strings.Index(s[i+len(from):], to)
		if j < 0 {
			t.Fatalf("report.md: nothing after %q ends with %q", from, to)
		}
		return s[i : i+len(from)+j]
	}
	warn := between(md, "**Warning:** in cumulative/parallel/logit, the standard errors of", "\n")
	odds := between(md, "Cumulative odds ratios of the chosen model", "\n#")
	table := between(odds, "\n|", "\n\n")
	hasAll(t, "report.md (odds ratios)", table, "| site.b | b against a | every boundary | ", " | n/a | n/a |")
	if x := between(table, "\n| x | ", "\n"); strings.Contains(x, "n/a") {
		t.Errorf("x's odds ratio has an n/a interval:\n%s", table)
	}
	if !strings.Contains(odds, table+"\n\n"+warn+"\n") {
		t.Errorf("report.md: the odds-ratio table is not followed by the estimates' warning %q:\n%s", warn, odds)
	}
	// Hypotheses: "site = 0" is not computed in both models, each with
	// its own parameters: the reasons below the table name their models.
	hasAll(t, "report.md (hypotheses)", md,
		"Not computed (clustered errors) in cumulative/parallel/logit: the standard errors of",
		"Not computed (clustered errors) in cumulative/nonparallel/logit: the standard errors of")
	// The x = 0 rows are computed.
	if !strings.Contains(md, "| `x = 0` |") {
		t.Error("report.md: no row of x = 0")
	}
	// Without clusters none of it is said.
	plain := string(renderSource(t, dir, strings.NewReplacer("data: {file: d.csv, cluster: c}", "data: {file: d.csv}", "covariance: clustered\n", "").Replace(sitePlan), 1)["report.md"])
	for _, s := range []string{"clustered errors", "marked n/a", "shown as n/a"} {
		if strings.Contains(plain, s) {
			t.Errorf("report.md without clusters says %q", s)
		}
	}
}

// TestPooledNotEstimableTable: on imputed data (data.missing: impute) the
// table of the pooling gives n/a for every figure of a parameter the
// clustered errors cannot estimate (the estimate stands), numbers for the
// others; the numbers themselves are checked against Rubin's rules by
// runner's TestPooledNotEstimable.
func TestPooledNotEstimableTable(t *testing.T) {
	dir := t.TempDir()
	siteData(t, dir, 0.2)
	src := strings.Replace(sitePlan, "data: {file: d.csv, cluster: c}", "data: {file: d.csv, cluster: c, missing: impute, imputation: {sets: 3, iterations: 2}}", 1)
	src = strings.Replace(src, "effects: [parallel, nonparallel]", "effects: [parallel]", 1)
	md := string(renderSource(t, dir, "seed: 3\n"+src, 1)["report.md"])
	hasAll(t, "report.md", md, "| Parameter | Estimate | Within SD | Between SD | SE | df | RIV | λ | FMI |")
	rows := 0
	for _, line := range strings.Split(md, "\n") {
		cells := strings.Split(line, " | ")
		if len(cells) != 9 || !strings.HasPrefix(line, "| ") {
			continue
		}
		name := strings.TrimPrefix(cells[0], "| ")
		marked := strings.HasPrefix(name, "tau") || strings.HasPrefix(name, "site")
		if !marked && !strings.HasPrefix(name, "x") {
			continue
		}
		rows++
		for i, c := range cells[2:] {
			c = strings.TrimSuffix(c, " |")
			if (c == "n/a") != marked {
				t.Errorf("pooling table, %s, column %d: %q", name, i+3, c)
			}
		}
	}
	if rows != 11 {
		t.Errorf("%d rows of the pooling table read, want 11 (3 thresholds, x, the 7 sites other than the reference)", rows)
	}
}

// TestNewRowsNotEstimable: the predictions of new rows that depend on
// parameters whose clustered standard errors are not estimable (here
// the thresholds and every site, each site one cluster) have empty
// errors and intervals in the predictions file, and the report says which
// lines and why, once.
func TestNewRowsNotEstimable(t *testing.T) {
	dir := t.TempDir()
	siteData(t, dir, 0)
	if err := os.WriteFile(filepath.Join(dir, "new.csv"), []byte("x,site\n0.5,a\n-1,c\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := renderSource(t, dir, strings.Replace(sitePlan, "  marginal_effects: [average, means]\n", "  marginal_effects: [average]\n  predict: new.csv\n", 1), 1)
	md := string(out["report.md"])
	hasAll(t, "report.md", md, "2 of the 2 rows (lines 2, 3 of the file) have no standard error or interval (empty cells in `predictions-y.csv`): at their values the prediction depends on parameters of cumulative/parallel/logit whose clustered standard errors are not estimable")
	if _, ok := out["predictions-y.csv"]; !ok {
		t.Fatal("no predictions-y.csv")
	}
}
