package fit

import (
	"fmt"
	"strconv"
)

// StepwiseStep is one step of the backward selection of parallel
// constraints.
type StepwiseStep struct {
	Step    int     `json:"step"`
	LogLik  float64 `json:"model_loglik"`
	Tests   []Test  `json:"tests"` // one per free predictor, Name = predictor
	Imposed string  `json:"imposed,omitempty"`
	P       float64 `json:"p,omitempty"`
	// Skipped are the free candidates the step passed over because their
	// test has no p-value, each with why (absent when none).
	Skipped []SkippedCandidate `json:"skipped,omitempty"`
	// Collinear are the terms the step's current model flags as nearly
	// collinear (Result.Collinear; absent when none).
	Collinear []Inflation `json:"collinear,omitempty"`
}

// SkippedCandidate is a candidate a step of the selection could not weigh.
type SkippedCandidate struct {
	Term   string `json:"term"`
	Reason string `json:"reason"`
}

// skipped says why a step passes over the candidate whose test t has no
// p-value: a likelihood-ratio statistic below zero (the refit with the
// candidate parallel, or the current model, did not reach its maximum),
// or a test that could not be computed.
func skipped(term string, t Test) SkippedCandidate {
	if t.Negative {
		return SkippedCandidate{Term: term, Reason: fmt.Sprintf("its likelihood-ratio statistic is negative (%s): the refit with %s parallel, or the current model, did not reach its maximum, so the step could not weigh it; it stays free at this step", strconv.FormatFloat(t.Chi2, 'g', 6, 64), term)}
	}
	return SkippedCandidate{Term: term, Reason: fmt.Sprintf("its test was not computed (%s), so the step could not weigh it; it stays free at this step", t.Reason)}
}

// StepwiseResult is the whole selection.
type StepwiseResult struct {
	OK               bool           `json:"ok"`
	Reason           string         `json:"reason,omitempty"`
	Alpha            float64        `json:"alpha"`
	Test             TestKind       `json:"test"`
	Steps            []StepwiseStep `json:"steps"`
	FinalParallel    []string       `json:"final_parallel"`
	FinalNonparallel []string       `json:"final_nonparallel"`
	// FinalTest: in the starting (nonparallel) model, the joint test that
	// every predictor made parallel has equal slopes (Wald), or the LR
	// test of the final model against the starting one.
	FinalTest Test    `json:"final_test"`
	Final     *Result `json:"-"`
	Start     *Result `json:"-"`
}

// Term is a named group of predictor columns that share one effect
// structure (a categorical predictor's columns, a spline basis, an
// interaction): selection makes all of them parallel at once and tests
// them jointly.
type Term struct {
	Name    string
	Columns []string
}

// Stepwise selects parallel constraints backward: start with the candidate
// predictors nonparallel (the others parallel); at each step test each free
// predictor for equal slopes in the current model (Wald, observed
// information; or likelihood ratio against the model with it parallel) and
// make parallel the one with the largest p-value at or above alpha; stop
// when none qualifies. base supplies the comparison, direction and link.
func Stepwise(d *Data, base Model, candidates []string, alpha float64, test TestKind, opt Options) *StepwiseResult {
	terms := make([]Term, len(candidates))
	for i, c := range candidates {
		terms[i] = Term{Name: c, Columns: []string{c}}
	}
	return StepwiseTerms(d, base, terms, alpha, test, opt)
}

// StepwiseTerms is Stepwise over terms: each candidate is a group of
// columns tested jointly (df: columns x (J-2)) and made parallel together.
func StepwiseTerms(d *Data, base Model, candidates []Term, alpha float64, test TestKind, opt Options) *StepwiseResult {
	return StepwiseWith(DataStepwiseFits(d, opt), base, candidates, alpha, test)
}

// DataStepwiseFits are the fits and tests of a selection on data d: Fit
// with opt (and its Settle step), WaldEqualSlopes and LRTest.
func DataStepwiseFits(d *Data, opt Options) StepwiseFits {
	return StepwiseFits{Predictors: d.Predictors, Wald: WaldEqualSlopes, LR: LRTest,
		Fit: func(m Model) (*Result, error) {
			r, err := Fit(d, m, opt)
			if err == nil && opt.Settle != nil && r.OK() {
				err = opt.Settle(r)
			}
			return r, err
		}}
}

// StepwiseFits is what a selection does with its data: fit a model, test
// in a fitted model that columns have equal slopes at every boundary
// (Wald), and compare a restricted fit with a full one (likelihood
// ratio). StepwiseTerms supplies those of one data set; a selection on
// multiply imputed data supplies fits and tests pooled over the sets.
type StepwiseFits struct {
	Predictors []string
	Fit        func(m Model) (*Result, error)
	Wald       func(r *Result, columns []string) Test
	LR         func(restricted, full *Result) Test
}

// StepwiseWith is StepwiseTerms with the fits and tests of sf.
func StepwiseWith(sf StepwiseFits, base Model, candidates []Term, alpha float64, test TestKind) *StepwiseResult {
	sr := &StepwiseResult{Alpha: alpha, Test: test}
	if test != TestWald && test != TestLR {
		sr.Reason = fmt.Sprintf("stepwise selection tests by wald or lr, not %s", test)
		return sr
	}
	K := len(sf.Predictors)
	eff := allEffects(K, Parallel)
	cols := make([][]int, len(candidates))
	for i, c := range candidates {
		for _, name := range c.Columns {
			k := indexOf(sf.Predictors, name)
			if k < 0 {
				sr.Reason = fmt.Sprintf("candidate %q is not a predictor", name)
				return sr
			}
			eff[k] = Nonparallel
			cols[i] = append(cols[i], k)
		}
	}
	free := make([]bool, len(candidates))
	for i := range free {
		free[i] = true
	}
	model := base
	model.Effects = eff
	fitOne := sf.Fit
	withParallel := func(m Model, i int) Model {
		m.Effects = append([]Effect(nil), m.Effects...)
		for _, k := range cols[i] {
			m.Effects[k] = Parallel
		}
		return m
	}
	cur, err := fitOne(model)
	if err != nil {
		sr.Reason = err.Error()
		return sr
	}
	if !cur.OK() {
		sr.Reason = fmt.Sprintf("the starting model %s has no usable fit (%s): stepwise selection not computed", cur.Name, cur.Status)
		return sr
	}
	sr.Start = cur
	var imposed []string
	var imposedCols []string
	for step := 1; ; step++ {
		st := StepwiseStep{Step: step, LogLik: cur.LogLik, Collinear: cur.Collinear}
		best, bestP := -1, -1.0
		var bestFit *Result
		for i, c := range candidates {
			if !free[i] {
				continue
			}
			var t Test
			var alt *Result
			if sr.Test == TestWald {
				t = sf.Wald(cur, c.Columns)
			} else {
				alt, err = fitOne(withParallel(cur.Model, i))
				if err != nil {
					t = failedTest(TestLR.String(), "%v", err)
				} else {
					t = sf.LR(alt, cur)
				}
			}
			t.Name = c.Name
			st.Tests = append(st.Tests, t)
			if !t.OK {
				st.Skipped = append(st.Skipped, skipped(c.Name, t))
			}
			if t.OK && t.P > bestP {
				best, bestP, bestFit = i, t.P, alt
			}
		}
		if best < 0 || bestP < alpha {
			sr.Steps = append(sr.Steps, st)
			break
		}
		st.Imposed, st.P = candidates[best].Name, bestP
		sr.Steps = append(sr.Steps, st)
		imposed = append(imposed, candidates[best].Name)
		imposedCols = append(imposedCols, candidates[best].Columns...)
		free[best] = false
		if bestFit == nil {
			bestFit, err = fitOne(withParallel(cur.Model, best))
			if err != nil {
				sr.Reason = err.Error()
				return sr
			}
		}
		if !bestFit.OK() {
			sr.Reason = fmt.Sprintf("after making %s parallel the model has no usable fit (%s)", candidates[best].Name, bestFit.Status)
			return sr
		}
		cur = bestFit
	}
	sr.Final = cur
	for i, c := range candidates {
		if free[i] {
			sr.FinalNonparallel = append(sr.FinalNonparallel, c.Name)
		}
	}
	sr.FinalParallel = imposed
	if len(imposed) > 0 {
		if sr.Test == TestWald {
			sr.FinalTest = sf.Wald(sr.Start, imposedCols)
		} else {
			sr.FinalTest = sf.LR(cur, sr.Start)
		}
	} else {
		sr.FinalTest = failedTest(sr.Test.String(), "no predictor was made parallel")
	}
	sr.OK = true
	return sr
}
