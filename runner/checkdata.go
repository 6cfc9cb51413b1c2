package runner

import (
	"fmt"

	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// CheckData checks a plan against its data file: the file reads, every
// named column exists, and every declared category is observed.
func CheckData(p *plan.Plan) error {
	for _, oc := range p.Outcomes {
		ds, err := data.Load(p.Data.Path, data.Options{Outcome: oc.Column, Levels: oc.Categories, Predictors: p.Predictors,
			Weights: p.Data.Weights, Offset: p.Data.Offset, Cluster: p.Data.Cluster,
			Refuse: p.Data.Missing == "refuse", MissingTokens: p.Data.MissingValues})
		if err != nil {
			return fmt.Errorf("%s (plan %s, outcome %q)", err, p.Path, oc.Column)
		}
		if len(ds.Unobserved) > 0 {
			return fmt.Errorf("%s: outcomes: %s: category %q is declared but never observed in the %d rows used", p.Path, oc.Column, ds.Unobserved[0], ds.N)
		}
		if err := fit.CheckDesign(FitData(ds)); err != nil {
			return fmt.Errorf("%s: outcome %q: %v", p.Data.File, oc.Column, err)
		}
	}
	return supported(p)
}
