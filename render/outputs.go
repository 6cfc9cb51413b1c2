package render

import (
	"fmt"
	"strings"

	"ordplan/runner"
)

// Outputs renders every file of a run except run.json: decisions.json,
// report.md and report.html.
func Outputs(r *runner.Result, dec *runner.Decisions, changes []string) (map[string][]byte, error) {
	b, err := runner.MarshalStable(dec)
	if err != nil {
		return nil, err
	}
	d := build(r, dec, changes)
	page, err := d.html(reportTitle(r))
	if err != nil {
		return nil, err
	}
	files := map[string][]byte{
		"decisions.json": b,
		"report.md":      d.markdown(),
		"report.html":    page,
	}
	owner := map[string]string{}
	for _, c := range d.allCharts() {
		if c.static == nil {
			continue
		}
		svg, err := c.static.svg()
		if err != nil {
			return nil, fmt.Errorf("figure %d: %w", c.number, err)
		}
		files[figureFile(c.number)] = svg
	}
	for _, or := range r.Outcomes {
		for _, f := range tableFiles(r, or) {
			files[f.name] = f.data
		}
		if or.NewRows != nil && or.NewRows.Pred != nil {
			name := predictionsFile(or)
			key := strings.ToLower(name)
			if prev, dup := owner[key]; dup {
				return nil, fmt.Errorf("outcomes %q and %q would write the same predictions file %s", prev, or.Outcome.Column, name)
			}
			owner[key] = or.Outcome.Column
			files[name] = predictionsCSV(or)
		}
	}
	return files, nil
}
