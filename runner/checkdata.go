package runner

import (
	"ordplan/plan"
)

// CheckData checks a plan against its data file: the file reads, every
// named column exists, and every declared category is observed.
func CheckData(p *plan.Plan) error {
	if err := ValidateData(p); err != nil {
		return err
	}
	a := ResolvePlan(p)
	for _, r := range a.Outcomes {
		ld, err := a.Load(r)
		if err != nil {
			return err
		}
		if err := a.CheckDesign(r, ld.FitData); err != nil {
			return err
		}
		if a.Imputed != nil {
			if _, _, _, err := imputedSets(a, r); err != nil {
				return err
			}
		}
	}
	return nil
}
