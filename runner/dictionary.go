package runner

import (
	"ordplan/plan"
	"ordplan/runner/data"
)

// columnMissing gives the dictionary's per-column missing-value codes.
func columnMissing(p *plan.Plan) map[string][]string {
	var m map[string][]string
	for _, e := range p.Dictionary {
		if len(e.Missing) > 0 {
			if m == nil {
				m = map[string][]string{}
			}
			m[e.Column] = e.Missing
		}
	}
	return m
}

// ValidateData checks the data file against the plan's dictionary: the
// numeric columns hold numbers, within their range, among their values.
// The outcome's categories are checked by the reader.
func ValidateData(p *plan.Plan) error {
	if len(p.Dictionary) == 0 {
		return nil
	}
	var rules []data.Rule
	for _, e := range p.Dictionary {
		kind := p.Kind(e.Column)
		rules = append(rules, data.Rule{Column: e.Column, Key: e.Key, Numeric: kind == "numeric",
			Range: e.Range, Values: e.Values, Missing: e.Missing})
	}
	for _, path := range p.Data.Paths() {
		if err := data.ValidateDialect(path, rules, p.Data.MissingValues, p.Data.Dialect()); err != nil {
			return err
		}
	}
	return nil
}
