package runner

import (
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strings"

	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// OverallRecord is the overall fit of one candidate model against the
// thresholds-only model of its approach and link.
type OverallRecord struct {
	Model string
	Null  string
	fit.Overall
}

// MarshalJSON writes a measure that is not defined as null.
func (o OverallRecord) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Model      string   `json:"model"`
		Null       string   `json:"null_model"`
		NullLogLik *float64 `json:"null_loglik"`
		LR         fit.Test `json:"lr_vs_null"`
		McFadden   *float64 `json:"mcfadden_r2"`
		CoxSnell   *float64 `json:"cox_snell_r2"`
		Nagelkerke *float64 `json:"nagelkerke_r2"`
		MZ         *float64 `json:"mckelvey_zavoina_r2"`
		MZNote     string   `json:"mckelvey_zavoina_note,omitempty"`
	}{o.Model, o.Null, num(o.NullLogLik), o.LR, num(o.McFadden), num(o.CoxSnell), num(o.Nagelkerke), num(o.McKelveyZavoina), o.MZNote})
}

// NullRecord is the thresholds-only fit of one approach and link.
type NullRecord struct {
	Approach fit.Comparison `json:"approach"`
	Link     fit.Link       `json:"link"`
	Result   *fit.Result    `json:"-"`
	Error    string         `json:"error,omitempty"`
}

// likelihoodNote is why likelihood-ratio statistics are not tests under
// sampling weights.
const likelihoodNote = "the weights are sampling weights: the log-likelihood is a pseudo-likelihood, so likelihood-ratio statistics are not chi-square tests"

// runFitStats fits the thresholds-only model of every approach and link
// of the candidates, compares every usable candidate with it, and runs the
// Lipsitz test of the chosen model with its calibration table.
func runFitStats(a *Analysis, or *OutcomeResult) {
	prob, fopt := a.Errors.Sampling, a.Fit
	nulls := map[string]*NullRecord{}
	for _, f := range or.Fits {
		if f.Auxiliary || !f.OK() {
			continue
		}
		key := fit.ModelID(f.Result.Model.ComparisonName(), "thresholds-only", f.Link)
		nr := nulls[key]
		if nr == nil {
			nr = &NullRecord{Approach: f.Approach, Link: f.Link}
			nr.Result, _ = fit.FitNull(or.FitData, f.Result.Model, fopt)
			if nr.Result == nil || !nr.Result.OK() {
				nr.Error = "the thresholds-only model has no finite maximum"
			}
			nulls[key] = nr
			or.Nulls = append(or.Nulls, nr)
		}
		o := overallFit(or.FitData, f.Result, nr.Result, prob)
		or.Overall = append(or.Overall, OverallRecord{Model: f.ID, Null: key, Overall: o})
	}
	if or.Chosen == nil || !or.Chosen.OK() {
		return
	}
	or.Lipsitz, or.PatternSplit = goodnessOfFit(&Loaded{Data: or.Data, Design: or.Design, FitData: or.FitData}, or.Chosen.Result, fopt, prob)
}

// overallFit compares fit r with its thresholds-only fit null on data d
// (fit.OverallFit); under sampling weights the likelihood-ratio statistic
// is not a test and says so.
func overallFit(d *fit.Data, r, null *fit.Result, sampling bool) fit.Overall {
	o := fit.OverallFit(d, r, null)
	if sampling && (o.LR.OK || o.LR.Negative) {
		o.LR = fit.Test{Name: o.LR.Name, Reason: likelihoodNote}
	}
	return o
}

// goodnessOfFit runs the Lipsitz test of fit r on its data, with its
// calibration table, and the Pulkstenis-Robinson tests (with sampling
// weights the statistics are not tests and say so).
func goodnessOfFit(ld *Loaded, r *fit.Result, fopt fit.Options, sampling bool) (*fit.Lipsitz, *PatternSplitRecord) {
	lz, err := fit.LipsitzTest(ld.FitData, r, 0, fopt)
	if err != nil {
		return &fit.Lipsitz{Test: fit.Test{Name: "lipsitz", Reason: err.Error()}}, nil
	}
	if sampling && lz.Test.OK {
		lz.Test = fit.Test{Name: "lipsitz", Reason: likelihoodNote}
	}
	return lz, patternSplit(ld, r, sampling)
}

// PatternSplitRecord is the Pulkstenis-Robinson tests of the chosen
// model, or why they were not computed.
type PatternSplitRecord struct {
	Predictors  []string `json:"categorical_predictors"`
	NotComputed string   `json:"not_computed,omitempty"`
	*fit.PatternSplit
}

// noCategorical is why the Pulkstenis-Robinson tests are not computed
// without categorical predictors.
const noCategorical = "no categorical predictors: the tests group the rows by the levels of the categorical predictors"

// pearsonNote is why Pearson-type statistics are not tests under sampling
// weights.
const pearsonNote = "the weights are sampling weights: weighted counts do not follow the multinomial model the chi-square reference assumes"

// patternSplit runs the Pulkstenis-Robinson tests of fit r when the
// outcome has categorical predictors: the rows grouped by the combination
// of their levels.
func patternSplit(ld *Loaded, r *fit.Result, sampling bool) *PatternSplitRecord {
	rec := &PatternSplitRecord{Predictors: []string{}}
	if ld.Design == nil || ld.Data == nil {
		return nil
	}
	var cats []int
	for s, src := range ld.Design.Sources {
		if src.Cat != nil {
			cats = append(cats, s)
			rec.Predictors = append(rec.Predictors, src.Name)
		}
	}
	if len(cats) == 0 {
		rec.NotComputed = noCategorical
		return rec
	}
	pattern, labels, err := covariatePatterns(ld, cats)
	if err != nil {
		rec.NotComputed = err.Error()
		return rec
	}
	ps, err := fit.PulkstenisRobinsonTest(ld.FitData, r, pattern, labels, categoricalColumns(ld.Design))
	if err != nil {
		rec.NotComputed = err.Error()
		return rec
	}
	if sampling {
		ps.Pearson = fit.Test{Name: ps.Pearson.Name, Reason: pearsonNote}
		ps.Deviance = fit.Test{Name: ps.Deviance.Name, Reason: pearsonNote}
	}
	rec.PatternSplit = ps
	return rec
}

// covariatePatterns gives each row's combination of the levels of the
// categorical sources cats (numbered in the order of the levels as
// declared, first source slowest) and the label of each combination. A
// cell that is not the code of a declared level (a whole number from 0 to
// the levels less one) is an error naming the row and the column.
func covariatePatterns(ld *Loaded, cats []int) ([]int, []string, error) {
	ds := ld.Data
	keys := map[string][]int{}
	rowKey := make([]string, ds.N)
	for i := 0; i < ds.N; i++ {
		lv := make([]int, len(cats))
		parts := make([]string, len(cats))
		for c, s := range cats {
			src := ld.Design.Sources[s]
			x := ds.X[i*ds.K+s]
			if !(x >= 0 && x < float64(len(src.Cat.Levels))) || x != math.Trunc(x) {
				return nil, nil, fmt.Errorf("row %d of the data used holds %g in column %q, which is not the code of one of its %d levels (0 to %d)", i+1, x, src.Name, len(src.Cat.Levels), len(src.Cat.Levels)-1)
			}
			lv[c] = int(x)
			parts[c] = fmt.Sprintf("%06d", lv[c])
		}
		rowKey[i] = strings.Join(parts, ",")
		keys[rowKey[i]] = lv
	}
	sorted := make([]string, 0, len(keys))
	for k := range keys {
		sorted = append(sorted, k)
	}
	sort.Strings(sorted)
	index := map[string]int{}
	labels := make([]string, len(sorted))
	for p, k := range sorted {
		index[k] = p
		var parts []string
		for c, s := range cats {
			src := ld.Design.Sources[s]
			parts = append(parts, src.Name+"="+src.Cat.Levels[keys[k][c]])
		}
		labels[p] = strings.Join(parts, ", ")
	}
	pattern := make([]int, ds.N)
	for i, k := range rowKey {
		pattern[i] = index[k]
	}
	return pattern, labels, nil
}

// categoricalColumns lists the design columns made only of categorical
// sources (their main effects and their products with each other).
func categoricalColumns(dz *design.Design) []string {
	var out []string
	for k, t := range dz.Terms {
		all := true
		for _, name := range dz.TermSources(k) {
			for _, src := range dz.Sources {
				if src.Name == name && src.Cat == nil {
					all = false
				}
			}
		}
		if all {
			out = append(out, t.Columns...)
		}
	}
	return out
}

// OverallOf returns the overall fit of model id, or nil.
func (or *OutcomeResult) OverallOf(id string) *OverallRecord {
	for i := range or.Overall {
		if or.Overall[i].Model == id {
			return &or.Overall[i]
		}
	}
	return nil
}
