package runner

import (
	"ordplan/plan"
)

// CheckData checks a plan against its data file: the file reads, every
// named column exists, every declared category is observed, and the new
// rows of inference.predict read through the design.
func CheckData(p *plan.Plan) error {
	if err := ValidateData(p); err != nil {
		return err
	}
	a := ResolvePlan(p)
	var scopes []plan.ParameterScope
	for i, r := range a.Outcomes {
		ld, err := a.Load(r)
		if err != nil {
			return err
		}
		if err := a.CheckDesign(r, ld.Design, ld.FitData); err != nil {
			return err
		}
		scopes = append(scopes, hypothesisScope(p.Outcomes[i].Column, ld.Design, ld.Data.Categories))
		// The new rows to predict: read through the design as run reads
		// them after the fits (an undeclared level, a value a
		// transformation cannot take), so that check finds what run would
		// stop on only after fitting every model.
		if a.Inference.PredictPath != "" {
			if _, err := readNewRows(a, &OutcomeResult{Design: ld.Design, dataOptions: r.Options}); err != nil {
				return err
			}
		}
		if a.Imputed != nil {
			if _, _, _, err := imputedSets(a, r); err != nil {
				return err
			}
		}
	}
	return checkHypothesisNames(p, scopes)
}
