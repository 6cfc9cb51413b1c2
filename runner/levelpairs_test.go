package runner

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
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
func housingTwoCategories(t *testing.T) string { return housingBinary(t, nil) }

// housingBinary writes the housing data with satisfaction collapsed to two
// categories (y = 1 for high satisfaction, sat 3), infl's levels replaced
// by score (nil: kept as written).
func housingBinary(t *testing.T, score map[string]string) string {
	var b strings.Builder
	b.WriteString("y,infl,type,cont,freq\n")
	for _, r := range housingRows(t) {
		y, infl := "0", r[1]
		if r[0] == "3" {
			y = "1"
		}
		if score != nil {
			infl = score[infl]
		}
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s\n", y, infl, r[2], r[3], r[4])
	}
	return b.String()
}

// agreeWithR returns a check that a value agrees with R's to tol relative
// (to the larger of |R's value| and scale), and the largest relative
// difference it has seen.
func agreeWithR(t *testing.T, tol float64) (func(what string, got, want, scale float64), *float64) {
	worst := new(float64)
	return func(what string, got, want, scale float64) {
		t.Helper()
		d := math.Abs(got-want) / math.Max(math.Abs(want), scale)
		*worst = math.Max(*worst, d)
		if !(d <= tol) {
			t.Errorf("%s: got %.12g, R %.12g", what, got, want)
		}
	}, worst
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
// coefficients and vcov (testdata/rcheck/housingglm.R, then levelpairs.R). Measured agreement
// is logged; the limit is 1e-6 relative.
func TestLevelPairsAgainstGlm(t *testing.T) {
	rscript.Require(t)
	p := writePlan(t, fmt.Sprintf(levelPairsHousing, "y", `["0", "1"]`, "coding: treatment", "effects: [parallel]"), map[string]string{"d.csv": housingTwoCategories(t)})
	res := runPlan(t, p, 0)
	or := res.Outcomes[0]
	vals := rscript.Run(t, filepath.Dir(p.Path), "testdata/rcheck/housingglm.R", "testdata/rcheck/levelpairs.R")
	set := or.LevelPairs[0]
	if set.Predictor != "type" || set.Note != "" || set.Effects.Error != "" {
		t.Fatalf("pairs of type: %+v", set)
	}
	near, worst := agreeWithR(t, 1e-6)
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
	t.Logf("largest relative difference from R: %.2g", *worst)
}

const levelPairsAtPoints = `version: 1
title: pairs of levels at a point
data: {file: d.csv, weights: freq}
outcomes: [{column: y, categories: ["0", "1"]}]
categorical:
  type: {levels: [tower, apartment, atrium, terrace]}
  cont: {levels: [low, high]}
predictors: [infl, type, cont]
models:
  approaches: [cumulative]
  links: [logit]
  effects: [parallel]
rules:
  - choose: {by: aic}
inference:
  marginal_effects: [average, means, profile]
  profile: {infl: 2.5, cont: high, type: atrium}
  level_pairs: {predictors: [type]}
`

// TestLevelPairsAtPointsAgainstGlm checks the pairs of levels at the means
// and at a profile against base R's glm: with two categories the
// cumulative logit model is logistic regression, so on the published
// housing data (Madsen 1976, testdata/reference/housing_factors.csv)
// collapsed to high satisfaction against the rest (infl as its score 1, 2,
// 3; type: 4 levels; cont: 2; frequency weights) the difference of a pair
// (a, b) of type's levels at a point, for category 1, is exactly
// plogis(x_b'beta) - plogis(x_a'beta) from glm's coefficients, x_l the
// model row at the point with type at l; R computes its delta-method
// standard error from the gradient written out and glm's vcov
// (testdata/rcheck/housingglm.R, then levelpairspoints.R). The means point has infl at its
// weighted mean (checked against R's weighted.mean) and cont at its
// reference level; the profile's own level of type (atrium) is replaced by
// each level of the pair. Category 0 is the negative of category 1, with
// the same error. Measured agreement is logged; the limit is 1e-5 relative.
func TestLevelPairsAtPointsAgainstGlm(t *testing.T) {
	rscript.Require(t)
	p := writePlan(t, levelPairsAtPoints, map[string]string{"d.csv": housingBinary(t, map[string]string{"low": "1", "medium": "2", "high": "3"})})
	or := runPlan(t, p, 0).Outcomes[0]
	vals := rscript.Run(t, filepath.Dir(p.Path), "testdata/rcheck/housingglm.R", "testdata/rcheck/levelpairspoints.R")
	set := or.LevelPairs[0]
	if set.Predictor != "type" || set.Note != "" || len(set.AtPoints) != 2 {
		t.Fatalf("pairs of type: %+v", set)
	}
	near, worst := agreeWithR(t, 1e-5)
	for i, kind := range []string{"means", "profile"} {
		pt := set.AtPoints[i].Effects
		if pt.Kind != kind || pt.Error != "" || len(pt.Effects) != 12 {
			t.Fatalf("pairs at %s: %+v", kind, pt)
		}
		wantInfl, wantCont := vals.Scalar(t, "mean_infl"), "low"
		if kind == "profile" {
			wantInfl, wantCont = 2.5, "high"
		}
		near(kind+" point infl", pt.Point[0], wantInfl, 0)
		if pt.PointLevels[2] != wantCont {
			t.Errorf("%s: cont at %q, want %q", kind, pt.PointLevels[2], wantCont)
		}
		for _, e := range pt.Effects {
			a, b, _ := strings.Cut(e.Change, " to ")
			r := vals.Get(t, kind+"_"+a+"_"+b)
			sign := 1.0
			if e.Category == "0" {
				sign = -1
			}
			near(kind+" "+e.Change+" "+e.Category, e.Effect, sign*r[0], r[1])
			near(kind+" "+e.Change+" "+e.Category+" se", e.SE, r[1], 0)
		}
	}
	t.Logf("largest relative difference from R: %.2g", *worst)
}

// TestLevelPairsIdentities checks the pairs of levels on the housing data
// (three categories) in a model where type is nonparallel, against the
// program's own reference comparisons through exact identities: the pairs
// from the reference are the marginal effects (averaged, at the means, at
// the profile) and odds ratios against it, to the last bit; a pair (b, c)
// of other levels is the difference of their effects against the
// reference; the adjusted p-values are Holm's within each category's pairs
// (of one kind); and the pairs do not depend on the coding of the levels
// (treatment, sum or successive give the same model).
func TestLevelPairsIdentities(t *testing.T) {
	files := map[string]string{"d.csv": "sat,infl,type,cont,freq\n"}
	for _, r := range housingRows(t) {
		files["d.csv"] += strings.Join(r, ",") + "\n"
	}
	runWith := func(coding string) *OutcomeResult {
		src := strings.Replace(fmt.Sprintf(levelPairsHousing, "sat", `["1", "2", "3"]`, coding, "effects: [partial]\n  partial: {free: [type]}"),
			"inference:\n", "inference:\n  marginal_effects: [average, means, profile]\n  profile: {infl: high, type: atrium}\n", 1)
		p := writePlan(t, src, files)
		return runPlan(t, p, 0).Outcomes[0]
	}
	or := runWith("coding: treatment")
	if or.Chosen == nil || or.Chosen.ID != "cumulative/partial/logit" {
		t.Fatalf("chosen %v", or.Chosen)
	}
	set := or.LevelPairs[0]
	if len(set.AtPoints) != 2 || len(or.Marginal) != 3 {
		t.Fatalf("%d kinds of pairs at a point, %d of marginal effects", len(set.AtPoints), len(or.Marginal))
	}
	// kinds are the pairs of each kind, in the order of the marginal
	// effects, with their adjusted p-values.
	kinds := []PairsAtPoint{{Effects: set.Effects, Adjusted: set.EffectsAdjusted}, set.AtPoints[0], set.AtPoints[1]}
	for k, m := range or.Marginal {
		pairs := kinds[k].Effects.Effects
		if k > 0 && (kinds[k].Effects.Kind != m.Kind || !slices.Equal(kinds[k].Effects.Point, m.Point)) {
			t.Errorf("pairs %s at %v, marginal effects %s at %v", kinds[k].Effects.Kind, kinds[k].Effects.Point, m.Kind, m.Point)
		}
		ref := map[string]float64{}
		for _, e := range m.Effects {
			if e.Predictor == "type" {
				ref[e.Change+"/"+e.Category] = e.Effect
			}
		}
		fromRef := 0
		for _, e := range pairs {
			a, b, _ := strings.Cut(e.Change, " to ")
			if a == "tower" {
				for _, me := range m.Effects {
					if me.Predictor == "type" && me.Change == e.Change && me.Category == e.Category {
						fromRef++
						if me != e {
							t.Errorf("%s: %s, %s: pair %+v, marginal effect %+v", m.Kind, e.Change, e.Category, e, me)
						}
					}
				}
				continue
			}
			want := ref["tower to "+b+"/"+e.Category] - ref["tower to "+a+"/"+e.Category]
			if math.Abs(e.Effect-want) > 1e-13 {
				t.Errorf("%s: %s, %s: %.17g, effects against the reference give %.17g", m.Kind, e.Change, e.Category, e.Effect, want)
			}
		}
		if fromRef != 9 {
			t.Errorf("%s: %d pairs from the reference matched, want 9", m.Kind, fromRef)
		}
		// Holm within each category's six pairs.
		for _, cat := range []string{"1", "2", "3"} {
			var ps, adj []float64
			for e, x := range pairs {
				if x.Category == cat {
					ps, adj = append(ps, x.P), append(adj, kinds[k].Adjusted[e])
				}
			}
			for i, want := range HolmAdjust(ps) {
				if len(ps) != 6 || adj[i] != want {
					t.Errorf("%s, category %s: adjusted %v, Holm %v", m.Kind, cat, adj, HolmAdjust(ps))
					break
				}
			}
		}
	}
	// At the profile the pairs set type to each level, whatever level the
	// profile gives it: the profile's atrium is not used, and the point
	// names no level of type (decisions.json's point_levels).
	if got := set.AtPoints[1].Effects.PointLevels[1]; got != pairedLevel || set.AtPoints[1].Effects.Effects[0].Change != "tower to apartment" {
		t.Errorf("profile pairs at type %q from %q", got, set.AtPoints[1].Effects.Effects[0].Change)
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
			wantSets, gotSets := []MarginalSet{want.Effects}, []MarginalSet{got.Effects}
			for k := range want.AtPoints {
				wantSets, gotSets = append(wantSets, want.AtPoints[k].Effects), append(gotSets, got.AtPoints[k].Effects)
			}
			for k, ws := range wantSets {
				for i, w := range ws.Effects {
					g := gotSets[k].Effects[i]
					if g.Change != w.Change || !closeRel(g.Effect, w.Effect, 1e-6) || !closeRel(g.SE, w.SE, 1e-6) {
						t.Errorf("%s coding, %s: %s %s %s: %.10g (se %.10g), treatment coding %.10g (se %.10g)", coding, ws.Kind, want.Predictor, w.Change, w.Category, g.Effect, g.SE, w.Effect, w.SE)
					}
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
// Each pair's pooled difference, averaged or at the means, is Rubin's
// rules (impute.PoolScalar) on the differences the same plan gives on each
// set analysed alone (at the means: each set at its own means), and the
// pairs from the reference are the pooled marginal effects of the same
// kind.
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
	one := strings.Replace(fmt.Sprintf(levelPairsHousing, "sat", `["1", "2", "3"]`, "coding: treatment", "effects: [parallel]"),
		"inference:\n", "inference:\n  marginal_effects: [average, means]\n", 1)
	src := strings.Replace(one, "data: {file: d.csv, weights: freq}", "data: {file: orig.csv, weights: freq, imputed: {file: stacked.csv, column: imp}}", 1)
	p := writePlan(t, src, map[string]string{"orig.csv": orig, "stacked.csv": stacked})
	pooled := runPlan(t, p, 0).Outcomes[0]
	if pooled.Imputed == nil || pooled.Chosen == nil {
		t.Fatal("not analysed as imputed data")
	}
	var each []*OutcomeResult
	for k := range sets {
		pk := writePlan(t, one, map[string]string{"d.csv": sets[k]})
		each = append(each, runPlan(t, pk, 0).Outcomes[0])
	}
	dfc := completeDF(pooled.Imputed.obs, pooled.Chosen.Result.NParams, nil).DF
	// kindsOf is a predictor's pairs of each kind: averaged, at the means.
	kindsOf := func(set LevelPairSet) []MarginalSet {
		if len(set.AtPoints) != 1 {
			t.Fatalf("%s: %d kinds of pairs at a point, want 1", set.Predictor, len(set.AtPoints))
		}
		return []MarginalSet{set.Effects, set.AtPoints[0].Effects}
	}
	for s, set := range pooled.LevelPairs {
		for kind, ps := range kindsOf(set) {
			if ps.Error != "" || len(ps.Pooling) != len(ps.Effects) {
				t.Fatalf("%s: %+v", set.Predictor, ps)
			}
			for e, x := range ps.Effects {
				q, u := make([]float64, len(each)), make([]float64, len(each))
				for k, o := range each {
					y := kindsOf(o.LevelPairs[s])[kind].Effects[e]
					q[k], u[k] = y.Effect, y.SE*y.SE
				}
				sc, err := impute.PoolScalar(q, u, dfc)
				if err != nil {
					t.Fatal(err)
				}
				lo, hi, pv := sc.Interval(0.95)
				if !closeRel(x.Effect, sc.Estimate, 1e-7) || !closeRel(x.SE, sc.SE, 1e-7) || !closeRel(x.P, pv, 1e-6) || !closeRel(x.Low, lo, 1e-7) || !closeRel(x.High, hi, 1e-7) {
					t.Errorf("%s %s %s, %s: pooled %.10g (se %.10g, p %.6g), Rubin's rules on the sets %.10g (se %.10g, p %.6g)", ps.Kind, set.Predictor, x.Change, x.Category, x.Effect, x.SE, x.P, sc.Estimate, sc.SE, pv)
				}
			}
			m := pooled.Marginal[kind]
			if kind > 0 && !slices.Equal(m.Point, ps.Point) {
				t.Errorf("pairs at %v, pooled marginal effects at %v", ps.Point, m.Point)
			}
			matched := 0
			for e, me := range m.Effects {
				for f, x := range ps.Effects {
					if me.Predictor == set.Predictor && me.Change == x.Change && me.Category == x.Category {
						matched++
						a, b := m.Pooling[e], ps.Pooling[f]
						if me != x || a.Name != b.Name || a.Total != b.Total || a.FMI != b.FMI || (a.DF == nil) != (b.DF == nil) || a.DF != nil && *a.DF != *b.DF {
							t.Errorf("%s: pair %+v, pooled marginal effect %+v", x.Change, x, me)
						}
					}
				}
			}
			if want := 3 * (len(set.Levels) - 1); matched != want {
				t.Errorf("%s %s: %d pairs from the reference matched, want %d", m.Kind, set.Predictor, matched, want)
			}
		}
	}
}

func slicesClone(s []string) []string { return append([]string(nil), s...) }
