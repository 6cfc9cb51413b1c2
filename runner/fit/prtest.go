package fit

import (
	"fmt"
	"math"
)

// The Pulkstenis-Robinson goodness-of-fit tests (see docs/models.md,
// "Goodness of fit"). Phases: (1) the score of every row at the fitted
// parameters; (2) the rows of each covariate pattern of the categorical
// predictors cut in two at the pattern's weighted median score (ties kept
// together); (3) observed and expected counts per group and category;
// (4) the Pearson and deviance statistics and their degrees of freedom;
// (5) the count of sparse cells.

// PatternSplit is the table of the Pulkstenis-Robinson tests and their
// two statistics.
type PatternSplit struct {
	Patterns   int         `json:"patterns"`       // I: covariate patterns with rows
	Split      int         `json:"patterns_split"` // patterns whose rows were cut in two
	Groups     int         `json:"groups"`         // rows of the table
	Categories []string    `json:"categories"`
	Pattern    []string    `json:"pattern"` // per group: the pattern's label
	Half       []string    `json:"half"`    // per group: "lower", "upper" or "whole"
	Weight     []float64   `json:"n"`
	Observed   [][]float64 `json:"observed"` // [group][category]
	Expected   [][]float64 `json:"expected"` // [group][category]
	// CategoricalParams is k: the parameters of the model on the columns
	// of the categorical predictors.
	CategoricalParams int  `json:"categorical_params"`
	Pearson           Test `json:"pearson"`
	Deviance          Test `json:"deviance"`
	// Cells, CellsBelow5 and MinExpected describe the expected counts the
	// chi-square approximation relies on; Caution is set when they are
	// small (more than a fifth of the cells below 5, or any below 1).
	Cells       int     `json:"cells"`
	CellsBelow5 int     `json:"cells_expected_below_5"`
	MinExpected float64 `json:"min_expected"`
	Caution     string  `json:"caution,omitempty"`
}

// Halves of a pattern.
const (
	halfLower = "lower"
	halfUpper = "upper"
	halfWhole = "whole"
)

// PulkstenisRobinsonTest computes the Pulkstenis-Robinson chi-square and
// deviance tests of fit r on its data d. pattern[i] is the covariate
// pattern of row i (0..len(labels)-1: the combination of the levels of
// the categorical predictors) and categorical names the design columns
// that the categorical predictors make (their parameters are k).
//
// Within each pattern the rows are sorted by their ordinal score and cut
// in two at the weighted median (a run of equal scores goes, whole, to
// the half of its weighted midpoint); a pattern whose rows all share one
// score stays whole. With G the groups that result and J the categories,
// the statistics are referred to chi-square on (G - 1)(J - 1) - k - 1
// degrees of freedom when some pattern was split, and on
// G(J - 1) - P (the classical grouped-data count, P the model's
// parameters) when no pattern could be split, as happens when every
// predictor is categorical.
func PulkstenisRobinsonTest(d *Data, r *Result, pattern []int, labels []string, categorical []string) (*PatternSplit, error) {
	pr, err := r.problem()
	if err != nil {
		return nil, err
	}
	n, J := d.N(), d.J
	if d.J != r.J || len(d.Predictors) != len(r.Predictors) || len(pattern) != n {
		return nil, fmt.Errorf("the data do not match %s", r.Name)
	}
	for i, p := range pattern {
		if p < 0 || p >= len(labels) {
			return nil, fmt.Errorf("row %d: covariate pattern %d outside 0..%d", i+1, p, len(labels)-1)
		}
	}
	w := d.weightOf
	// Phase 1: scores and probabilities.
	probs, score := scoresOf(d, r.Estimates, pr)
	// Phase 2: each pattern cut in two at its weighted median score.
	rows := make([][]int, len(labels))
	for i := 0; i < n; i++ {
		if w(i) > 0 {
			rows[pattern[i]] = append(rows[pattern[i]], i)
		}
	}
	half := make([]int, n)
	group := make([]int, n)
	t := &PatternSplit{Categories: r.Categories}
	for p, idx := range rows {
		if len(idx) == 0 {
			continue
		}
		t.Patterns++
		cutByScore(idx, score, d.Weights, 2, half)
		lower, upper := false, false
		for _, i := range idx {
			lower = lower || half[i] == 0
			upper = upper || half[i] == 1
		}
		if lower && upper {
			t.Split++
			t.addGroup(labels[p], halfLower, J)
			t.addGroup(labels[p], halfUpper, J)
			for _, i := range idx {
				group[i] = t.Groups - 2 + half[i]
			}
			continue
		}
		t.addGroup(labels[p], halfWhole, J)
		for _, i := range idx {
			group[i] = t.Groups - 1
		}
	}
	// Phase 3: observed and expected counts.
	for p := range rows {
		for _, i := range rows[p] {
			g, wi := group[i], w(i)
			t.Weight[g] += wi
			t.Observed[g][d.Y[i]] += wi
			for j := 0; j < J; j++ {
				t.Expected[g][j] += wi * probs[i*J+j]
			}
		}
	}
	// Phase 4: the statistics and their degrees of freedom.
	t.CategoricalParams, err = categoricalParams(r, categorical)
	if err != nil {
		return nil, err
	}
	var df int
	if t.Split > 0 {
		df = (t.Groups-1)*(J-1) - t.CategoricalParams - 1
	} else {
		df = t.Groups*(J-1) - r.NParams
	}
	x2, dev := 0.0, 0.0
	undefined := ""
	for g := 0; g < len(t.Observed) && undefined == ""; g++ {
		for j, o := range t.Observed[g] {
			e := t.Expected[g][j]
			if e < 0 || e == 0 && o > 0 {
				// A negative probability (nonparallel fits) or an observed
				// count where none is expected: the statistics would
				// leave the cell out and come out too small.
				undefined = fmt.Sprintf("not defined for this fit: group %d, category %s has expected count %.4g and observed count %g", g+1, r.Categories[j], e, o)
				break
			}
			if e == 0 {
				continue
			}
			x2 += (o - e) * (o - e) / e
			if o > 0 {
				dev += 2 * o * math.Log(o/e)
			}
		}
	}
	if undefined != "" {
		t.Pearson = failedTest("pulkstenis_robinson_pearson", "%s", undefined)
		t.Deviance = failedTest("pulkstenis_robinson_deviance", "%s", undefined)
	} else if df <= 0 {
		why := fmt.Sprintf("not defined for these data: %d groups of %d categories leave %d degrees of freedom", t.Groups, J, df)
		t.Pearson = failedTest("pulkstenis_robinson_pearson", "%s", why)
		t.Deviance = failedTest("pulkstenis_robinson_deviance", "%s", why)
	} else {
		t.Pearson = chi2Test("pulkstenis_robinson_pearson", x2, df)
		t.Deviance = chi2Test("pulkstenis_robinson_deviance", dev, df)
	}
	// Phase 5: sparse cells.
	t.sparseCells()
	return t, nil
}

// addGroup appends an empty group of the table.
func (t *PatternSplit) addGroup(label, half string, J int) {
	t.Groups++
	t.Pattern = append(t.Pattern, label)
	t.Half = append(t.Half, half)
	t.Weight = append(t.Weight, 0)
	t.Observed = append(t.Observed, make([]float64, J))
	t.Expected = append(t.Expected, make([]float64, J))
}

// sparseCells counts the cells with small expected counts and words the
// caution they call for.
func (t *PatternSplit) sparseCells() {
	t.MinExpected = math.Inf(1)
	for g := range t.Expected {
		for _, e := range t.Expected[g] {
			t.Cells++
			if e < 5 {
				t.CellsBelow5++
			}
			t.MinExpected = math.Min(t.MinExpected, e)
		}
	}
	if t.Cells > 0 && (5*t.CellsBelow5 > t.Cells || t.MinExpected < 1) {
		t.Caution = fmt.Sprintf("%d of %d cells have an expected count below 5 (smallest %.2f): the chi-square approximation is doubtful, read the p-values as rough", t.CellsBelow5, t.Cells, t.MinExpected)
	}
}

// categoricalParams counts the parameters of r on the named design
// columns (one per parallel or constrained column, one per equation for a
// nonparallel one).
func categoricalParams(r *Result, columns []string) (int, error) {
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil {
		return 0, fmt.Errorf("the parameters of %s on the categorical columns cannot be counted: %w", r.Name, err)
	}
	in := map[string]bool{}
	for _, c := range columns {
		in[c] = true
	}
	k := 0
	for _, p := range ly.params {
		if (p.kind == pParallel || p.kind == pFree || p.kind == pGamma) && in[r.Predictors[p.k]] {
			k++
		}
	}
	return k, nil
}
