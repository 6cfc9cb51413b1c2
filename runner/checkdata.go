package runner

import (
	"fmt"

	"ordplan/plan"
)

// CheckData checks a plan against its data file: the file reads, every
// named column exists, every declared category is observed, and the new
// rows of inference.predict read through the design. It returns the
// warnings the data bring (too few clusters for clustered errors:
// Analysis.FewClusters), one per outcome concerned.
func CheckData(p *plan.Plan) ([]string, error) {
	if err := ValidateData(p); err != nil {
		return nil, err
	}
	a := ResolvePlan(p)
	var scopes []plan.ParameterScope
	var warnings []string
	for i, r := range a.Outcomes {
		ld, err := a.Load(r)
		if err != nil {
			return nil, err
		}
		if err := a.CheckDesign(r, ld.Design, ld.FitData); err != nil {
			return nil, err
		}
		if w := a.FewClusters(r, ld.Data); w != "" {
			warnings = append(warnings, fmt.Sprintf("outcome %s: %s", r.Outcome, w))
		}
		scopes = append(scopes, hypothesisScope(p.Outcomes[i].Column, ld.Design, ld.Data.Categories))
		// The new rows to predict: read through the design as run reads
		// them after the fits (an undeclared level, a value a
		// transformation cannot take), so that check finds what run would
		// stop on only after fitting every model.
		if a.Inference.PredictPath != "" {
			if _, err := readNewRows(a, &OutcomeResult{Design: ld.Design, dataOptions: r.Options}); err != nil {
				return nil, err
			}
		}
		if a.Imputed != nil {
			if _, _, _, err := imputedSets(a, r); err != nil {
				return nil, err
			}
		}
	}
	if err := checkHypothesisNames(p, scopes); err != nil {
		return nil, err
	}
	return warnings, nil
}

// FewClustersWarnings are the warnings of a run's outcomes whose data have
// too few clusters for clustered errors (Analysis.FewClusters), as check
// words them.
func FewClustersWarnings(res *Result) []string {
	var out []string
	an := res.Analysis
	for i, or := range res.Outcomes {
		if an == nil || i >= len(an.Outcomes) || or.Data == nil {
			continue
		}
		if w := an.FewClusters(an.Outcomes[i], or.Data); w != "" {
			out = append(out, fmt.Sprintf("outcome %s: %s", an.Outcomes[i].Outcome, w))
		}
	}
	return out
}
