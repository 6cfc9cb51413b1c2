package render

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan/lock"
	"ordplan/runner"
)

// lockWords are the sentences of the registration paragraph that depend
// on what the report is of: a run of the plan on data, a rehearsal of it on
// simulated data, or a power study, which simulates the plan and whose numbers belong to the
// plan it simulated.
type lockWords struct {
	none    string // after "No lock file (X) lies beside the plan, "
	matches string // after "Registered plan: matches (lock)."
	forced  string // after "... the X was forced with --allow-unregistered-changes."
	departs string // "This run departs from it": the plan the report is of
	what    string // "run": what was forced
	// folder: the report is of a run on data, which names the runs of
	// the registered plan its output folder held (writeEarlierRegistered).
	folder bool
}

var (
	runLockWords = lockWords{
		none:    "so nothing shows when this plan was fixed; `ordplan freeze` writes one before the data are seen.",
		matches: "The plan run here is the frozen plan, key for key.",
		forced:  "Results that depend on these changes were not fixed before the data were seen.",
		departs: "This run departs from it",
		what:    "run",
		folder:  true,
	}
	rehearseLockWords = lockWords{
		none:    "so nothing shows when this plan was fixed; `ordplan freeze` writes one before the real data are seen.",
		matches: "The plan rehearsed here is the frozen plan, key for key.",
		forced:  "This rehearsal, on simulated data, shows how a plan that differs from the registered one in these keys would run; a run of it on the real data would not be the registered analysis.",
		departs: "The plan rehearsed here departs from it",
		what:    "rehearsal",
	}
	powerLockWords = lockWords{
		none:    "so nothing ties these numbers to a registered analysis but the plan's SHA-256 above; `ordplan freeze` fixes the plan, with the sample size chosen, before the data are seen.",
		matches: "The plan simulated here is the frozen plan, key for key: the power and model choice below are those of the registered analysis.",
		forced:  "The power and model choice below are those of a plan that differs from the registered one in these keys.",
		departs: "The plan simulated here, whose power and model choice are below, departs from it",
		what:    "study",
	}
)

// writeRegistration opens the report with the plan compared with its lock:
// "Registered plan: matches", or the Deviations section (key, frozen value,
// value of this run, stated reason). Unexplained changes let through by
// the command line are announced in the first lines.
func writeRegistration(d *doc, r *runner.Result) {
	words := runLockWords
	if r.Simulated != nil {
		words = rehearseLockWords
	}
	writeLockStatus(d, r.Registration, r.Version, words, r.EarlierRegistered, r.UnderEarlierLocks)
}

// writeLockStatus writes the plan compared with its lock (st nil: not
// compared) in the words of the kind of report; version is the program's,
// earlier the runs of the registered plan the output folder holds
// (runner.EarlierRegisteredRuns), underEarlier its runs under other locks
// of the plan (runner.EarlierLockRuns).
func writeLockStatus(d *doc, st *lock.Status, version string, w lockWords, earlier []runner.EarlierRun, underEarlier []runner.EarlierLockRun) {
	if st == nil {
		return
	}
	defer func() {
		writeReplacedLocks(d, st, w, w.folder && slices.ContainsFunc(underEarlier, func(e runner.EarlierLockRun) bool { return !e.Unregistered() }))
		if w.folder {
			writeUnderEarlierLocks(d, st, underEarlier)
		}
	}()
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
		d.p("**Registered plan: none.** No lock file (%s) lies beside the plan, %s", mdCode(st.LockFile), w.none)
		if len(st.Unused) > 0 {
			d.p("The plan lists %s, but without a lock there is no registered plan to compare with.", words.Count(len(st.Unused), "deviation", "deviations"))
		}
		return
	case lock.StateMatches:
		d.p("**Registered plan: matches** (%s). %s", frozen(), w.matches)
		if w.folder {
			writeEarlierLooks(d, earlier)
		}
		writeUnusedDeviations(d, st)
		return
	case lock.StateUnexplained:
		count, have := st.UnexplainedOf()
		d.p("**UNREGISTERED CHANGES: %s from the registered plan %s no reason in the plan's `deviations` list; the %s was forced with `--allow-unregistered-changes`.** %s",
			count, have, w.what, w.forced)
	}
	d.h(2, "Deviations from the registered plan")
	d.p("The registered plan is %s. %s in %d key%s of the canonical form:", frozen(), w.departs, len(st.Changes), plural(len(st.Changes)))
	rows := make([][]string, 0, len(st.Changes))
	for _, c := range st.Changes {
		reason := c.Reason
		switch {
		case c.Follows != "":
			reason = c.ReasonText("no stated reason")
		case reason == "":
			reason = md("**no stated reason**")
		}
		key, to := mdCode(c.Path), codeCell(c.To)
		if c.Moved != "" {
			key, to = key+", moved from "+mdCode(c.Moved), "the same (moved)"
			if len(c.Keys) > 0 {
				to = codeCell(c.To) + "; changed in it: " + keyChanges(c.Keys)
			}
		}
		rows = append(rows, []string{md(key), md(codeCell(c.From)), md(to), reason})
	}
	d.table([]string{"Key", "Registered", "This " + w.what, "Stated reason"}, rows)
	if note := fromZero(st.Changes); note != "" {
		d.p("%s", note)
	}
	if w.folder {
		writeEarlierRegistered(d, earlier)
	}
	if f.Version != version {
		d.p("The lock was written by ordplan %s and this is ordplan %s: a key that the newer program adds to the canonical form shows as a change from (absent) although the plan file did not change.", f.Version, version)
	}
	writeUnusedDeviations(d, st)
}

// fromZero says, when a key of the changes indexes a list, that key
// paths count a list's items from 0, with the first such key as example
// (a rule's preferred): rules[3] is the report's rule 4, not its rule 3.
func fromZero(changes []lock.Explained) string {
	var first string
	for _, c := range changes {
		for _, k := range []string{c.Path, c.Moved} {
			i := strings.Index(k, "[")
			j := strings.Index(k, "]")
			if i <= 0 || j < i {
				continue
			}
			if first == "" || !strings.HasPrefix(first, "rules[") && strings.HasPrefix(k, "rules[") {
				first = k[:j+1]
			}
		}
	}
	if first == "" {
		return ""
	}
	i := strings.Index(first, "[")
	n, err := strconv.Atoi(first[i+1 : len(first)-1])
	if err != nil {
		return ""
	}
	if list := first[:i]; list == "rules" {
		return fmt.Sprintf("Key paths count the items of a list from 0: %s is rule %d in this report's lists of rules.", mdCode(first), n+1)
	}
	return fmt.Sprintf("Key paths count the items of a list from 0: %s is item %d of the plan's %s.", mdCode(first), n+1, mdCode(first[:i]))
}

// keyChanges writes the keys that changed within an item that moved
// (lock.Change.Keys), each with both values: "`alpha`: `0.05` → `0.01`".
func keyChanges(keys []lock.Change) string {
	out := make([]string, len(keys))
	for i, k := range keys {
		out[i] = fmt.Sprintf("%s: %s → %s", mdCode(k.Path), codeCell(k.From), codeCell(k.To))
	}
	return strings.Join(out, "; ")
}

func codeCell(s string) string {
	if s == lock.Absent {
		return "(absent)"
	}
	return mdCode(s)
}

// writeReplacedLocks names the earlier locks of the plan that ordplan
// freeze --replace kept beside its lock (R16): the plan was frozen anew,
// so it counts as registered only from the lock's time, and a reader
// compares it with the first form; with no lock left, the kept one says
// the plan was frozen once. runsBefore: the output folder held runs made
// under an earlier lock (writeUnderEarlierLocks lists them next).
func writeReplacedLocks(d *doc, st *lock.Status, w lockWords, runsBefore bool) {
	if len(st.Replaced) == 0 {
		return
	}
	var items []string
	for _, r := range st.Replaced {
		if r.Error != "" {
			items = append(items, fmt.Sprintf("%s: cannot be read (%s)", mdCode(r.File), mdText(r.Error)))
			continue
		}
		item := fmt.Sprintf("%s, frozen at %s", mdCode(r.File), r.FrozenAt)
		if r.Registration != "" {
			item += ", registration " + r.Registration
		}
		item += fmt.Sprintf(", canonical sha256 `%s`: ", r.SHA256)
		if len(r.Changed) == 0 {
			item += "the plan of this " + w.what + " is the same, key for key"
		} else {
			keys := make([]string, len(r.Changed))
			for i, k := range r.Changed {
				keys[i] = mdCode(k)
			}
			item += fmt.Sprintf("the plan of this %s differs from it in %s: %s", w.what, words.Count(len(keys), "key", "keys"), words.AndList(keys))
		}
		items = append(items, item)
	}
	if st.State == lock.StateNone {
		d.p("**An earlier lock of this plan is kept beside it** (`ordplan freeze --replace` kept it when the plan was frozen anew), but the lock itself (%s) is gone: the plan was registered, and its registration is no longer read. Put the lock back, or freeze the plan again.", mdCode(st.LockFile))
	} else {
		known := "and this report cannot tell whether the data had been seen by then"
		if runsBefore {
			known = "and this output folder held results of a run under an earlier lock before it was frozen anew (listed below)"
		}
		d.p("**Frozen anew.** The lock %s replaced an earlier lock of this plan (`ordplan freeze --replace`), kept beside it. The plan counts as registered only from the time of %s: what changed since the first lock was not fixed then, %s.", mdCode(st.LockFile), mdCode(st.LockFile), known)
	}
	d.list(items)
}

// writeUnusedDeviations lists stated deviations that explain nothing.
func writeUnusedDeviations(d *doc, st *lock.Status) {
	if len(st.Unused) == 0 {
		return
	}
	var items []string
	for _, dv := range st.Unused {
		item := fmt.Sprintf("%s (plan line %d): %s", mdCode(dv.Key), dv.Line, mdText(dv.Reason))
		if k := st.NearestChanged(dv); k != "" {
			item += fmt.Sprintf(" (a misspelling of `%s`, which changed?)", k)
		}
		items = append(items, item)
	}
	d.p("The plan's `deviations` list also names keys that did not change from the registered plan:")
	d.list(items)
}

// heldRuns begins the sentence of the runs an output folder held: "**This
// output folder already held 2 runs WHAT**, 1 of them on the same data as
// this run" ("1 run WHAT**, on the same data as this run" for one run);
// one says whether the sentence goes on in the singular (sing).
func heldRuns(n, same int, what string) (lead string, one bool) {
	lead = fmt.Sprintf("**This output folder already held %s %s**", words.Count(n, "run", "runs"), what)
	switch {
	case n == 1 && same == 1:
		lead += ", on the same data as this run"
	case same > 0:
		lead += fmt.Sprintf(", %d of them on the same data as this run", same)
	}
	return lead, n == 1
}

// sing is singular if one, else plural.
func sing(one bool, singular, plural string) string {
	if one {
		return singular
	}
	return plural
}

// writeEarlierRegistered says which runs of the registered plan, unchanged,
// the output folder held when this run, which departs from it, was made:
// their results existed before the deviations were run, which a reader
// weighing the stated reasons needs to know. The program knows only this
// folder's runs.
func writeEarlierRegistered(d *doc, earlier []runner.EarlierRun) {
	if len(earlier) == 0 {
		d.p("This output folder held no earlier run of the registered plan unchanged (the program knows only the runs of this folder, its run.json and those kept under earlier/).")
		return
	}
	writeHeldRegistered(d, earlier, "of the registered plan unchanged", func(one bool) string {
		return sing(one, "its results", "their results") + " existed before this run departed from the plan, so the deviations above may have been chosen after seeing them."
	})
}

// writeHeldRegistered lists runs of the registered plan that the output
// folder held, each by the SHA-256 of its decisions.json, after a lead
// saying what they are (heldRuns) and why says why they matter (in the
// words for one run or several).
func writeHeldRegistered(d *doc, earlier []runner.EarlierRun, what string, why func(one bool) string) {
	items := make([]string, len(earlier))
	same := 0
	for i, e := range earlier {
		items[i] = earlierRunItem(e, &same)
	}
	lead, one := heldRuns(len(earlier), same, what)
	d.p("%s: %s %s named by the SHA-256 of %s decisions.json (in this folder's run.json or under earlier/):",
		lead, why(one), sing(one, "It is", "They are"), sing(one, "its", "their"))
	d.list(items)
}

// writeEarlierLooks names the runs of the registered plan, unchanged,
// on other data, that the output folder held when this run of the same
// plan was made (runner.EarlierRegisteredRuns of a plan matching its
// lock): the analysis was run before, on other data, perhaps fewer rows
// of the same study, and its results existed before these.
func writeEarlierLooks(d *doc, earlier []runner.EarlierRun) {
	if len(earlier) == 0 {
		return
	}
	writeHeldRegistered(d, earlier, "of this registered plan on other data", func(one bool) string {
		return sing(one, "its results", "their results") + " of the same analysis existed before this run. If these data extend those (rows added as the study went on), the data have been analysed more than once, and the p-values and intervals below make no allowance for it (see Assumptions and limits)."
	})
}

// earlierLooksSentence is the limit of a run of the registered plan whose
// output folder held runs of it on other data (writeEarlierLooks), or "".
func earlierLooksSentence(r *runner.Result) string {
	st := r.Registration
	if st == nil || st.State != lock.StateMatches || len(r.EarlierRegistered) == 0 || r.Simulated != nil {
		return ""
	}
	return fmt.Sprintf("This output folder held %s of the same registered plan on other data (listed at the head of the report). If these data extend those, this is another look at accumulating data: the p-values and intervals here make no allowance for repeated looks, and a result that crosses a threshold only at a later look is weaker evidence than its p-value says.", words.Count(len(r.EarlierRegistered), "run", "runs"))
}

// writeUnderEarlierLocks names the runs the output folder held that were
// made under another registration of the plan than its lock now
// (runner.EarlierLockRuns): first those made while the plan had no lock,
// whose results existed before it was registered, then those made under
// a lock that freeze --replace replaced, or one since removed, whose
// results existed before the plan was frozen anew. Neither are runs of
// the registered plan, and a reader weighing the registration needs to
// know of them. Each is named by the SHA-256 of its decisions.json, with
// the registration its run.json records, apart from the runs under the
// lock now (writeEarlierRegistered).
func writeUnderEarlierLocks(d *doc, st *lock.Status, runs []runner.EarlierLockRun) {
	var before, under []string
	sameBefore, sameUnder := 0, 0
	for _, e := range runs {
		if e.Unregistered() {
			when := "its run.json records no time (the plan did not ask for timestamps), so it was run before the plan was first frozen or while its lock was missing"
			if e.BeforeFirstLock != nil {
				when = "before the plan was first frozen"
				if !*e.BeforeFirstLock {
					when = "after the plan was first frozen, while its lock was missing"
				}
			}
			before = append(before, fmt.Sprintf("%s; with no lock file, %s", earlierRunItem(e.EarlierRun, &sameBefore), when))
			continue
		}
		at := fmt.Sprintf("under the lock frozen at %s, canonical sha256 `%s`", e.LockFrozenAt, e.LockSHA256)
		if e.LockRegistration != "" {
			at += ", registration " + e.LockRegistration
		}
		if e.KeptAs != "" {
			at += ", kept as " + mdCode(e.KeptAs)
		} else {
			at += ", a lock no longer kept beside the plan"
		}
		how := "the plan then matched it"
		switch e.State {
		case lock.StateDeviations:
			how = "the plan then departed from it, each change with a stated reason"
		case lock.StateUnexplained:
			how = "the plan then departed from it with changes forced by `--allow-unregistered-changes`"
		}
		under = append(under, fmt.Sprintf("%s; %s; %s", earlierRunItem(e.EarlierRun, &sameUnder), at, how))
	}
	if len(before) > 0 {
		lead, one := heldRuns(len(before), sameBefore, "made before this plan was registered")
		d.p("%s: %s existed before the plan was registered as it is now (%s, frozen at %s), so the registered plan may have been written after seeing them: its lock does not show that the analysis was fixed before these results were seen. %s of the registered plan. %s named by the SHA-256 of %s decisions.json (in this folder's run.json or under earlier/):",
			lead, sing(one, "its results", "their results"), mdCode(st.LockFile), st.Lock.FrozenAt, sing(one, "It is not a run", "They are not runs"), sing(one, "It is", "They are"), sing(one, "its", "their"))
		d.list(before)
	}
	if len(under) == 0 {
		return
	}
	lead, one := heldRuns(len(under), sameUnder, "made under an earlier lock of this plan")
	its := sing(one, "its results", "their results")
	var since string
	if st.State == lock.StateNone {
		since = fmt.Sprintf("%s existed before the plan's lock was removed. %s of a registration the plan no longer has", its, sing(one, "It is a run", "They are runs"))
	} else {
		since = fmt.Sprintf("%s existed before the plan was frozen anew as %s, so the changes made in freezing it anew may have been chosen after seeing them. %s of the registered plan, which counts only from the time of %s", its, mdCode(st.LockFile), sing(one, "It is not a run", "They are not runs"), mdCode(st.LockFile))
	}
	d.p("%s: %s. %s named by the SHA-256 of %s decisions.json (in this folder's run.json or under earlier/), %s the lock its run.json records:", lead, since, sing(one, "It is", "They are"), sing(one, "its", "their"), sing(one, "with", "each with"))
	d.list(under)
}

// earlierRunItem names an earlier run of the output folder by its
// decisions.json and says whether it read this run's data, counting it in
// same when it did.
func earlierRunItem(e runner.EarlierRun, same *int) string {
	data := "on other data (sha256 `" + short(e.DataSHA256) + "`)"
	if e.SameData {
		data = "on the same data"
		*same++
	}
	s := fmt.Sprintf("decisions.json sha256 `%s`, %s", short(e.DecisionsSHA256), data)
	if e.Time != "" {
		s += ", run at " + e.Time
	}
	return s
}
