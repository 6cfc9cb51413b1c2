package plan

import "ordplan/runner/fit"

// applyDefaults fills in the defaults that depend on more than one
// section. Simple defaults are set while decoding.
func (d *decoder) applyDefaults(p *Plan) {
	p.Data.Path = resolveDataPath(p.Dir, p.Data.File)
	if p.Data.Parts != nil {
		var from []int
		p.Data.PartFiles, p.Data.PartPaths, from = ExpandParts(p.Dir, p.Data.Parts)
		entries := p.Data.PartOf
		p.Data.PartOf = nil
		if len(entries) == len(p.Data.Parts) {
			for _, k := range from {
				p.Data.PartOf = append(p.Data.PartOf, entries[k])
			}
		}
	}
	if im := p.Data.Imputed; im != nil {
		im.Path = resolveDataPath(p.Dir, im.File)
		im.Paths = nil
		for _, f := range im.Files {
			im.Paths = append(im.Paths, resolveDataPath(p.Dir, f))
		}
	}
	p.Derived = map[string]string{}
	for i := range p.Outcomes {
		if p.Outcomes[i].Label == "" {
			p.Outcomes[i].Label = p.Outcomes[i].Column
			p.Derived[itemPath("outcomes", i)+".label"] = itemPath("outcomes", i) + ".column"
		}
	}
	if !d.given("report.title") {
		p.Report.Title = p.Title
		p.Derived["report.title"] = "title"
	}
	if p.Report.FocusPredictor == "" && !d.given("report.focus_predictor") && len(p.Predictors) > 0 {
		p.Derived["report.focus_predictor"] = "predictors"
		p.Report.FocusPredictor = p.Predictors[0]
		// the first numeric column a term reads, else the first column
		for _, t := range p.Terms {
			if t.Source != "" && p.categorical(t.Source) == nil && t.Source != p.Report.PanelsBy {
				p.Report.FocusPredictor = t.Source
				break
			}
		}
	}
	for i := range p.Rules {
		if p.Rules[i].Kind == RuleRejectIfTestRejects && p.Rules[i].Alpha == 0 {
			p.Rules[i].Alpha = p.Tests.Alpha
			p.Derived[itemPath("rules", i)+"."+RuleRejectIfTestRejects+".alpha"] = "tests.alpha"
		}
	}
	pa := &p.Models.Partial
	if p.Models.HasEffects(fit.ConstrainedEffects) && pa.Free != nil && !d.given("models.partial.groups") {
		pa.Groups = []Group{{Name: "", Predictors: append([]string(nil), pa.Free...)}}
		p.Derived["models.partial.groups"] = "models.partial.free"
	}
}
