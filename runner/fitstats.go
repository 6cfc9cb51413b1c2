package runner

import (
	"encoding/json"

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
		o := fit.OverallFit(or.FitData, f.Result, nr.Result)
		if prob && o.LR.OK {
			o.LR = fit.Test{Name: o.LR.Name, Reason: likelihoodNote}
		}
		or.Overall = append(or.Overall, OverallRecord{Model: f.ID, Null: key, Overall: o})
	}
	if or.Chosen == nil || !or.Chosen.OK() {
		return
	}
	lz, err := fit.LipsitzTest(or.FitData, or.Chosen.Result, 0, fopt)
	if err != nil {
		or.Lipsitz = &fit.Lipsitz{Test: fit.Test{Name: "lipsitz", Reason: err.Error()}}
		return
	}
	if prob && lz.Test.OK {
		lz.Test = fit.Test{Name: "lipsitz", Reason: likelihoodNote}
	}
	or.Lipsitz = lz
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
