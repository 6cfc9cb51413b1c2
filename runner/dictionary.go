package runner

import (
	"fmt"
	"slices"

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
// numeric columns hold numbers, within their range, among their values,
// and every outcome value is one of its declared categories (or an
// integer code, the categories left to the data). The dictionary
// describes the file, so every row is checked, rows outside the plan's
// subset too, as the report's dictionary section says; the reader checks
// the rows it analyses again as it reads them.
func ValidateData(p *plan.Plan) error {
	if len(p.Dictionary) == 0 {
		return nil
	}
	var rules []data.Rule
	missing := columnMissing(p)
	for i, o := range p.Outcomes {
		if slices.ContainsFunc(p.Outcomes[:i], func(q plan.Outcome) bool { return q.Column == o.Column }) {
			continue
		}
		rules = append(rules, data.Rule{Column: o.Column, Key: fmt.Sprintf("outcomes[%d].categories", i), Outcome: true,
			Categories: o.Categories, Missing: missing[o.Column]})
	}
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
