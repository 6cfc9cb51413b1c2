package render

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"strings"

	"ordplan/runner"
)

// The files every run writes whatever its results (Outputs), named before
// it computes: the output folder is checked for them at once.
const (
	DecisionsFile  = "decisions.json"
	ReportMarkdown = "report.md"
	ReportHTML     = "report.html"
)

// ReportFiles lists DecisionsFile, ReportMarkdown and ReportHTML.
var ReportFiles = []string{DecisionsFile, ReportHTML, ReportMarkdown}

// Outputs renders every file of a run except run.json: decisions.json,
// report.md and report.html (ReportFiles), the figures, the tables and the
// predictions, whose names depend on the results.
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
		DecisionsFile:  b,
		ReportMarkdown: d.markdown(),
		ReportHTML:     page,
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
			// Names that differ in letter case alone are one file where
			// the file system ignores case (macOS, Windows).
			key := strings.ToLower(f.name)
			if prev, dup := owner[key]; dup && prev != or.Outcome.Column {
				return nil, fmt.Errorf("outcomes %q and %q would write the same table file %s (their names differ only in letter case): rename one of the outcome columns", prev, or.Outcome.Column, f.name)
			}
			owner[key] = or.Outcome.Column
			files[f.name] = markedCSV(r, f.data)
		}
		if or.NewRows != nil && or.NewRows.Pred != nil {
			name := predictionsFile(or)
			key := strings.ToLower(name)
			if prev, dup := owner[key]; dup {
				return nil, fmt.Errorf("outcomes %q and %q would write the same predictions file %s", prev, or.Outcome.Column, name)
			}
			owner[key] = or.Outcome.Column
			files[name] = markedCSV(r, predictionsCSV(r, or))
		}
		sets, err := or.Imputed.CompletedSetsCSV()
		if err != nil {
			return nil, fmt.Errorf("the imputed sets of %q: %w", or.Outcome.Column, err)
		}
		if sets != nil {
			name := imputedSetsFile(or)
			key := strings.ToLower(name)
			if prev, dup := owner[key]; dup {
				return nil, fmt.Errorf("outcomes %q and %q would write the same imputed sets file %s", prev, or.Outcome.Column, name)
			}
			owner[key] = or.Outcome.Column
			files[name] = sets
		}
	}
	return files, nil
}

// simulatedColumn is the last column of every table of a run on
// simulated data, SimulatedMark in each row, so that a table or a row
// copied elsewhere still says where its numbers come from; the columns
// before it are those of a run on real data, in the same places.
const simulatedColumn = "simulated_data"

// markedCSV gives a CSV table of run r: as it is, or with the column
// simulatedColumn added when r ran on simulated data.
func markedCSV(r *runner.Result, b []byte) []byte {
	if r.Simulated == nil {
		return b
	}
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil || len(recs) == 0 {
		return b // the tables are written by this package: they parse
	}
	var out bytes.Buffer
	w := csv.NewWriter(&out)
	for i, rec := range recs {
		if i == 0 {
			w.Write(append(rec, simulatedColumn))
			continue
		}
		w.Write(append(rec, SimulatedMark))
	}
	w.Flush()
	return out.Bytes()
}
