package render

import (
	"fmt"

	"ordplan/plan/lock"
	"ordplan/runner"
)

// writeRegistration opens the report with the plan compared with its lock:
// "Registered plan: matches", or the Deviations section (key, frozen value,
// value of this run, stated reason). Unexplained changes let through by
// the command line are announced in the first lines.
func writeRegistration(d *doc, r *runner.Result) {
	st := r.Registration
	if st == nil {
		return
	}
	f := st.Lock
	frozen := func() string {
		s := fmt.Sprintf("%s, frozen at %s by ordplan %s, canonical sha256 `%s`", mdCode(st.LockFile), f.FrozenAt, f.Version, f.SHA256)
		if f.Registration != "" {
			s += ", registration " + f.Registration
		}
		return s
	}
	switch st.State {
	case lock.StateNone:
		d.p("**Registered plan: none.** No lock file (%s) lies beside the plan, so nothing shows when this plan was fixed; `ordplan freeze` writes one before the data are seen.", mdCode(st.LockFile))
		if len(st.Unused) > 0 {
			d.p("The plan lists %d deviation(s), but without a lock there is no registered plan to compare with.", len(st.Unused))
		}
		return
	case lock.StateMatches:
		d.p("**Registered plan: matches** (%s). The plan run here is the frozen plan, key for key.", frozen())
		writeUnusedDeviations(d, st)
		return
	case lock.StateUnexplained:
		d.p("**UNREGISTERED CHANGES: %d of the %d change(s) from the registered plan have no reason in the plan's `deviations` list; the run was forced with `--allow-unregistered-changes`.** Results that depend on these changes were not fixed before the data were seen.",
			st.Unexplained(), len(st.Changes))
	}
	d.h(2, "Deviations from the registered plan")
	d.p("The registered plan is %s. This run departs from it in %d key(s) of the canonical form:", frozen(), len(st.Changes))
	rows := make([][]string, 0, len(st.Changes))
	for _, c := range st.Changes {
		reason := c.Reason
		if reason == "" {
			reason = md("**no stated reason**")
		}
		rows = append(rows, []string{md(mdCode(c.Path)), md(codeCell(c.From)), md(codeCell(c.To)), reason})
	}
	d.table([]string{"Key", "Registered", "This run", "Stated reason"}, rows)
	if f.Version != r.Version {
		d.p("The lock was written by ordplan %s and this is ordplan %s: a key that the newer program adds to the canonical form shows as a change from (absent) although the plan file did not change.", f.Version, r.Version)
	}
	writeUnusedDeviations(d, st)
}

func codeCell(s string) string {
	if s == lock.Absent {
		return "(absent)"
	}
	return mdCode(s)
}

// writeUnusedDeviations lists stated deviations that explain nothing.
func writeUnusedDeviations(d *doc, st *lock.Status) {
	if len(st.Unused) == 0 {
		return
	}
	var items []string
	for _, dv := range st.Unused {
		items = append(items, fmt.Sprintf("`%s` (plan line %d): %s", dv.Key, dv.Line, dv.Reason))
	}
	d.p("The plan's `deviations` list also names key(s) that did not change from the registered plan:")
	d.list(items)
}
