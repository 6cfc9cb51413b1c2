package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"time"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/plan/lock"
	"ordplan/runner"
)

const freezeUsage = "usage: ordplan freeze PLAN.yaml [--registration ID] [--replace]"

// cmdFreeze writes the lock file of a plan.
func cmdFreeze(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("freeze", stderr)
	reg := fs.String("registration", "", "identifier of the registration (e.g. the registry's id or DOI), recorded in the lock")
	replace := fs.Bool("replace", false, "replace an existing lock (the old one is kept as LOCK.replaced-TIME)")
	planPath, stop, code := planArg(fs, args, freezeUsage, stderr)
	if stop {
		return code
	}
	if strings.ContainsAny(*reg, "\n\r\t") {
		fmt.Fprintln(stderr, "ordplan freeze: --registration must be one line of text")
		return exitUsage
	}
	src, err := plan.ReadFile(planPath)
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	// The data usually do not exist yet: the plan is checked on its own.
	p, err := plan.Parse(src, planPath)
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitFail
	}
	if refuseUnedited(p, stderr) {
		return exitFail
	}
	f := lock.New(p, strings.TrimSpace(*reg), time.Now(), runner.Version)
	path, kept, err := lock.Write(f, planPath, *replace)
	if err != nil {
		var ee *lock.ExistsError
		if errors.As(err, &ee) {
			fmt.Fprintf(stderr, "ordplan freeze: %v\n", err)
			return exitFail
		}
		return fail(stderr, err)
	}
	if kept != "" {
		fmt.Fprintf(stdout, "old lock kept as %s\n", kept)
	}
	fmt.Fprintf(stdout, "froze %s: %s (canonical sha256 %s, %s)\n", planPath, path, f.SHA256, f.FrozenAt)
	if len(p.Deviations) > 0 {
		fmt.Fprintf(stdout, "note: the plan's deviations list (%s) is not part of the frozen form; it explains later changes\n", words.Count(len(p.Deviations), "item", "items"))
	}
	return exitOK
}

// planArg reads the one plan path of a command, before or after its flags,
// and parses the flags. stop is true when the command must end with code:
// help was asked, a flag was wrong, or there is not exactly one plan path
// (then a line naming what is missing or too many, and usage, C14).
func planArg(fs *flag.FlagSet, args []string, usage string, stderr io.Writer) (path string, stop bool, code int) {
	path, args = leadingArg(args)
	for {
		if stop, code := parseFlags(fs, args); stop {
			return "", true, code
		}
		// The flag package stops at the first argument that is not a
		// flag: the plan between options (run --previous A plan.yaml
		// --out B) is taken, and the options after it parsed too.
		if fs.NArg() == 0 || path != "" {
			break
		}
		path, args = fs.Arg(0), fs.Args()[1:]
	}
	switch {
	case path == "":
		fmt.Fprintf(stderr, "%s: no plan file given: name one (a YAML file)\n", fs.Name())
	case fs.NArg() > 0:
		extra := fs.Args()
		noun := "argument"
		if len(extra) > 1 {
			noun = "arguments"
		}
		fmt.Fprintf(stderr, "%s: unexpected %s %s after the plan %s: the command takes one plan file\n", fs.Name(), noun, words.AndList(words.Each(extra, strconv.Quote)), path)
	default:
		return path, false, exitOK
	}
	fmt.Fprintln(stderr, usage)
	return "", true, exitUsage
}

// leadingArg takes a plan path written before the options.
func leadingArg(args []string) (string, []string) {
	if len(args) > 0 && len(args[0]) > 0 && args[0][0] != '-' {
		return args[0], args[1:]
	}
	return "", args
}

// registration compares the plan with its lock for run and check. An
// unexplained change is printed in full and stops the command.
func registration(p *plan.Plan, allow bool, stderr io.Writer) (*lock.Status, int) {
	st, err := lock.CheckVersion(p, allow, runner.Version)
	if err != nil {
		fmt.Fprintf(stderr, "ordplan: %v\n", err)
		return nil, exitFail
	}
	return st, exitOK
}

// printRegistration prints what check, run, rehearse and power say of the
// plan's registration: the one-line summary, with changes each change and
// its reason (check), then a note on each stated deviation that explains
// no change (R7), a misspelt key or a list left from before a lock was
// removed, and on each lock that freeze --replace replaced (R16), which
// the report lists too.
func printRegistration(w io.Writer, st *lock.Status, changes bool) {
	fmt.Fprintln(w, registrationLine(st))
	if changes {
		for _, c := range st.Changes {
			fmt.Fprintf(w, "  %s: %s (%s)\n", c.Path, c.Transition(), c.ReasonText("NO STATED REASON"))
		}
	}
	for _, dv := range st.Unused {
		fmt.Fprintf(w, "note: %s\n", st.UnusedNote(dv))
	}
	for _, r := range st.Replaced {
		fmt.Fprintf(w, "note: %s\n", st.ReplacedNote(r))
	}
}

// earlierRegisteredNote says, after run's registration lines, that the
// output folder held runs of the registered plan unchanged
// (runner.EarlierRegisteredRuns), which the report lists: of a plan that
// departs from its lock, results that existed before it was changed; of
// one that matches it, results of the same analysis on other data; ""
// when it held none.
func earlierRegisteredNote(st *lock.Status, runs []runner.EarlierRun) string {
	if st == nil || len(runs) == 0 {
		return ""
	}
	n := words.Count(len(runs), "run", "runs")
	their, them := "its results", "it"
	if len(runs) > 1 {
		their, them = "their results", "them"
	}
	if st.State == lock.StateMatches {
		return fmt.Sprintf("the output folder held %s of this registered plan on other data: if these data extend those, the data have been analysed more than once, and the p-values make no allowance for it; the report lists %s", n, them)
	}
	return fmt.Sprintf("the output folder held %s of the registered plan unchanged: %s existed before the plan was changed, so the deviations may have been chosen after seeing them; the report lists %s", n, their, them)
}

// earlierLocksNotes say, after run's registration lines, that the output
// folder held runs made with no lock (before the plan was registered) or
// under another lock of the plan than its lock now
// (runner.EarlierLockRuns), which the report lists: none when it held
// none.
func earlierLocksNotes(st *lock.Status, runs []runner.EarlierLockRun) []string {
	var locks []string
	before, under := 0, 0
	for _, r := range runs {
		if r.Unregistered() {
			before++
			continue
		}
		under++
		l := "frozen " + r.LockFrozenAt
		if r.KeptAs != "" {
			l += ", kept as " + r.KeptAs
		} else {
			l += ", no longer kept beside the plan"
		}
		if !slices.Contains(locks, l) {
			locks = append(locks, l)
		}
	}
	// One run in the singular, several in the plural.
	forms := func(n int) (their, notRuns, them string) {
		if n == 1 {
			return "its results", "it is not a run", "it"
		}
		return "their results", "they are not runs", "them"
	}
	var notes []string
	if before > 0 {
		their, notRuns, them := forms(before)
		notes = append(notes, fmt.Sprintf("the output folder held %s made when the plan had no lock file: %s existed before the plan was registered as it is now (%s, frozen %s), so the plan may have been written after seeing them, and %s of the registered plan; the report lists %s",
			words.Count(before, "run", "runs"), their, st.LockFile, st.Lock.FrozenAt, notRuns, them))
	}
	if under > 0 {
		their, notRuns, them := forms(under)
		since := "before the plan was frozen anew, and " + notRuns + " of the registered plan, which counts only from " + st.LockFile + "'s time"
		if st.State == lock.StateNone {
			since = "before the plan's lock (" + st.LockFile + ") was removed"
		}
		notes = append(notes, fmt.Sprintf("the output folder held %s made under an earlier lock of this plan (%s): %s existed %s; the report lists %s",
			words.Count(under, "run", "runs"), strings.Join(locks, "; "), their, since, them))
	}
	return notes
}

// registrationLine is the one-line summary check and run print.
func registrationLine(st *lock.Status) string {
	switch st.State {
	case lock.StateNone:
		return "registered plan: none (no " + st.LockFile + " beside the plan; `ordplan freeze` writes one)"
	case lock.StateMatches:
		return "registered plan: matches " + st.LockFile + " (frozen " + st.Lock.FrozenAt + ")"
	case lock.StateDeviations:
		return fmt.Sprintf("registered plan: %s from %s, each with a stated reason", words.Count(len(st.Changes), "deviation", "deviations"), st.LockFile)
	}
	count, have := st.UnexplainedOf()
	return fmt.Sprintf("registered plan: UNREGISTERED CHANGES: %s from %s %s no stated reason (allowed by --allow-unregistered-changes)",
		count, st.LockFile, have)
}
