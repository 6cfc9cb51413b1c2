package render

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/jsonkeys"
)

// levelPairsData is an invented survey (seeded generator): 400 rows, a
// four-level site whose levels have characters Markdown and CSV give a
// meaning to, a numeric x, and a three-category outcome of a cumulative
// logit with site effects 0, 0.4, -0.3, 0.8 and slope 0.5.
func levelPairsData() string {
	rng := rand.New(rand.NewPCG(20261204, 43))
	sites := []string{"north", "a|b", "*star*", "c,d"}
	eff := []float64{0, 0.4, -0.3, 0.8}
	var b strings.Builder
	b.WriteString("y,site,x\n")
	for i := 0; i < 400; i++ {
		s := i % 4
		x := rng.NormFloat64()
		u := rng.Float64()
		z := eff[s] + 0.5*x + math.Log(u/(1-u))
		y := 1
		if z > -0.7 {
			y = 2
		}
		if z > 0.9 {
			y = 3
		}
		fmt.Fprintf(&b, "%d,\"%s\",%.4f\n", y, sites[s], x)
	}
	return b.String()
}

// levelPairsPlan writes levelPairsData to d.csv in a new folder and returns
// it with a plan of y on site and x whose inference section is inference
// (indented lines).
func levelPairsPlan(t *testing.T, inference string) (string, string) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(levelPairsData()), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir, `version: 1
title: pairs
data: {file: d.csv}
outcomes: [{column: y, categories: ["1", "2", "3"]}]
categorical:
  site: {levels: [north, "a|b", "*star*", "c,d"]}
predictors: [site, x]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
rules:
  - choose: {by: aic}
inference:
` + inference
}

// The report of inference.level_pairs: its section with both tables and
// the adjusted p-values, the methods sentence, table-level-pairs-*.csv,
// decisions.json's snake_case keys, level names shown as written, and the
// same bytes from a second run.
func TestLevelPairsReport(t *testing.T) {
	dir, src := levelPairsPlan(t, "  level_pairs: {predictors: [site], multiplicity: benjamini_hochberg}\n")
	files := renderSource(t, dir, src, 0)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"### Pairs of levels of site",
		"Every pair of the 4 levels of site (6 pairs)",
		`| \*star\* to c,d | 3 |`,
		`| a\|b to \*star\* | 1 |`,
		"| Change | Category | Difference | Std. error | z | p | p, Benjamini-Hochberg | 95% low | 95% high |",
		"| c,d against \\*star\\* | every boundary |",
		"Benjamini-Hochberg step-up correction (false discovery rate), within the pairs for one category",
		"Every pair of levels of site (6 pairs) was compared in the chosen model",
		"are not effects of changing a unit's level",
		"adjusted_p: the p-value adjusted within the predictor's pairs for one category or at one boundary, by the correction column adjustment names (holm, benjamini_hochberg, or none: adjusted_p empty; inference.level_pairs.multiplicity)")
	if strings.Contains(md, "adjusted by adjustment") {
		t.Error("report.md's list of files says the p-values are adjusted by adjustment")
	}
	csv := string(files["table-level-pairs-y.csv"])
	hasAll(t, "table-level-pairs-y.csv", csv,
		"predictor,kind,change,category,boundary,estimate,std_error,z,p,adjusted_p,adjustment,low_95,high_95,df\n",
		`site,average_marginal_effect,north to a|b,1,`,
		`site,odds_ratio,"c,d against *star*",,0,`)
	if n := strings.Count(csv, "\n"); n != 1+18+6 {
		t.Errorf("table-level-pairs-y.csv has %d lines, want 25", n)
	}
	if bad, err := jsonkeys.NotSnakeCase(files["decisions.json"], "estimates", "std_errors", "slopes", "final_verdicts", "phi"); err != nil || len(bad) > 0 {
		t.Errorf("decisions.json keys not in snake_case: %v %v", bad, err)
	}
	again := renderSource(t, dir, src, 2)
	for name, b := range files {
		if !bytes.Equal(b, again[name]) {
			t.Errorf("%s differs between two runs", name)
		}
	}
}

// The pairs of levels at the points of the marginal effects (means and the
// plan's profile): a section for each with its point (the paired column
// left out), what the differences mean, the adjustment, the profile's own
// level of the paired column said to be unused; rows of
// table-level-pairs-*.csv of kinds effect_at_means and effect_at_profile;
// decisions.json's at_points.
func TestLevelPairsAtPointsReport(t *testing.T) {
	dir, src := levelPairsPlan(t, "  marginal_effects: [average, means, profile]\n  profile: {x: 1.5, site: \"a|b\"}\n  level_pairs: {predictors: [site]}\n")
	files := renderSource(t, dir, src, 0)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"**Pairs at the means.** For the pair \"a to b\" the difference is the probability of each category predicted for one unit with site at b less that predicted with site at a, every other predictor at its mean over the rows used: x = ",
		"**Pairs at the plan's profile.**",
		"those it does not set at their means over the rows used (categorical ones at their reference level): x = 1.5.",
		"The profile's own level of site (a\\|b) is not used here: each pair sets site to its two levels.",
		"The pairs from the reference north are the marginal effects of site at the means above",
		"adjusted for the 6 pairs by Holm's step-down correction (family-wise error rate), within the pairs for one category at the plan's profile",
		"in the fitted association: it describes units like that point",
		".** Differences of predicted probabilities at the means between the levels of site\n",
		".** Differences of predicted probabilities at the plan's profile between the levels of site\n",
		"effect_at_means, effect_at_profile: the difference",
		"and by the difference of the probabilities predicted at the two levels with the other predictors held at the means and at the plan's profile",
		"for one category, averaged or at one point (odds ratios: at one boundary)")
	if n := strings.Count(md, "in the fitted association: it describes units like that point"); n != 1 {
		t.Errorf("what a difference at one point means is said %d times, want once", n)
	}
	csv := string(files["table-level-pairs-y.csv"])
	hasAll(t, "table-level-pairs-y.csv", csv,
		`site,effect_at_means,north to a|b,1,`,
		`site,effect_at_profile,"*star* to c,d",3,`)
	if n := strings.Count(csv, "\n"); n != 1+3*18+6 {
		t.Errorf("table-level-pairs-y.csv has %d lines, want 61", n)
	}
	dec := string(files["decisions.json"])
	hasAll(t, "decisions.json", dec, `"at_points": [`, `"kind": "means"`, `"adjusted_p": [`)
	if bad, err := jsonkeys.NotSnakeCase(files["decisions.json"], "estimates", "std_errors", "slopes", "final_verdicts", "phi"); err != nil || len(bad) > 0 {
		t.Errorf("decisions.json keys not in snake_case: %v %v", bad, err)
	}
}

// Pairs of levels of a predictor the dictionary says was assigned by
// chance (dictionary.site.assigned_by_chance, invented as a randomized
// site here) are read as effects of the assignment under the trial's
// conditions, in the section and in the Methods draft; without the key they
// are groups in the fitted association.
func TestLevelPairsAssignedByChance(t *testing.T) {
	dir, src := levelPairsPlan(t, "  marginal_effects: [average, means]\n  level_pairs: {predictors: [site]}\n")
	plain := string(renderSource(t, dir, src, 0)["report.md"])
	src += "dictionary:\n  site: {label: Site, assigned_by_chance: true}\n  x: {label: X}\n"
	md := string(renderSource(t, dir, src, 0)["report.md"])
	hasAll(t, "report.md (site assigned by chance)", md,
		"The levels of site were assigned to the units by chance (the plan's dictionary says so): under the trial's conditions these differences are what assigning one level rather than the other changed in the outcome",
		"and, the levels having been assigned by chance, it is what assigning one level rather than the other changed for such units under the trial's conditions.",
		"The levels of site were assigned to the units by chance, so under the trial's conditions these differences are effects of assigning one level rather than the other, provided the other predictors were measured before the assignment.",
		"other predictors as observed, provided those were measured before the assignment")
	for _, not := range []string{"They compare groups in the fitted association", "These are differences between groups in the fitted association", "it does not say what moving a unit"} {
		if strings.Contains(md, not) {
			t.Errorf("report.md of a site assigned by chance holds %q", not)
		}
		if !strings.Contains(plain, not) {
			t.Errorf("report.md without the key lacks %q", not)
		}
	}
}
