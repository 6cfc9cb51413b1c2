package runner

import (
	"fmt"

	"ordplan/plan"
	"ordplan/runner/fit"
)

// CheckData checks a plan against its data file: the file reads, every
// named column exists, and every declared category is observed.
func CheckData(p *plan.Plan) error {
	if err := ValidateData(p); err != nil {
		return err
	}
	for _, oc := range p.Outcomes {
		_, _, d, _, err := loadDesign(p, oc)
		if err != nil {
			return err
		}
		if err := fit.CheckDesign(d); err != nil {
			return fmt.Errorf("%s: outcome %q: %v", p.Data.File, oc.Column, err)
		}
		if p.Data.Imputed != nil {
			if _, _, _, err := imputedSets(p, oc); err != nil {
				return err
			}
		}
	}
	return nil
}
