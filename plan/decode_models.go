package plan

import (
	"slices"

	"gopkg.in/yaml.v3"

	"ordplan/runner/fit"
)

// decodeModels reads the models section.
func (d *decoder) decodeModels(n *yaml.Node, mo *Models) {
	mo.Approaches = slices.Clone(defaultApproaches)
	mo.Direction = "forward"
	mo.Effects = slices.Clone(defaultEffects)
	mo.Links = slices.Clone(defaultLinks)
	m := d.mapping(n, "models", modelsKeys)
	typedWords(m, "approaches", "approach", fit.ComparisonWords, fit.ComparisonWords.All(), false, &mo.Approaches)
	m.word("direction", "direction", directionWords, &mo.Direction)
	typedWords(m, "effects", "effect structure", fit.StructureWords, fit.StructureWords.All(), false, &mo.Effects)
	typedWords(m, "links", "link", fit.LinkWords, fit.LinkWords.All(), false, &mo.Links)
	m.boolean("run_every_start", &mo.RunEveryStart)
	d.decodePartial(m.get("partial"), &mo.Partial)
}

// decodePartial reads models.partial; how its parts fit together is
// checked in checkPartial.
func (d *decoder) decodePartial(n *yaml.Node, pa *Partial) {
	const path = "models.partial"
	m := d.mapping(n, path, partialKeys)
	if v := m.get("free"); v != nil && d.nonEmpty(v, m.at("free"), "predictor") {
		pa.Free, _ = d.names(v, m.at("free"))
	}
	if v := m.get("select"); v != nil {
		pa.Select = d.decodeSelect(v, m.at("select"))
	}
	if v := m.get("groups"); v != nil && d.nonEmpty(v, m.at("groups"), "group") {
		pa.Groups = d.decodeGroups(v, m.at("groups"))
	}
}

func (d *decoder) decodeSelect(n *yaml.Node, path string) *Select {
	s := &Select{Method: "stepwise", Alpha: 0.05, Test: fit.TestWald}
	m := d.mapping(n, path, selectKeys)
	if m == nil {
		return nil
	}
	m.word("method", "selection method", selectMethodWords, &s.Method)
	m.probability("alpha", &s.Alpha)
	typedWord(m, "test", "selection test", fit.TestWords, selectTests, &s.Test)
	return s
}

func (d *decoder) decodeGroups(n *yaml.Node, path string) []Group {
	items, ok := d.list(n, path)
	if !ok {
		return nil
	}
	out := make([]Group, len(items)) // bad items stay, so indexes match the plan
	for i, it := range items {
		p := itemPath(path, i)
		g := &out[i]
		m := d.mapping(it, p, groupKeys)
		switch {
		case m == nil:
		case m.node == nil:
			d.errorf(it, p, "want a mapping with keys name, predictors; got null")
		default:
			if v := m.get("name"); v != nil {
				g.Name, _ = d.token(v, m.at("name"))
			}
			if v := m.required("predictors"); v != nil && d.nonEmpty(v, m.at("predictors"), "predictor") {
				g.Predictors, _ = d.names(v, m.at("predictors"))
			}
		}
	}
	return out
}
