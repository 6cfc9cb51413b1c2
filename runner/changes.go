package runner

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan/lock"
	"ordplan/render/numfmt"
	"ordplan/runner/data"
)

// Changes compares this run's decisions with those of an earlier run
// (its output directory) and lists what changed, in plan order.
func Changes(prevDir string, cur *Decisions) ([]string, error) {
	prev, err := ReadPrevious(prevDir)
	if err != nil {
		return nil, err
	}
	return ChangesFrom(prev, nil, cur, nil), nil
}

// ReadPrevious reads the decisions record of the earlier run in prevDir
// (the folder of --previous), so that a run can refuse a wrong folder
// before it fits anything.
// The folder must be an earlier run's output folder (its decisions.json);
// a rehearsal's (its decisions.json records simulated data) is refused:
// its invented data cannot be the earlier run of the real data.
func ReadPrevious(prevDir string) (*Decisions, error) {
	path := filepath.Join(prevDir, "decisions.json")
	if fi, err := os.Stat(path); err == nil && !fi.Mode().IsRegular() {
		// A device or a named pipe would be read without end.
		return nil, fmt.Errorf("--previous: %s is not a regular file (a named pipe, a device or a folder); --previous names the output folder of an earlier ordplan run (its --out, which holds its decisions.json)", path)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("--previous: %w; --previous names the output folder of an earlier ordplan run (its --out, which holds its decisions.json)", err)
	}
	var prev Decisions
	if err := json.Unmarshal(b, &prev); err != nil {
		return nil, fmt.Errorf("--previous: %s is not a decisions record: %v", filepath.Join(prevDir, "decisions.json"), err)
	}
	if prev.Program != "ordplan" {
		// JSON of another shape ({}) reads as a record of nothing: every
		// outcome would be listed as new.
		return nil, fmt.Errorf("--previous: %s is not the decisions record of an ordplan run (it does not say \"program\": \"ordplan\"); --previous names the output folder of an earlier ordplan run (its --out, which holds its decisions.json)", filepath.Join(prevDir, "decisions.json"))
	}
	if prev.Simulated != nil {
		return nil, fmt.Errorf("--previous: %s holds a rehearsal on simulated data (ordplan %s; its decisions.json records simulated_data): a rehearsal's invented data cannot be the earlier run of real data; name the output folder of an earlier ordplan run, or leave --previous out", prevDir, prev.Simulated.Command)
	}
	return &prev, nil
}

// ChangesFrom is Changes with the earlier decisions read (ReadPrevious).
// With the earlier run's record (its run.json, nil when it could not be
// read) and this run (res: its columns, Result.DataColumns, and its
// sensitivity analyses'; nil: not compared), the columns that changed
// are named (dataChanges).
func ChangesFrom(prev *Decisions, prevRec *RunRecord, cur *Decisions, res *Result) []string {
	var out []string
	planChanged := prev.Plan.SHA256 != cur.Plan.SHA256
	if planChanged {
		var keys string
		if prevRec != nil && res != nil {
			keys = planKeyChanges(prevRec.Plan.Canonical, res.Plan.Canonical())
		}
		out = append(out, fmt.Sprintf("The plan changed (sha256 %.12s... -> %.12s...)%s.", prev.Plan.SHA256, cur.Plan.SHA256, keys))
	}
	if c := registrationChange(prev.Registration, cur.Registration); c != "" {
		out = append(out, c)
	}
	var cols []OutcomeColumns
	var canon json.RawMessage
	if res != nil {
		cols, canon = res.DataColumns(), res.Plan.Canonical()
	}
	out = append(out, dataChanges(prev, prevRec, cur, cols, canon, planChanged)...)
	if dataChanged := prev.Data.SHA256 != cur.Data.SHA256; res != nil && prevRec != nil && prevRec.DataColumns != nil && (dataChanged || planChanged) {
		out = append(out, sensitivityColumnChanges(prevRec, res, dataChanged)...)
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
		if c := countsChange(p, o); c != "" {
			out = append(out, fmt.Sprintf("%s: %s.", o.Outcome, c))
		}
		pc, cc := deref(p.Chosen), deref(o.Chosen)
		if pc != cc {
			out = append(out, fmt.Sprintf("%s: the chosen model changed from %s to %s.", o.Outcome, pc, cc))
		} else if o.Chosen != nil {
			out = append(out, chosenChanges(o.Outcome, cc, p, o, sameRowsRecorded(prevRec, cols, o.Outcome))...)
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
	out = append(out, sensitivityChanges(prev.Sensitivity, cur.Sensitivity)...)
	if len(out) == 0 {
		out = append(out, "No decision changed.")
	}
	return out
}

// planKeyChanges names the keys of the plan's canonical form that
// changed between two runs (planKeys), each with its earlier and its new
// value: ": rules[3].alpha 0.05 -> 0.01; ...", says when only the plan's
// wording changed, or is "" when either record lacks the canonical form
// (an older program's).
func planKeyChanges(was, now json.RawMessage) string {
	keys, known := planKeys(was, now)
	switch {
	case !known:
		return ""
	case len(keys) == 0:
		return "; its canonical form is the same: only its wording changed (comments, the order of keys, the deviations list)"
	}
	return ": " + strings.Join(keys, "; ")
}

// planKeys lists the keys of two canonical forms of a plan that differ
// (lock.Diff, as a plan is compared with its lock), each with both
// values; known is false when either form is missing or unreadable.
func planKeys(was, now json.RawMessage) (keys []string, known bool) {
	if len(was) == 0 || len(now) == 0 {
		return nil, false
	}
	changes, err := lock.Diff(was, now)
	if err != nil {
		return nil, false
	}
	for _, c := range changes {
		keys = append(keys, c.Path+" "+c.Transition())
	}
	return keys, true
}

// dataChanges says how the data changed: the file, or each part that
// changed, is new or is no longer read, by name (dataRefChanges), then
// the columns of each outcome that changed and how (ColumnChanges), from
// the earlier record's data_columns; an earlier record without them (an
// older program's) is said to lack them. Columns are compared too when
// only the plan changed (it may read the same data otherwise: other
// missing-value markers, another subset), and then say nothing when
// they are the same.
func dataChanges(prev *Decisions, prevRec *RunRecord, cur *Decisions, cols []OutcomeColumns, canon json.RawMessage, planChanged bool) []string {
	dataChanged := prev.Data.SHA256 != cur.Data.SHA256
	var out []string
	if dataChanged {
		what := "The data changed"
		if ch := dataRefChanges(&prev.Data, &cur.Data); len(ch) > 0 {
			what = capitalize(strings.Join(ch, "; "))
		}
		hash := "sha256"
		if cur.Data.Parts != nil || prev.Data.Parts != nil {
			hash = "sha256 of the parts' sha256s"
		}
		out = append(out, fmt.Sprintf("%s (%s %.12s... -> %.12s...).", what, hash, prev.Data.SHA256, cur.Data.SHA256))
	}
	if cols == nil || (!dataChanged && !planChanged) {
		return out
	}
	switch {
	case prevRec == nil:
		if dataChanged {
			out = append(out, "The folder of --previous holds no readable run.json (the earlier run's record), so which columns of the data changed cannot be said.")
		}
	case prevRec.DataColumns == nil:
		if dataChanged {
			out = append(out, "The earlier run did not record per-column fingerprints of its data (its run.json was written by an older ordplan), so which columns of the data changed cannot be said.")
		}
	default:
		if subset := primarySubsetChange(prevRec.Plan.Canonical, canon); subset != "" {
			// The plan's own subset changed: one line per outcome, as
			// for a sensitivity analysis's subset.
			for _, n := range cols {
				if i := slices.IndexFunc(prevRec.DataColumns, func(o OutcomeColumns) bool { return o.Outcome == n.Outcome }); i >= 0 {
					out = append(out, subsetLine(subset, prevRec.DataColumns[i], n, dataChanged)+".")
				}
			}
			break
		}
		for _, c := range ColumnChanges(prevRec.DataColumns, cols) {
			if dataChanged || !strings.Contains(c, noColumnChanged) && !strings.Contains(c, notComparedLead) {
				out = append(out, c+".")
			}
		}
	}
	return out
}

// capitalize writes s with its first letter in upper case.
func capitalize(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// countsChange says how the outcome's category counts changed ("counts
// per category poor 95, fair 184 (was 96, 184)"), or "" when they did not
// or the categories differ (the plan changed, which is said already).
func countsChange(p, o OutcomeDecisions) string {
	if slices.Equal(p.Counts, o.Counts) || !slices.Equal(p.Categories, o.Categories) || len(o.Counts) != len(o.Categories) || len(p.Counts) != len(o.Counts) {
		return ""
	}
	now := make([]string, len(o.Counts))
	was := make([]string, len(p.Counts))
	for i := range o.Counts {
		now[i] = o.Categories[i] + " " + numfmt.Num(o.Counts[i])
		was[i] = numfmt.Num(p.Counts[i])
	}
	return fmt.Sprintf("counts per category %s (was %s)", strings.Join(now, ", "), strings.Join(was, ", "))
}

// roundingOnly reports whether a chosen model's fits in the earlier run
// (p, log-likelihood llp) and this one (o, llo) differ by rounding
// alone: the columns' fingerprints show the same rows used, maybe in
// another order (sameRows, sameRowsRecorded), with the same counts per
// category, and log-likelihoods equal to 1e-9 of their size (summing the
// same rows in another order moves them by far less). Without the
// fingerprints it is not rounding: a value changed in its last digits
// moves the log-likelihood as little.
func roundingOnly(p, o OutcomeDecisions, llp, llo float64, sameRows bool) bool {
	return sameRows && p.RowsUsed == o.RowsUsed && slices.Equal(p.Counts, o.Counts) && math.Abs(llp-llo) <= 1e-9*math.Max(1, math.Abs(llp))
}

// sameRowsRecorded says whether the earlier run's record (prevRec) and
// this run's columns (cols) show the same rows of an outcome, every used
// value of each together, in any order; false when either lacks them.
func sameRowsRecorded(prevRec *RunRecord, cols []OutcomeColumns, outcome string) bool {
	if prevRec == nil {
		return false
	}
	i := slices.IndexFunc(prevRec.DataColumns, func(c OutcomeColumns) bool { return c.Outcome == outcome })
	j := slices.IndexFunc(cols, func(c OutcomeColumns) bool { return c.Outcome == outcome })
	return i >= 0 && j >= 0 && sameRows(prevRec.DataColumns[i], cols[j])
}

// chosenChanges says, for a model chosen in both runs, how far its
// estimates moved (the largest change in the earlier run's standard
// errors, with the parameter) and which of the plan's hypotheses tested
// in it changed their p-value; nothing when its estimates are the same.
// sameRows: the data's fingerprints show the same rows (roundingOnly).
func chosenChanges(outcome, id string, p, o OutcomeDecisions, sameRows bool) []string {
	pf, of := fitDecision(p, id), fitDecision(o, id)
	if pf == nil || of == nil || pf.LogLik == nil || of.LogLik == nil {
		return nil
	}
	var out []string
	worst, at := -1.0, ""
	for _, name := range sortedKeys(of.Estimates) {
		e, ok := pf.Estimates[name]
		if !ok {
			continue
		}
		// Moves are counted in the earlier run's standard errors; a
		// parameter without a positive one has no such scale.
		se := pf.StdErrors[name]
		if !(se > 0) || math.IsInf(se, 0) {
			continue
		}
		d := math.Abs(of.Estimates[name]-e) / se
		if d > worst {
			worst, at = d, name
		}
	}
	switch {
	case worst > 0 && numfmt.Fixed(worst, 3) == "0.000" && roundingOnly(p, o, *pf.LogLik, *of.LogLik, sameRows):
		// Rounding alone (the same rows summed in another order): no
		// estimate moves at the digits written.
		out = append(out, fmt.Sprintf("%s: %s, chosen in both runs: its estimates moved by less than 0.001 standard errors (of the earlier run), in the last digits only.", outcome, id))
	case worst > 0 && numfmt.Fixed(worst, 3) == "0.000":
		// A real change of the data too small to show at the digits
		// written: not rounding, which the log-likelihood tells (written
		// with the digits that tell the two apart).
		was, now := numPair(*pf.LogLik, *of.LogLik)
		out = append(out, fmt.Sprintf("%s: %s, chosen in both runs: its estimates moved by less than 0.001 standard errors (of the earlier run); log-likelihood %s -> %s.",
			outcome, id, was, now))
	case worst > 0:
		out = append(out, fmt.Sprintf("%s: %s, chosen in both runs: its estimates moved by at most %s standard errors (of the earlier run), the most %s (%s -> %s); log-likelihood %s -> %s.",
			outcome, id, numfmt.Fixed(worst, 3), at, numfmt.Est(pf.Estimates[at]), numfmt.Est(of.Estimates[at]), numfmt.Fixed(*pf.LogLik, 3), numfmt.Fixed(*of.LogLik, 3)))
	}
	for _, h := range o.Hypotheses {
		if h.Model != id || !h.Test.OK {
			continue
		}
		for _, ph := range p.Hypotheses {
			if ph.Model == id && ph.Text == h.Text && ph.Test.OK && ph.Test.P != h.Test.P {
				was, now := numfmt.PValue(ph.Test.P), numfmt.PValue(h.Test.P)
				if was == now {
					was, now = numfmt.Num(ph.Test.P), numfmt.Num(h.Test.P)
				}
				if was == now {
					continue // the same to six digits: rounding only, as when the rows are reordered
				}
				out = append(out, fmt.Sprintf("%s: hypothesis %q in %s: p %s -> %s.", outcome, h.Text, id, was, now))
			}
		}
	}
	return out
}

// fitDecision finds a candidate's record by its id.
func fitDecision(o OutcomeDecisions, id string) *FitDecision {
	for i := range o.Fits {
		if o.Fits[i].ID == id && !o.Fits[i].Auxiliary {
			return &o.Fits[i]
		}
	}
	return nil
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

// RecordChanges says what differs between the records (run.json) of an
// earlier run and of this one, in the order of the record: the plan, each
// input file it lists (the data file or each part, the new-rows file,
// each imputed set) by name, the plan's registration, the
// program (version, build, Go version, system), the command line and the
// time written into the outputs. What the earlier record does not hold
// (written by an older program) is not compared. Nothing when every
// recorded thing is the same.
func RecordChanges(was, now *RunRecord) []string {
	var out []string
	if was.Plan.SHA256 != now.Plan.SHA256 {
		switch keys, known := planKeys(was.Plan.Canonical, now.Plan.Canonical); {
		case known && len(keys) > 0:
			out = append(out, "the plan changed ("+strings.Join(keys, "; ")+")")
		case known:
			out = append(out, "the plan's wording changed (not its canonical form)")
		default:
			out = append(out, "the plan changed")
		}
	}
	dc := dataRefChanges(was.Data, now.Data)
	if names := recordChangedColumns(was, now); len(dc) > 0 && len(names) > 0 {
		dc[len(dc)-1] += fmt.Sprintf(" (%s %s)", plural("column", len(names)), words.AndList(names))
	}
	out = append(out, dc...)
	out = append(out, fileChanges("the new-rows file", refList(was.NewRows), refList(now.NewRows))...)
	out = append(out, fileChanges("the imputed set", was.Imputed, now.Imputed)...)
	// Two plans without a lock have no registration to differ in, whatever
	// their lock files would be called.
	if was.Registration != nil && !sameJSON(was.Registration, now.Registration) && !(unregistered(was.Registration) && unregistered(now.Registration)) {
		out = append(out, "the plan's registration (its comparison with the lock file) changed")
	}
	for _, c := range []struct{ what, was, now string }{
		{"the program version", was.Version, now.Version},
		{"the program's build (source revision)", was.Revision, now.Revision},
		{"the Go version of the build", was.GoVersion, now.GoVersion},
		{"the system", was.Platform, now.Platform},
		// the command line as recorded: without --out, --workers and the like
		{"the command line", was.Command, now.Command},
	} {
		if c.was != "" && c.was != c.now { // "": the earlier program did not record it
			out = append(out, fmt.Sprintf("%s changed (%s -> %s)", c.what, c.was, orNone(c.now)))
		}
	}
	if was.Timestamp != now.Timestamp {
		out = append(out, "the time of the run, which report.timestamp writes into the outputs")
	}
	return out
}

// dataRefChanges says how the data of two records differ: the data
// file, or each part, by name.
func dataRefChanges(was, now *DataRef) []string {
	switch {
	case was == nil && now == nil:
		return nil
	case was == nil || now == nil:
		return []string{"the data changed (one of the runs read none)"}
	case was.SHA256 == now.SHA256 && was.File == now.File && len(was.Parts) == len(now.Parts):
		return nil
	case was.Parts != nil && now.Parts != nil:
		return fileChanges("the part", was.Parts, now.Parts)
	case was.Parts == nil && now.Parts == nil && was.File != "" && was.File != now.File:
		return []string{fmt.Sprintf("the data file is now %s (was %s)", now.File, was.File)}
	case was.Parts == nil && now.Parts == nil:
		return []string{"the data file " + now.File + " changed"}
	}
	return []string{"the data changed from " + dataRefName(was) + " to " + dataRefName(now)}
}

// dataRefName names the data of a record: its file, or its parts.
func dataRefName(r *DataRef) string {
	if r.Parts == nil {
		return "the file " + r.File
	}
	names := make([]string, len(r.Parts))
	for i, p := range r.Parts {
		names[i] = p.File
	}
	return data.PartsName(names)
}

// fileChanges says which files of a list (what names one: "the part")
// changed, are new or are no longer read, by name; a list read in
// another order is said so.
func fileChanges(what string, was, now []DataRef) []string {
	var out []string
	if len(was) == 1 && len(now) == 1 && was[0].File != now[0].File {
		return []string{fmt.Sprintf("%s is now %s (was %s)", what, now[0].File, was[0].File)}
	}
	before := map[string]string{}
	for _, r := range was {
		before[r.File] = r.SHA256
	}
	var added []string
	for _, r := range now {
		h, ok := before[r.File]
		switch {
		case !ok:
			added = append(added, r.File)
		case h != r.SHA256:
			out = append(out, what+" "+r.File+" changed")
		}
		delete(before, r.File)
	}
	if len(added) > 0 {
		out = append(out, fmt.Sprintf("%s %s new", plural(what, len(added)), words.AndList(added)+isAre(len(added))))
	}
	var gone []string
	for _, r := range was {
		if _, ok := before[r.File]; ok {
			gone = append(gone, r.File)
		}
	}
	if len(gone) > 0 {
		out = append(out, fmt.Sprintf("%s %s no longer read", plural(what, len(gone)), words.AndList(gone)+isAre(len(gone))))
	}
	if len(out) == 0 && !slices.EqualFunc(was, now, func(a, b DataRef) bool { return a.File == b.File }) {
		out = append(out, fmt.Sprintf("%ss are read in another order", what))
	}
	return out
}

func plural(what string, n int) string {
	if n == 1 {
		return what
	}
	return what + "s"
}

func isAre(n int) string {
	if n == 1 {
		return " is"
	}
	return " are"
}

// refList is a record's optional file as a list.
func refList(r *DataRef) []DataRef {
	if r == nil {
		return nil
	}
	return []DataRef{*r}
}

func orNone(s string) string {
	if s == "" {
		return "none recorded"
	}
	return s
}

// sameJSON says whether a and b encode alike.
func sameJSON(a, b any) bool {
	x, err1 := json.Marshal(a)
	y, err2 := json.Marshal(b)
	return err1 == nil && err2 == nil && string(x) == string(y)
}

// sensitivityChanges says which sensitivity analyses are new or gone, and
// under which the chosen model of an outcome changed or it could be run
// no longer or again, in the current plan's order.
func sensitivityChanges(prev, cur []SensitivityRecord) []string {
	var out []string
	for _, c := range cur {
		i := slices.IndexFunc(prev, func(p SensitivityRecord) bool { return p.Name == c.Name })
		if i < 0 {
			out = append(out, fmt.Sprintf("Sensitivity analysis %s is new.", c.Name))
			continue
		}
		p := prev[i]
		switch {
		case p.Error == "" && c.Error != "":
			out = append(out, fmt.Sprintf("Sensitivity analysis %s could not be run this time.", c.Name))
			continue
		case p.Error != "" && c.Error == "":
			out = append(out, fmt.Sprintf("Sensitivity analysis %s could be run this time.", c.Name))
			continue
		}
		for _, o := range c.Outcomes {
			for _, po := range p.Outcomes {
				if po.Outcome == o.Outcome && deref(po.Chosen) != deref(o.Chosen) {
					out = append(out, fmt.Sprintf("Sensitivity analysis %s: %s: the chosen model changed from %s to %s.", c.Name, o.Outcome, deref(po.Chosen), deref(o.Chosen)))
				}
			}
		}
	}
	for _, p := range prev {
		if !slices.ContainsFunc(cur, func(c SensitivityRecord) bool { return c.Name == p.Name }) {
			out = append(out, fmt.Sprintf("Sensitivity analysis %s is no longer in the plan.", p.Name))
		}
	}
	return out
}

// unregistered reports whether a run's record says its plan had no lock
// file (state none).
func unregistered(r *RegistrationRecord) bool {
	return r != nil && r.State == "none"
}
