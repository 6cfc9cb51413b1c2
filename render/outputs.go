package render

import (
	"ordplan/runner"
)

// Outputs renders every file of a run except run.json: decisions.json,
// report.md and report.html.
func Outputs(r *runner.Result, dec *runner.Decisions, changes []string) (map[string][]byte, error) {
	b, err := runner.MarshalStable(dec)
	if err != nil {
		return nil, err
	}
	files := map[string][]byte{"decisions.json": b}
	md := Markdown(r, dec, changes)
	files["report.md"] = md
	html, err := HTML(r, md)
	if err != nil {
		return nil, err
	}
	files["report.html"] = html
	return files, nil
}
