package runner

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/refdata"
	"ordplan/internal/rscript"
	"ordplan/runner/impute"
)

// housingRows reads the published Copenhagen housing data
// (testdata/reference/housing_factors.csv: Madsen 1976, see its README) as
// lines of sat, infl, type, cont, freq.
func housingRows(t *testing.T) [][]string {
	t.Helper()
	b, err := os.ReadFile(refdata.Path("housing_factors.csv"))
	if err != nil {
		t.Fatal(err)
	}
	var out [][]string
	for i, l := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		if i > 0 {
			out = append(out, strings.Split(strings.TrimSpace(l), ","))
		}
	}
	return out
}

// housingTwoCategories writes the housing data with satisfaction collapsed
// to two categories: y = 1 for high satisfaction (sat 3), 0 otherwise.
func housingTwoCategories(t *testing.T) string {
	var b strings.Builder
	b.WriteString("y,infl,type,cont,freq\n")
	for _, r := range housingRows(t) {
		y := "0"
		if r[0] == "3" {
			y = "1"
		}
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s\n", y, r[1], r[2], r[3], r[4])
	}
	return b.String()
}

const levelPairsHousing = `version: 1
title: pairs of levels
data: {file: d.csv, weights: freq}
outcomes: [{column: %s, categories: %s}]
categorical:
  infl: {levels: [low, medium, high]}
  type: {levels: [tower, apartment, atrium, terrace], %s}
  cont: {levels: [low, high]}
predictors: [infl, type, cont]
models:
  approaches: [cumulative]
  links: [logit]
  %s
rules:
  - choose: {by: aic}
inference:
  level_pairs: {predictors: [type, infl]}
`

// TestLevelPairsAgainstGlm checks the pairs of levels against base R's glm:
// with two categories the cumulative logit model is logistic regression,
// so on the housing data collapsed to high satisfaction against the rest
// (type: 4 levels, infl: 3, cont: 2; frequency weights) the difference of
// average marginal effects of each pair of type's levels is, exactly, the
// weighted mean of glm's fitted probabilities with every row's type set to
// b less that with it set to a; R computes its delta-method standard error
// with a numerical gradient of that function of glm's coefficients and
// vcov, and the log odds ratio of b against a and its error from the
// coefficients and vcov (testdata/rcheck/levelpairs.R). Measured agreement
// is logged; the limit is 1e-6 relative.
func TestLevelPairsAgainstGlm(t *testing.T) {
	rscript.Require(t)
	p := writePlan(t, fmt.Sprintf(levelPairsHousing, "y", `["0", "1"]`, "coding: treatment", "effects: [parallel]"), map[string]string{"d.csv": housingTwoCategories(t)})
	res := runPlan(t, p, 0)
	or := res.Outcomes[0]
	vals := rscript.Run(t, filepath.Dir(p.Path), "testdata/rcheck/levelpairs.R")
	set := or.LevelPairs[0]
	if set.Predictor != "type" || set.Note != "" || set.Effects.Error != "" {
		t.Fatalf("pairs of type: %+v", set)
	}
	worst := 0.0
	near := func(what string, got, want, scale float64) {
		t.Helper()
		d := math.Abs(got-want) / math.Max(math.Abs(want), scale)
		worst = math.Max(worst, d)
		if !(d <= 1e-6) {
			t.Errorf("%s: got %.12g, R %.12g", what, got, want)
		}
	}
	seen := 0
	for _, e := range set.Effects.Effects {
		if e.Category != "1" {
			continue
		}
		a, b, _ := strings.Cut(e.Change, " to ")
		r := vals.Get(t, "pair_"+a+"_"+b)
		near(e.Change+" effect", e.Effect, r[0], r[1])
		near(e.Change+" se", e.SE, r[1], 0)
		seen++
	}
	for _, o := range set.OddsRatios {
		b, a, _ := strings.Cut(o.Change, " against ")
		r := vals.Get(t, "pair_"+a+"_"+b)
		near(o.Change+" log odds ratio", o.Log, r[2], r[3])
		near(o.Change+" log odds ratio se", o.LogSE, r[3], 0)
		seen++
	}
	if seen != 12 {
		t.Errorf("%d pairs compared, want 6 effects and 6 odds ratios", seen)
	}
	t.Logf("largest relative difference from R: %.2g", worst)
}

// TestLevelPairsIdentities checks the pairs of levels on the housing data
// (three categories) in a model where type is nonparallel, against the
// program's own reference comparisons through exact identities: the pairs
// from the reference are the average marginal effects and odds ratios
// against it, to the last bit; a pair (b, c) of other levels is the
// difference of their effects against the reference; the adjusted p-values
// are Holm's within each category's pairs; and the pairs do not depend on
// the coding of the levels (treatment, sum or successive give the same
// model).
func TestLevelPairsIdentities(t *testing.T) {
	files := map[string]string{"d.csv": "sat,infl,type,cont,freq\n"}
	for _, r := range housingRows(t) {
		files["d.csv"] += strings.Join(r, ",") + "\n"
	}
	runWith := func(coding string) *OutcomeResult {
		p := writePlan(t, fmt.Sprintf(levelPairsHousing, "sat", `["1", "2", "3"]`, coding, "effects: [partial]\n  partial: {free: [type]}"), files)
		return runPlan(t, p, 0).Outcomes[0]
	}
	or := runWith("coding: treatment")
	if or.Chosen == nil || or.Chosen.ID != "cumulative/partial/logit" {
		t.Fatalf("chosen %v", or.Chosen)
	}
	set := or.LevelPairs[0]
	ref := map[string]float64{}
	for _, m := range or.Marginal {
		if m.Kind != "average" {
			continue
		}
		for _, e := range m.Effects {
			if e.Predictor == "type" {
				ref[e.Change+"/"+e.Category] = e.Effect
			}
		}
		fromRef := 0
		for _, e := range set.Effects.Effects {
			a, b, _ := strings.Cut(e.Change, " to ")
			if a == "tower" {
				for _, me := range m.Effects {
					if me.Predictor == "type" && me.Change == e.Change && me.Category == e.Category {
						fromRef++
						if me != e {
							t.Errorf("%s, %s: pair %+v, marginal effect %+v", e.Change, e.Category, e, me)
						}
					}
				}
				continue
			}
			want := ref["tower to "+b+"/"+e.Category] - ref["tower to "+a+"/"+e.Category]
			if math.Abs(e.Effect-want) > 1e-13 {
				t.Errorf("%s, %s: %.17g, effects against the reference give %.17g", e.Change, e.Category, e.Effect, want)
			}
		}
		if fromRef != 9 {
			t.Errorf("%d pairs from the reference matched, want 9", fromRef)
		}
	}
	// Odds ratios against the reference: the odds-ratio table's.
	tab, err := OddsRatios(or.Chosen.Result, or.ColumnReadings(), 0.95)
	if err != nil {
		t.Fatal(err)
	}
	matched := 0
	for _, o := range set.OddsRatios {
		if o.Boundary == 0 {
			t.Errorf("type is nonparallel, got a pair at every boundary: %+v", o)
		}
		for _, x := range tab.Rows {
			if x.Change == o.Change && x.Boundary == o.Boundary {
				matched++
				if x.Log != o.Log || x.LogSE != o.LogSE || x.Low != o.Low || x.High != o.High {
					t.Errorf("%s at %d: pair %+v, odds ratio %+v", o.Change, o.Boundary, o.OddsRatio, x.OddsRatio)
				}
			}
		}
	}
	if matched != 6 || len(set.OddsRatios) != 12 {
		t.Errorf("%d of %d odds ratios matched the table, want 6 of 12", matched, len(set.OddsRatios))
	}
	// Holm within each category's six pairs.
	for _, cat := range []string{"1", "2", "3"} {
		var ps, adj []float64
		for e, x := range set.Effects.Effects {
			if x.Category == cat {
				ps, adj = append(ps, x.P), append(adj, set.EffectsAdjusted[e])
			}
		}
		for i, want := range HolmAdjust(ps) {
			if len(ps) != 6 || adj[i] != want {
				t.Errorf("category %s: adjusted %v, Holm %v", cat, adj, HolmAdjust(ps))
				break
			}
		}
	}
	// The covariance matters: the error of a difference is not that of
	// independent effects.
	seOf := map[string]float64{}
	for _, e := range set.Effects.Effects {
		seOf[e.Change+"/"+e.Category] = e.SE
	}
	e := set.Effects.Effects[9] // apartment to atrium, category 1
	indep := math.Hypot(seOf["tower to apartment/1"], seOf["tower to atrium/1"])
	if e.Change != "apartment to atrium" || math.Abs(e.SE-indep) < 0.05*indep {
		t.Errorf("%s: se %.5g, as if independent %.5g", e.Change, e.SE, indep)
	}
	// Other codings of type: the same model, the same pairs.
	for _, coding := range []string{"coding: sum", "coding: successive, ordered: true"} {
		other := runWith(coding)
		for s, want := range or.LevelPairs {
			got := other.LevelPairs[s]
			for i, w := range want.Effects.Effects {
				g := got.Effects.Effects[i]
				if g.Change != w.Change || !closeRel(g.Effect, w.Effect, 1e-6) || !closeRel(g.SE, w.SE, 1e-6) {
					t.Errorf("%s coding: %s %s %s: %.10g (se %.10g), treatment coding %.10g (se %.10g)", coding, want.Predictor, w.Change, w.Category, g.Effect, g.SE, w.Effect, w.SE)
				}
			}
			for i, w := range want.OddsRatios {
				g := got.OddsRatios[i]
				if g.Change != w.Change || g.Boundary != w.Boundary || !closeRel(g.Log, w.Log, 1e-6) || !closeRel(g.LogSE, w.LogSE, 1e-6) {
					t.Errorf("%s coding: %s %s at %d: log %.10g (se %.10g), treatment coding %.10g (se %.10g)", coding, want.Predictor, w.Change, w.Boundary, g.Log, g.LogSE, w.Log, w.LogSE)
				}
			}
		}
	}
}

// TestLevelPairsPooled checks the pairs of levels on multiply imputed data:
// the housing data (three categories) with type missing in some rows and
// three imputed sets (each missing type given a level by a fixed rule).
// Each pair's pooled difference is Rubin's rules (impute.PoolScalar) on
// the differences the same plan gives on each set analysed alone, and the
// pairs from the reference are the pooled average marginal effects.
func TestLevelPairsPooled(t *testing.T) {
	levels := []string{"tower", "apartment", "atrium", "terrace"}
	rows := housingRows(t)
	missing := map[int]bool{3: true, 17: true, 30: true, 44: true, 58: true, 66: true}
	head := "sat,infl,type,cont,freq"
	orig := head + "\n"
	stacked := "imp," + head + "\n"
	sets := make([]string, 3)
	for k := range sets {
		sets[k] = head + "\n"
	}
	for i, r := range rows {
		c := slicesClone(r)
		if missing[i] {
			c[2] = ""
		}
		orig += strings.Join(c, ",") + "\n"
		for k := range sets {
			if missing[i] {
				c[2] = levels[(i+k)%4]
			}
			sets[k] += strings.Join(c, ",") + "\n"
			stacked += fmt.Sprint(k+1) + "," + strings.Join(c, ",") + "\n"
		}
	}
	src := strings.Replace(fmt.Sprintf(levelPairsHousing, "sat", `["1", "2", "3"]`, "coding: treatment", "effects: [parallel]"),
		"data: {file: d.csv, weights: freq}", "data: {file: orig.csv, weights: freq, imputed: {file: stacked.csv, column: imp}}", 1)
	p := writePlan(t, src, map[string]string{"orig.csv": orig, "stacked.csv": stacked})
	pooled := runPlan(t, p, 0).Outcomes[0]
	if pooled.Imputed == nil || pooled.Chosen == nil {
		t.Fatal("not analysed as imputed data")
	}
	var each []*OutcomeResult
	for k := range sets {
		pk := writePlan(t, fmt.Sprintf(levelPairsHousing, "sat", `["1", "2", "3"]`, "coding: treatment", "effects: [parallel]"), map[string]string{"d.csv": sets[k]})
		each = append(each, runPlan(t, pk, 0).Outcomes[0])
	}
	dfc := completeDF(pooled.Imputed.obs, pooled.Chosen.Result.NParams)
	for s, set := range pooled.LevelPairs {
		if set.Effects.Error != "" || len(set.Effects.Pooling) != len(set.Effects.Effects) {
			t.Fatalf("%s: %+v", set.Predictor, set.Effects)
		}
		for e, x := range set.Effects.Effects {
			q, u := make([]float64, len(each)), make([]float64, len(each))
			for k, o := range each {
				y := o.LevelPairs[s].Effects.Effects[e]
				q[k], u[k] = y.Effect, y.SE*y.SE
			}
			sc, err := impute.PoolScalar(q, u, dfc)
			if err != nil {
				t.Fatal(err)
			}
			lo, hi, pv := sc.Interval(0.95)
			if !closeRel(x.Effect, sc.Estimate, 1e-7) || !closeRel(x.SE, sc.SE, 1e-7) || !closeRel(x.P, pv, 1e-6) || !closeRel(x.Low, lo, 1e-7) || !closeRel(x.High, hi, 1e-7) {
				t.Errorf("%s %s, %s: pooled %.10g (se %.10g, p %.6g), Rubin's rules on the sets %.10g (se %.10g, p %.6g)", set.Predictor, x.Change, x.Category, x.Effect, x.SE, x.P, sc.Estimate, sc.SE, pv)
			}
		}
		for _, m := range pooled.Marginal {
			for e, me := range m.Effects {
				for f, x := range set.Effects.Effects {
					if m.Kind == "average" && me.Predictor == set.Predictor && me.Change == x.Change && me.Category == x.Category {
						a, b := m.Pooling[e], set.Effects.Pooling[f]
						if me != x || a.Name != b.Name || a.Total != b.Total || a.FMI != b.FMI || (a.DF == nil) != (b.DF == nil) || a.DF != nil && *a.DF != *b.DF {
							t.Errorf("%s: pair %+v, pooled marginal effect %+v", x.Change, x, me)
						}
					}
				}
			}
		}
	}
}

func slicesClone(s []string) []string { return append([]string(nil), s...) }
