package runner

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// HypothesisResult is the Wald test of one of the plan's hypotheses in one
// model.
type HypothesisResult struct {
	Text  string   `json:"hypothesis"`
	Line  int      `json:"line"`
	Model string   `json:"model"`
	Test  fit.Test `json:"test"`
}

// MarginalSet is one kind of marginal effects of the chosen model.
type MarginalSet struct {
	Kind    string               `json:"kind"` // average, means or values
	At      []float64            `json:"at,omitempty"`
	Effects []fit.MarginalEffect `json:"effects"`
	Error   string               `json:"error,omitempty"`
}

// NewRows are the chosen model's predictions for the plan's new rows.
type NewRows struct {
	File  string          `json:"file"`
	Rows  *data.Rows      `json:"-"`
	Pred  *fit.Prediction `json:"-"`
	Error string          `json:"error,omitempty"`
}

// runInference computes what the plan's inference section asks for.
func runInference(p *plan.Plan, or *OutcomeResult) error {
	inf := p.Inference
	for _, h := range inf.Hypotheses {
		or.Hypotheses = append(or.Hypotheses, hypothesisTests(h, or)...)
	}
	if or.Chosen == nil {
		return nil
	}
	res := or.Chosen.Result
	level := p.Report.ConfidenceLevel
	for _, kind := range inf.MarginalEffects {
		set := MarginalSet{Kind: kind}
		var err error
		switch kind {
		case "average":
			set.Effects, err = res.AverageMarginalEffects(or.FitData, level)
		default:
			x, binary := meansOf(or.FitData)
			if kind == "values" {
				for _, a := range inf.At {
					k := slices.Index(p.Predictors, a.Predictor)
					x[k] = a.Value
					binary[k] = false
				}
			}
			set.At = x
			set.Effects, err = res.MarginalEffectsAt(x, binary, level)
		}
		if err != nil {
			set.Error = err.Error()
		}
		or.Marginal = append(or.Marginal, set)
	}
	if inf.PredictPath != "" {
		nr := &NewRows{File: inf.Predict}
		rows, err := data.LoadRows(inf.PredictPath, p.Predictors, p.Data.Offset, p.Data.MissingValues)
		if err != nil {
			return fmt.Errorf("%s: inference.predict: %v", p.Path, err)
		}
		nr.Rows = rows
		if nr.Pred, err = res.Predict(rows.X, rows.Offset); err != nil {
			nr.Error = err.Error()
		}
		or.NewRows = nr
	}
	return nil
}

// hypothesisTests tests one hypothesis in every candidate model that has
// the parameters it names.
func hypothesisTests(h plan.Hypothesis, or *OutcomeResult) []HypothesisResult {
	var out []HypothesisResult
	var lastErr error
	for _, f := range or.Fits {
		if f.Auxiliary || !f.OK() {
			continue
		}
		hy, err := fit.ParseHypothesis(h.Text, f.Result.ParamNames)
		if err != nil {
			lastErr = err
			if strings.Contains(err.Error(), "is not a parameter") {
				continue
			}
			out = append(out, HypothesisResult{Text: h.Text, Line: h.Line, Model: f.ID, Test: fit.Test{Name: "wald", Reason: err.Error()}})
			continue
		}
		out = append(out, HypothesisResult{Text: h.Text, Line: h.Line, Model: f.ID, Test: fit.WaldLinear(f.Result, hy)})
	}
	if len(out) == 0 {
		reason := "no fitted model has the parameters it names"
		if lastErr != nil {
			reason += ": " + lastErr.Error()
		}
		out = append(out, HypothesisResult{Text: h.Text, Line: h.Line, Test: fit.Test{Name: "wald", Reason: reason}})
	}
	return out
}

// meansOf returns the weighted means of the predictors and which are 0/1.
func meansOf(d *fit.Data) ([]float64, []bool) {
	K := len(d.Predictors)
	x := make([]float64, K)
	binary := make([]bool, K)
	tot := 0.0
	for k := range binary {
		binary[k] = true
	}
	for i := 0; i < d.N(); i++ {
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		tot += w
		for k := 0; k < K; k++ {
			v := d.X[i*K+k]
			x[k] += w * v
			if v != 0 && v != 1 {
				binary[k] = false
			}
		}
	}
	for k := range x {
		x[k] /= tot
	}
	return x, binary
}
