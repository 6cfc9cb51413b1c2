package runner

import (
	"fmt"
	"math"
	"slices"

	"ordplan/runner/fit"
)

// GOFPooling says how the goodness-of-fit tests of the chosen model were
// computed on imputed data: on every set with that set's fit and rows,
// each set's chi-square statistic, pooled by Method.
type GOFPooling struct {
	Method string `json:"method"` // "D2"; "none" under sampling weights (no test to pool)
	Note   string `json:"note"`
}

// d2GOFNote is what the report and decisions.json say of the pooled
// goodness-of-fit tests.
const d2GOFNote = "each imputed set's rows are grouped by that set's own fitted scores (and covariate patterns) and its statistic is computed with that set's fit of the chosen model; the sets' chi-square statistics are pooled by D2 (Li, Meng, Raghunathan and Rubin 1991), which is approximate: less powerful than the pooled tests of estimates or likelihoods and only roughly calibrated, so its p-value is a guide, not an exact level; the tables are the means over the sets of each set's counts"

// samplingGOFNote is what they say under sampling weights, where no
// statistic is a test and none is pooled.
const samplingGOFNote = "each imputed set's rows are grouped by that set's own fitted scores (and covariate patterns) with that set's fit of the chosen model; under sampling weights the statistics are not tests, so none is pooled; the tables are the means over the sets of each set's counts"

// runPooledGoodnessOfFit is the goodness of fit of the chosen pooled
// model on imputed data: the Lipsitz and Pulkstenis-Robinson tests of
// each set (goodnessOfFit with that set's fit and rows), their statistics
// pooled by D2 and their tables averaged over the sets.
func runPooledGoodnessOfFit(a *Analysis, or *OutcomeResult) {
	c := or.Chosen
	if c == nil || !c.OK() || c.Pooled == nil {
		return
	}
	im := or.Imputed
	per := or.perSetOf(c)
	lzs := make([]*fit.Lipsitz, len(per))
	pss := make([]*PatternSplitRecord, len(per))
	for k, e := range per {
		if e == nil || !e.OK() {
			or.Lipsitz = &fit.Lipsitz{Test: fit.Test{Name: "lipsitz", Reason: fmt.Sprintf("the chosen model has no usable fit in imputed set %d", k+1)}}
			return
		}
		lzs[k], pss[k] = goodnessOfFit(&Loaded{Data: im.Data[k], Design: or.Design, FitData: im.Sets[k]}, e.Result, a.Fit, a.Errors.Sampling)
	}
	rec := &GOFPooling{Method: "D2", Note: d2GOFNote}
	if a.Errors.Sampling {
		rec = &GOFPooling{Method: "none", Note: samplingGOFNote}
	}
	or.Lipsitz = pooledLipsitz(lzs)
	or.PatternSplit = pooledPatternSplit(pss)
	or.GOFPooling = rec
}

// setReason is the reason a test of every set gives when it is the same
// in every set (sampling weights), else that of the first set that has
// one, naming the set; "" when every test is usable.
func setReason(per []fit.Test) string {
	for k, t := range per {
		if t.OK {
			continue
		}
		same := true
		for _, u := range per {
			same = same && !u.OK && u.Reason == t.Reason
		}
		if same {
			return t.Reason
		}
		return fmt.Sprintf("in imputed set %d: %s", k+1, t.Reason)
	}
	return ""
}

// pooledGOFTest pools one goodness-of-fit test of every set by D2
// (pooledChi2, which keeps each set's statistic in the test), keeping a
// reason the sets share as it is.
func pooledGOFTest(per []fit.Test) fit.Test {
	if why := setReason(per); why != "" {
		return fit.Test{Name: per[0].Name, Reason: why}
	}
	return pooledChi2(per[0].Name, per)
}

// pooledLipsitz pools the Lipsitz tests of the sets; the calibration
// table is the mean over the sets of each set's table (the groups, formed
// by each set's scores, must be as many in every set).
func pooledLipsitz(lzs []*fit.Lipsitz) *fit.Lipsitz {
	for k, lz := range lzs {
		if lz.Table == nil {
			return &fit.Lipsitz{Test: fit.Test{Name: lz.Test.Name, Reason: fmt.Sprintf("in imputed set %d: %s", k+1, lz.Test.Reason)}}
		}
		if g, g1 := lz.Table.Groups, lzs[0].Table.Groups; g != g1 {
			return &fit.Lipsitz{Test: fit.Test{Name: lz.Test.Name, Reason: fmt.Sprintf("imputed set %d has %d groups of predicted score but set 1 has %d (many rows share a score), so the sets cannot be pooled", k+1, g, g1)}}
		}
	}
	per := make([]fit.Test, len(lzs))
	for k, lz := range lzs {
		per[k] = lz.Test
	}
	out := &fit.Lipsitz{}
	out.Test = pooledGOFTest(per)
	t0 := lzs[0].Table
	m := float64(len(lzs))
	t := &fit.ScoreGroups{Groups: t0.Groups, Categories: t0.Categories,
		Low: make([]float64, t0.Groups), High: make([]float64, t0.Groups), Weight: make([]float64, t0.Groups),
		Observed: zeros(t0.Groups, len(t0.Categories)), Expected: zeros(t0.Groups, len(t0.Categories))}
	for _, lz := range lzs {
		s := lz.Table
		for g := 0; g < t.Groups; g++ {
			t.Low[g] += s.Low[g] / m
			t.High[g] += s.High[g] / m
			t.Weight[g] += s.Weight[g] / m
			for j := range t.Categories {
				t.Observed[g][j] += s.Observed[g][j] / m
				t.Expected[g][j] += s.Expected[g][j] / m
			}
		}
	}
	out.Table = t
	return out
}

// zeros is a rows x cols table of zeros.
func zeros(rows, cols int) [][]float64 {
	out := make([][]float64, rows)
	for i := range out {
		out[i] = make([]float64, cols)
	}
	return out
}

// pooledPatternSplit pools the Pulkstenis-Robinson tests of the sets by
// D2; the table is the mean over the sets of each set's counts, so the
// groups (patterns and halves) must be the same in every set.
func pooledPatternSplit(pss []*PatternSplitRecord) *PatternSplitRecord {
	first := pss[0]
	if first == nil || first.PatternSplit == nil {
		return first // no design, no categorical predictor, or not computed
	}
	for k, ps := range pss {
		if ps.PatternSplit == nil {
			return &PatternSplitRecord{Predictors: first.Predictors, NotComputed: fmt.Sprintf("in imputed set %d: %s", k+1, ps.NotComputed)}
		}
		a, b := ps.PatternSplit, first.PatternSplit
		if !slices.Equal(a.Pattern, b.Pattern) || !slices.Equal(a.Half, b.Half) || a.CategoricalParams != b.CategoricalParams {
			return &PatternSplitRecord{Predictors: first.Predictors, NotComputed: fmt.Sprintf("the covariate patterns or their halves in imputed set %d differ from those of set 1 (imputed levels of a categorical predictor), so the sets cannot be pooled", k+1)}
		}
	}
	m := float64(len(pss))
	f := *first.PatternSplit
	f.Weight = make([]float64, f.Groups)
	f.Observed, f.Expected = zeros(f.Groups, len(f.Categories)), zeros(f.Groups, len(f.Categories))
	pearson, deviance := make([]fit.Test, len(pss)), make([]fit.Test, len(pss))
	f.Caution = ""
	for k, ps := range pss {
		s := ps.PatternSplit
		pearson[k], deviance[k] = s.Pearson, s.Deviance
		if s.Caution != "" && f.Caution == "" {
			f.Caution = fmt.Sprintf("in imputed set %d, %s", k+1, s.Caution)
		}
		for g := 0; g < f.Groups; g++ {
			f.Weight[g] += s.Weight[g] / m
			for j := range f.Categories {
				f.Observed[g][j] += s.Observed[g][j] / m
				f.Expected[g][j] += s.Expected[g][j] / m
			}
		}
	}
	f.CellsBelow5, f.MinExpected = 0, math.Inf(1)
	for g := range f.Expected {
		for _, e := range f.Expected[g] {
			if e < 5 {
				f.CellsBelow5++
			}
			f.MinExpected = math.Min(f.MinExpected, e)
		}
	}
	f.Pearson = pooledGOFTest(pearson)
	f.Deviance = pooledGOFTest(deviance)
	return &PatternSplitRecord{Predictors: first.Predictors, PatternSplit: &f}
}
