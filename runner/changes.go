package runner

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// Changes compares this run's decisions with those of an earlier run
// (its output directory) and lists what changed, in plan order.
func Changes(prevDir string, cur *Decisions) ([]string, error) {
	b, err := os.ReadFile(filepath.Join(prevDir, "decisions.json"))
	if err != nil {
		return nil, fmt.Errorf("--previous: %w", err)
	}
	var prev Decisions
	if err := json.Unmarshal(b, &prev); err != nil {
		return nil, fmt.Errorf("--previous: %s is not a decisions record: %v", filepath.Join(prevDir, "decisions.json"), err)
	}
	var out []string
	if prev.Plan.SHA256 != cur.Plan.SHA256 {
		out = append(out, fmt.Sprintf("The plan changed (sha256 %.12s... -> %.12s...).", prev.Plan.SHA256, cur.Plan.SHA256))
	}
	if prev.Data.SHA256 != cur.Data.SHA256 {
		out = append(out, fmt.Sprintf("The data file changed (sha256 %.12s... -> %.12s...).", prev.Data.SHA256, cur.Data.SHA256))
	}
	switch pn, cn := prev.NewRows, cur.NewRows; {
	case pn == nil && cn != nil:
		out = append(out, fmt.Sprintf("Predictions for new rows (%s) are new.", cn.File))
	case pn != nil && cn == nil:
		out = append(out, "There are no predictions for new rows any more.")
	case pn != nil && pn.SHA256 != cn.SHA256:
		out = append(out, fmt.Sprintf("The new-rows file changed (sha256 %.12s... -> %.12s...): the predictions are for other rows.", pn.SHA256, cn.SHA256))
	}
	prevOut := map[string]OutcomeDecisions{}
	for _, o := range prev.Outcomes {
		prevOut[o.Outcome] = o
	}
	for _, o := range cur.Outcomes {
		p, ok := prevOut[o.Outcome]
		if !ok {
			out = append(out, fmt.Sprintf("%s: new outcome.", o.Outcome))
			continue
		}
		if p.RowsUsed != o.RowsUsed || p.RowsRead != o.RowsRead {
			out = append(out, fmt.Sprintf("%s: rows used %d of %d (was %d of %d).", o.Outcome, o.RowsUsed, o.RowsRead, p.RowsUsed, p.RowsRead))
		}
		pc, cc := deref(p.Chosen), deref(o.Chosen)
		if pc != cc {
			out = append(out, fmt.Sprintf("%s: the chosen model changed from %s to %s.", o.Outcome, pc, cc))
		}
		for _, id := range sortedKeys(o.Final) {
			v := o.Final[id]
			pv, ok := p.Final[id]
			switch {
			case !ok:
				out = append(out, fmt.Sprintf("%s: %s is new: %s.", o.Outcome, id, v.Reason))
			case pv.Kept != v.Kept:
				out = append(out, fmt.Sprintf("%s: %s: in the earlier run %s; in this run %s.", o.Outcome, id, verdictPhrase(pv), verdictPhrase(v)))
			}
		}
		for _, id := range sortedKeys(p.Final) {
			if _, ok := o.Final[id]; !ok {
				out = append(out, fmt.Sprintf("%s: %s is no longer in the grid.", o.Outcome, id))
			}
		}
	}
	if len(out) == 0 {
		out = append(out, "No decision changed.")
	}
	return out, nil
}

func deref(s *string) string {
	if s == nil {
		return "(none)"
	}
	return *s
}

// verdictPhrase writes a final verdict as "rejected (why)" or "chosen
// (why)", so that a change reads in the right order.
func verdictPhrase(v Verdict) string {
	word, why, ok := strings.Cut(v.Reason, ": ")
	if !ok {
		return v.Reason
	}
	return word + " (" + why + ")"
}
