package render

import (
	"slices"
	"strconv"
	"strings"

	"ordplan/runner"
)

// writeDictionary prints the plan's data dictionary: every used column,
// its role and kind, its categories, values or range, its missing-value
// codes, label and unit. Nothing when the plan has no dictionary.
func writeDictionary(d *doc, r *runner.Result) {
	p := r.Plan
	if len(p.Dictionary) == 0 {
		return
	}
	d.h(3, "Data dictionary")
	common := p.Data.MissingValues
	if common == nil {
		common = []string{"", "NA", "NaN", "."}
	}
	var rows [][]string
	for _, u := range p.UsedColumns() {
		e := p.EntryOf(u.Column)
		kind := p.Kind(u.Column)
		values := "any number"
		label, unit := "", ""
		var own []string
		if e != nil {
			label, unit, own = e.Label, e.Unit, e.Missing
			switch {
			case e.Range != nil:
				values = "from " + strconv.FormatFloat(e.Range[0], 'g', -1, 64) + " to " + strconv.FormatFloat(e.Range[1], 'g', -1, 64)
			case e.Values != nil:
				values = strings.Join(e.Values, ", ")
			}
		}
		switch kind {
		case "ordered":
			values = "integer codes, in numeric order"
			for _, o := range p.Outcomes {
				if o.Column == u.Column {
					label = o.Label
					if len(o.Categories) > 0 {
						values = strings.Join(o.Categories, " < ")
					}
				}
			}
		case "id":
			values = "identifiers"
		}
		if c := p.CategoricalOf(u.Column); c != nil {
			sep := ", "
			if c.Ordered {
				sep = " < "
			}
			values = strings.Join(c.Levels, sep) + " (reference " + c.Reference + ")"
		}
		role := u.Role
		if e != nil && e.ByChance {
			role += ", assigned by chance"
		}
		rows = append(rows, []string{md(mdCode(u.Column)), role, kind, values, md(missingCodes(common, own)), label, unit})
	}
	d.table([]string{"Column", "Role", "Kind", "Values", "Missing-value codes", "Label", "Unit"}, rows)
	d.p("The whole data file, rows outside the plan's subset too, was checked against this dictionary before any model was fitted: every value of a numeric column is a number, within its range and among its values, and every outcome value is one of its declared categories (an integer code where the plan leaves the categories to the data); missing values are not checked.")
}

func missingCodes(common, own []string) string {
	var q []string
	codes := append(append([]string(nil), common...), own...)
	for i, c := range codes {
		if slices.Contains(codes[:i], c) {
			continue // a column's own code that data.missing_values gives too
		}
		if c == "" {
			q = append(q, "(empty)")
		} else {
			q = append(q, mdCode(c))
		}
	}
	return strings.Join(q, ", ")
}
