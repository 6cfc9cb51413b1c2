package runner

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/plan"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// Comparisons between every pair of levels of a categorical predictor
// (the plan's inference.level_pairs), in the chosen model. The levels are
// listed reference first, then the other kept levels in their declared
// order, and pair (a, b) is taken for a before b in that list: so the
// first pairs are the reference against each level, the same computation
// (and the same numbers) as the marginal effects and odds ratios against
// the reference, and a pair of two other levels b, c is the difference of
// their effects against the reference: effect(c) - effect(b).

// LevelPairSet is the comparisons between the pairs of levels of one
// categorical predictor in the chosen model.
type LevelPairSet struct {
	Predictor string `json:"predictor"`
	// Levels are the kept levels, reference first.
	Levels []string `json:"levels"`
	// Effects are the differences of average marginal effects, change "a
	// to b": the probability of each category with every row's predictor
	// at b less that with it at a, averaged over the rows used, the other
	// predictors as observed; pooled over imputed sets as the marginal
	// effects are (Effects.Pooling).
	Effects MarginalSet `json:"average_marginal_effects"`
	// EffectsAdjusted are the p-values of Effects adjusted for
	// multiplicity within each category's pairs (nil when not adjusted).
	EffectsAdjusted []float64 `json:"average_marginal_effects_adjusted_p,omitempty"`
	// AtPoints are the same differences at one point, for each kind of
	// marginal effects at a point the plan asks for (means, profile; in the
	// order of inference.marginal_effects; none otherwise).
	AtPoints []PairsAtPoint `json:"at_points,omitempty"`
	// OddsRatios are exp of the difference of the two levels' log odds
	// (logit link; empty otherwise), change "b against a".
	OddsRatios []PairOddsRatio `json:"odds_ratios,omitempty"`
	// OddsRatioNote says why there are no odds ratios, when the link is
	// the logit and there are none.
	OddsRatioNote string `json:"odds_ratio_note,omitempty"`
	// Multiplicity is the correction of the p-values within each family
	// (none, holm, benjamini_hochberg); Family the number of pairs.
	Multiplicity string `json:"multiplicity"`
	Family       int    `json:"pairs"`
	// Note says why no pair was computed (fewer than three levels kept,
	// no term of its own).
	Note string `json:"note,omitempty"`
}

// PairsAtPoint is the differences between every pair of levels of one
// categorical predictor at one point: the probability of each category
// with the predictor at b less that with it at a, the other predictors at
// the point of the marginal effects of the same kind (Effects.Kind: means,
// profile; Effects.Point and PointLevels, where the paired column's own
// entry is replaced by each level in turn: its entry of PointLevels is
// pairedLevel). On imputed data pooled over
// the sets, each set at its own point, as those marginal effects are.
type PairsAtPoint struct {
	Effects MarginalSet `json:"effects"`
	// Adjusted are the p-values of Effects adjusted for multiplicity
	// within each category's pairs at this point (nil when not adjusted).
	Adjusted []float64 `json:"adjusted_p,omitempty"`
}

// PairOddsRatio is the odds ratio of one level against another.
type PairOddsRatio struct {
	fit.CombinedOddsRatio
	Change   string   `json:"change"`
	HoldsAt  string   `json:"holds_at,omitempty"`
	Adjusted *float64 `json:"adjusted_p,omitempty"`
}

// pairLevels gives the kept levels of categorical source s, reference
// first, or why its levels are not compared.
func pairLevels(dz *design.Design, s int) ([]string, string) {
	kept, ref := dz.Coded(s)
	if kept == nil {
		return nil, "the column has no categorical term of its own (it enters only an interaction), so its levels are not compared"
	}
	levels := []string{ref}
	for _, l := range kept {
		if l != ref {
			levels = append(levels, l)
		}
	}
	if len(levels) < 3 {
		return levels, fmt.Sprintf("the rows used have %d of its levels (%s), whose one pair is the comparison with the reference the marginal effects already give", len(levels), strings.Join(levels, ", "))
	}
	return levels, ""
}

// levelPairSets compares the levels of every column of the plan's
// inference.level_pairs in fit res (the chosen model; on imputed data the
// pooled fit), the differences of probabilities of each kind (average,
// and means and profile when the plan's marginal_effects ask for them) by
// effects (one data set's, or those pooled over the sets).
func levelPairSets(an *Analysis, or *OutcomeResult, res *fit.Result, effects func(kind string, s int, levels []string) MarginalSet) []LevelPairSet {
	lp := an.Inference.LevelPairs
	if lp == nil || or.Design == nil {
		return nil
	}
	var out []LevelPairSet
	for _, col := range lp.Predictors {
		s := or.Design.Source(col)
		if s < 0 {
			continue // a column only another outcome's terms read
		}
		set := LevelPairSet{Predictor: col, Multiplicity: lp.Multiplicity}
		set.Levels, set.Note = pairLevels(or.Design, s)
		if set.Note != "" {
			out = append(out, set)
			continue
		}
		k := len(set.Levels)
		set.Family = k * (k - 1) / 2
		set.Effects = effects("average", s, set.Levels)
		set.EffectsAdjusted = adjustPairs(lp.Multiplicity, set.Effects)
		for _, kind := range an.Inference.MarginalEffects {
			if kind != "average" {
				pt := PairsAtPoint{Effects: effects(kind, s, set.Levels)}
				pt.Adjusted = adjustPairs(lp.Multiplicity, pt.Effects)
				set.AtPoints = append(set.AtPoints, pt)
			}
		}
		if res.Model.Link == fit.Logit {
			set.OddsRatios, set.OddsRatioNote = pairOddsRatios(or, res, s, set.Levels, an.Level)
			if lp.Multiplicity != plan.MultiplicityNone && len(set.OddsRatios) > 0 {
				adj := adjustFamilies(lp.Multiplicity, len(set.OddsRatios),
					func(e int) string { return fmt.Sprint(set.OddsRatios[e].Boundary) },
					func(e int) float64 { return set.OddsRatios[e].P })
				for e := range set.OddsRatios {
					set.OddsRatios[e].Adjusted = &adj[e]
				}
			}
		}
		out = append(out, set)
	}
	return out
}

// adjustPairs adjusts the p-values of differences between pairs of levels
// by method within each category's pairs (nil for none, or when the
// differences were not computed).
func adjustPairs(method string, set MarginalSet) []float64 {
	if set.Error != "" || method == plan.MultiplicityNone {
		return nil
	}
	return adjustFamilies(method, len(set.Effects),
		func(e int) string { return set.Effects[e].Category },
		func(e int) float64 { return set.Effects[e].P })
}

// pairSet is the differences between every pair of levels of categorical
// source s of one kind by fit res on the outcome's data: averaged over the
// rows used (average), or at the point of the marginal effects of that
// kind (means, profile), the paired column set to each level there.
func pairSet(an *Analysis, or *OutcomeResult, res *fit.Result, kind string, s int, levels []string) MarginalSet {
	d := or.Data
	if kind == "average" {
		return pairEffects(or, res, s, levels, d.X, d.N, d.Offset, d.Weights, an.Level)
	}
	raw, off := or.atPoint(an.Inference.Profile, kind)
	set := pairEffects(or, res, s, levels, raw, 1, off, nil, an.Level)
	set.Kind, set.Point, set.PointLevels = kind, raw, or.levelsAt(raw)
	// The paired column takes each level of a pair in turn: its entry in
	// the point is no level of its own, and decisions.json says so.
	set.PointLevels[s] = pairedLevel
	return set
}

// pairedLevel stands, in PointLevels of pairs at a point, for the paired
// column, which takes both levels of each pair.
const pairedLevel = "(each level of the pair)"

// pairsOf lists the pairs (a, b) of n levels, a before b, in order.
func pairsOf(n int) [][2]int {
	var out [][2]int
	for a := 0; a < n; a++ {
		for b := a + 1; b < n; b++ {
			out = append(out, [2]int{a, b})
		}
	}
	return out
}

// pairEffects is the differences of average marginal effects of every pair
// of levels of categorical source s over the n raw rows given (n x S, with
// their offsets and weights: the outcome's rows, or one point), by fit
// res: each pair (a, b) as fit.AverageDifference from the rows with the
// column at a to the rows with it at b gives it (fit.AverageDifferences,
// each row's probabilities computed once per level), so the delta method
// runs on the whole covariance of the model.
func pairEffects(or *OutcomeResult, res *fit.Result, s int, levels []string, X []float64, n int, off, w []float64, level float64) MarginalSet {
	set := MarginalSet{Kind: "level_pairs"}
	dz := or.Design
	S := len(dz.Sources)
	at := make([]float64, len(levels))
	for v, l := range levels {
		at[v] = float64(dz.Level(s, l))
	}
	pairs := pairsOf(len(levels))
	raw := make([]float64, S)
	effs, err := res.AverageDifferences(dz.Sources[s].Name, len(levels), n, func(v, i int, x []float64) error {
		copy(raw, X[i*S:(i+1)*S])
		raw[s] = at[v]
		return dz.Row(raw, x)
	}, pairs, off, w, level)
	if err != nil {
		set.Error = err.Error()
		return set
	}
	for c, eff := range effs {
		for i := range eff {
			eff[i].Change = levels[pairs[c][0]] + " to " + levels[pairs[c][1]]
		}
		set.Effects = append(set.Effects, eff...)
	}
	return set
}

// pairOddsRatios is the odds ratio of every pair of levels of categorical
// source s in logit fit res: exp of the change of the linear predictor
// from level a to level b through the columns of the column's own term
// (the difference of the two levels' coded columns, whatever the coding),
// where the terms it interacts with have their columns at 0.
func pairOddsRatios(or *OutcomeResult, res *fit.Result, s int, levels []string, level float64) ([]PairOddsRatio, string) {
	dz := or.Design
	var term *design.Term
	for i := range dz.Terms {
		if t := &dz.Terms[i]; t.Kind == design.KindCategorical && t.Source == s {
			term = t
		}
	}
	idx := make([]int, len(term.Columns))
	for i, c := range term.Columns {
		if idx[i] = slices.Index(res.Predictors, c); idx[i] < 0 {
			return nil, fmt.Sprintf("the chosen model has no column %s", c)
		}
	}
	holds := ""
	for _, r := range or.ColumnReadings() {
		if r.Column == term.Columns[0] {
			holds = r.Where
		}
	}
	raw := or.representative(nil, false)
	row := func(l string) ([]float64, error) {
		raw[s] = float64(dz.Level(s, l))
		x := make([]float64, len(dz.Columns))
		return x, dz.Row(raw, x)
	}
	var out []PairOddsRatio
	for _, ab := range pairsOf(len(levels)) {
		a, b := levels[ab[0]], levels[ab[1]]
		xa, err := row(a)
		if err != nil {
			return nil, err.Error()
		}
		xb, err := row(b)
		if err != nil {
			return nil, err.Error()
		}
		d := make([]float64, len(res.Predictors))
		for i, c := range idx {
			d[c] = xb[term.First+i] - xa[term.First+i]
		}
		ors, err := res.OddsRatioOf(dz.Sources[s].Name, d, level)
		if err != nil {
			return nil, err.Error()
		}
		for _, o := range ors {
			out = append(out, PairOddsRatio{CombinedOddsRatio: o, Change: b + " against " + a, HoldsAt: holds})
		}
	}
	return out, ""
}

// allRowsAt checks that each of the n raw rows (n x S) with raw column s
// set to v has a design row (rowAt), in row order: the first error.
func allRowsAt(dz *design.Design, raw []float64, n, s int, v float64) error {
	r, x := make([]float64, len(dz.Sources)), make([]float64, len(dz.Columns))
	for i := 0; i < n; i++ {
		if err := rowAt(dz, raw, i, s, v, r, x); err != nil {
			return err
		}
	}
	return nil
}

// rowAt fills x with the design row of raw row i (of raw, n x S) with
// raw column s set to v, using r (S values) for the raw row.
func rowAt(dz *design.Design, raw []float64, i, s int, v float64, r, x []float64) error {
	S := len(dz.Sources)
	copy(r, raw[i*S:(i+1)*S])
	r[s] = v
	clear(x)
	return dz.Row(r, x)
}

// PairsProfileWarnings are the warnings check and run print when the plan
// asks for pairs of levels at its profile (inference.level_pairs with
// marginal_effects: profile) and the profile gives no level of another
// categorical predictor: the pairs are then taken at that column's
// reference level, as the marginal effects at the profile are, a level the
// plan does not state (not refused: the default is documented); none
// otherwise.
func PairsProfileWarnings(p *plan.Plan) []string {
	inf := p.Inference
	if inf.LevelPairs == nil || !slices.Contains(inf.MarginalEffects, "profile") {
		return nil
	}
	var out []string
	for _, col := range p.SourceColumns() {
		c := p.CategoricalOf(col)
		if c == nil || slices.ContainsFunc(inf.Profile, func(v plan.ProfileValue) bool { return v.Predictor == col }) {
			continue
		}
		var paired []string
		for _, x := range inf.LevelPairs.Predictors {
			if x != col {
				paired = append(paired, x)
			}
		}
		if len(paired) == 0 {
			continue
		}
		ref := c.Reference
		if ref == "" && len(c.Levels) > 0 {
			ref = c.Levels[0]
		}
		out = append(out, fmt.Sprintf("inference.profile gives no level of %s, a categorical predictor: the pairs of levels of %s at the profile (inference.level_pairs) hold it at its reference level %s, as the marginal effects at the profile do (they can differ at its other levels); give %s the level meant in inference.profile", col, strings.Join(paired, " and "), ref, col))
	}
	return out
}
