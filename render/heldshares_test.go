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

// TestHeldSharesSaid: marginal effects and differences of levels at the
// means, and at a profile that does not set a 0/1 column, hold that
// column at its share of rows at 1; the report says so beside each of
// them, with the share, and names the average marginal effects as the
// reading to prefer (above, or how to ask for them when the plan leaves
// them out); a profile that sets the column to 1 holds no share and says
// nothing. Invented data (seeded): 300 rows, a three-level site, x ~ N(0,
// 1), a 0/1 treated column with 1 in 2 rows of 5 (share 0.4), and a
// three-category outcome of a cumulative logit.
func TestHeldSharesSaid(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 18))
	var b strings.Builder
	b.WriteString("y,site,x,treated\n")
	for i := range 300 {
		site, x, tr := []string{"a", "b", "c"}[i%3], rng.NormFloat64(), 0
		if i%5 < 2 {
			tr = 1
		}
		u := rng.Float64()
		z := 0.3*float64(i%3) + 0.5*x + 0.7*float64(tr) + math.Log(u/(1-u))
		y := 1
		if z > -0.5 {
			y = 2
		}
		if z > 1 {
			y = 3
		}
		fmt.Fprintf(&b, "%d,%s,%.4f,%d\n", y, site, x, tr)
	}
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	plan := func(inference string) string {
		return "version: 1\ntitle: shares\ndata: {file: d.csv}\noutcomes: [{column: y}]\ncategorical:\n  site: {levels: [a, b, c]}\npredictors: [site, x, treated]\n" +
			"models: {approaches: [cumulative], effects: [parallel], links: [logit]}\nrules:\n  - choose: {by: aic}\ninference:\n" + inference
	}
	const held = "At this point the column `treated`, which holds only 0 and 1, is held at its mean, the share of rows at 1 (treated 0.4): no row of the data has such a value"
	md := string(renderSource(t, dir, plan("  marginal_effects: [average, means, profile]\n  profile: {x: 1}\n  level_pairs: {predictors: [site]}\n"), 0)["report.md"])
	hasAll(t, "report.md", md,
		held+", so these effects are those of no one who exists and, the model not being linear, not the mix of the effects at 0 and at 1 in those shares either (the effect of such a column itself sets it to 0 and to 1 at this point). The average marginal effects above, each row's own effect at its own values averaged over the rows used, are the reading to prefer",
		held+", so these differences are those of no one who exists",
		"The average differences above, each row's own difference")
	// means, profile (effects) and means, profile (pairs): four notes.
	if n := strings.Count(md, held); n != 4 {
		t.Errorf("the held share is said %d times, want 4 (effects and pairs at the means and at the profile)", n)
	}
	md = string(renderSource(t, dir, plan("  marginal_effects: [means, profile]\n  profile: {x: 1, treated: 1}\n"), 0)["report.md"])
	hasAll(t, "report.md without average effects", md, "Average marginal effects (`inference.marginal_effects: [average]`, the default, which this plan leaves out)")
	if n := strings.Count(md, held); n != 1 {
		t.Errorf("with the profile setting treated to 1 the held share is said %d times, want 1 (at the means only)", n)
	}
	// The same column coded 1 and 2 is held at its mean, 1.4, a value no
	// row has either: said alike, with its values; and as the focus of
	// the predictions it is drawn at its two values, as a 0/1 focus at 0
	// and 1, not over evenly spaced values between them.
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	for i := range lines {
		if i == 0 {
			lines[i] = strings.Replace(lines[i], "treated", "arm", 1)
		} else {
			lines[i] = lines[i][:len(lines[i])-1] + string(lines[i][len(lines[i])-1]+1)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	src := strings.Replace(plan("  marginal_effects: [average, means]\n"), "predictors: [site, x, treated]", "predictors: [site, x, arm]", 1)
	md = string(renderSource(t, dir, src, 0)["report.md"])
	hasAll(t, "report.md, a column of 1 and 2", md,
		"At this point the column `arm`, which holds only 1 and 2, is held at its mean (arm 1.4): no row of the data has such a value, so these effects are those of no one who exists and, the model not being linear, not the mix of the effects at its two values in those shares either (the effect of such a column itself sets it to its lower and its higher value at this point)",
		"In these predictions the column `arm`, which holds only 1 and 2, is held at its mean (arm 1.4)",
		"To compare the predictions at each value of such a column, declare it under categorical")
	md = string(renderSource(t, dir, strings.Replace(src, "rules:", "report: {focus_predictor: arm}\nrules:", 1), 0)["report.md"])
	hasAll(t, "report.md, a focus of 1 and 2", md, "when `arm` is 1 and 2, with", "| 1.00 |", "| 2.00 |", "each bar is the whole distribution at one value")
}
