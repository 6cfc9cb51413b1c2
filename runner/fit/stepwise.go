package fit

import (
	"fmt"
)

// StepwiseStep is one step of the backward selection of parallel
// constraints.
type StepwiseStep struct {
	Step    int     `json:"step"`
	LogLik  float64 `json:"model_loglik"`
	Tests   []Test  `json:"tests"` // one per free predictor, Name = predictor
	Imposed string  `json:"imposed,omitempty"`
	P       float64 `json:"p,omitempty"`
}

// StepwiseResult is the whole selection.
type StepwiseResult struct {
	OK               bool           `json:"ok"`
	Reason           string         `json:"reason,omitempty"`
	Alpha            float64        `json:"alpha"`
	Test             string         `json:"test"`
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

// Stepwise selects parallel constraints backward: start with the candidate
// predictors nonparallel (the others parallel); at each step test each free
// predictor for equal slopes in the current model (Wald, observed
// information; or likelihood ratio against the model with it parallel) and
// make parallel the one with the largest p-value at or above alpha; stop
// when none qualifies. base supplies the comparison, direction and link.
func Stepwise(d *Data, base Model, candidates []string, alpha float64, test string, opt Options) *StepwiseResult {
	sr := &StepwiseResult{Alpha: alpha, Test: test}
	if test == "" {
		sr.Test = "wald"
	}
	if sr.Test != "wald" && sr.Test != "lr" {
		sr.Reason = fmt.Sprintf("unknown stepwise test %q (want wald or lr)", test)
		return sr
	}
	K := len(d.Predictors)
	eff := allEffects(K, Parallel)
	for _, c := range candidates {
		k := indexOf(d.Predictors, c)
		if k < 0 {
			sr.Reason = fmt.Sprintf("candidate %q is not a predictor", c)
			return sr
		}
		eff[k] = Nonparallel
	}
	model := base
	model.Effects = eff
	fitOne := func(m Model) (*Result, error) {
		r, err := Fit(d, m, opt)
		if err == nil && opt.Sandwich != nil && r.OK() {
			err = opt.Sandwich(r)
		}
		return r, err
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
	for step := 1; ; step++ {
		st := StepwiseStep{Step: step, LogLik: cur.LogLik}
		best, bestP := -1, -1.0
		var bestFit *Result
		for k, e := range cur.Model.Effects {
			if e != Nonparallel {
				continue
			}
			var t Test
			var alt *Result
			if sr.Test == "wald" {
				t = WaldEqualSlopes(cur, []string{d.Predictors[k]})
			} else {
				m := cur.Model
				m.Effects = append([]Effect(nil), cur.Model.Effects...)
				m.Effects[k] = Parallel
				alt, err = fitOne(m)
				if err != nil {
					t = failedTest("lr", "%v", err)
				} else {
					t = LRTest(alt, cur)
				}
			}
			t.Name = d.Predictors[k]
			st.Tests = append(st.Tests, t)
			if t.OK && t.P > bestP {
				best, bestP, bestFit = k, t.P, alt
			}
		}
		if best < 0 || bestP < alpha {
			sr.Steps = append(sr.Steps, st)
			break
		}
		st.Imposed, st.P = d.Predictors[best], bestP
		sr.Steps = append(sr.Steps, st)
		imposed = append(imposed, d.Predictors[best])
		if bestFit == nil {
			m := cur.Model
			m.Effects = append([]Effect(nil), cur.Model.Effects...)
			m.Effects[best] = Parallel
			bestFit, err = fitOne(m)
			if err != nil {
				sr.Reason = err.Error()
				return sr
			}
		}
		if !bestFit.OK() {
			sr.Reason = fmt.Sprintf("after making %s parallel the model has no usable fit (%s)", d.Predictors[best], bestFit.Status)
			return sr
		}
		cur = bestFit
	}
	sr.Final = cur
	for k, e := range cur.Model.Effects {
		if e == Nonparallel {
			sr.FinalNonparallel = append(sr.FinalNonparallel, d.Predictors[k])
		}
	}
	sr.FinalParallel = imposed
	if len(imposed) > 0 {
		if sr.Test == "wald" {
			sr.FinalTest = WaldEqualSlopes(sr.Start, imposed)
		} else {
			sr.FinalTest = LRTest(cur, sr.Start)
		}
	} else {
		sr.FinalTest = failedTest(sr.Test, "no predictor was made parallel")
	}
	sr.OK = true
	return sr
}
