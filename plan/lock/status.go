package lock

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
)

// States of a plan against its lock.
const (
	StateNone        = "none"        // no lock beside the plan
	StateMatches     = "matches"     // the canonical form is the frozen one
	StateDeviations  = "deviations"  // it differs, and the plan gives a reason for every change
	StateUnexplained = "unexplained" // some change has no reason (run only with AllowUnexplained)
)

// Status is a plan compared with its lock.
type Status struct {
	State    string
	LockFile string // base name of the lock file (also when there is none)
	Lock     *File  // nil when there is none
	Changes  []Explained
	// Unused lists stated deviations whose key changed nowhere.
	Unused []plan.Deviation
	// Allowed is set when unexplained changes were let through by the
	// command line (--allow-unregistered-changes).
	Allowed bool
	// Replaced are the earlier locks of the plan that freeze --replace
	// kept beside the lock, oldest first (replacedLocks).
	Replaced []Replaced
	// RemovedSensitivity are the sensitivity analyses of the frozen plan
	// that the plan no longer has under their name (removed, or renamed),
	// in the frozen order (removedSensitivity).
	RemovedSensitivity []RemovedAnalysis
}

// RemovedAnalysis is a registered sensitivity analysis the plan no
// longer has: its name and the reason stated for its removal (a
// deviation covering its key in the frozen plan; "" when none).
type RemovedAnalysis struct {
	Name   string `json:"name"`
	Key    string `json:"key"` // its key in the frozen plan, sensitivity[i]
	Reason string `json:"reason"`
}

// removedSensitivity finds the sensitivity analyses of the frozen
// canonical form whose names the plan's analyses no longer have.
func removedSensitivity(p *plan.Plan, frozen []byte) []RemovedAnalysis {
	var f struct {
		Sensitivity []struct {
			Name string `json:"name"`
		} `json:"sensitivity"`
	}
	if json.Unmarshal(frozen, &f) != nil {
		return nil
	}
	var out []RemovedAnalysis
	for i, s := range f.Sensitivity {
		if slices.ContainsFunc(p.Sensitivity, func(n plan.Sensitivity) bool { return n.Name == s.Name }) {
			continue
		}
		ra := RemovedAnalysis{Name: s.Name, Key: fmt.Sprintf("sensitivity[%d]", i)}
		if k := stated(p.Deviations, ra.Key); k >= 0 {
			ra.Reason = p.Deviations[k].Reason
		}
		out = append(out, ra)
	}
	return out
}

// Explained is a change with the reason the plan gives for it ("" if none).
type Explained struct {
	Change
	Reason string `json:"reason"`
}

// ReasonText is the stated reason of a change as lists of changes show
// it, saying first the key it follows (Follows): "follows title: WHY";
// none gives the words for a change without a stated reason.
func (e Explained) ReasonText(none string) string {
	r := e.Reason
	if r == "" {
		r = none
	}
	if e.Follows != "" {
		return "follows " + e.Follows + ": " + r
	}
	return r
}

// Unexplained counts the changes without a stated reason, but for those
// that are part of another key's change (Follows), counted with it.
func (s *Status) Unexplained() int {
	n := 0
	for _, c := range s.Changes {
		if c.Reason == "" && c.Follows == "" {
			n++
		}
	}
	return n
}

// UnexplainedOf words the count of changes without a stated reason among
// all the changes, with its verb: "1 of the 4 changes", "has"; "the 1
// change", "has"; "all 3 changes", "have" (the registration line of
// check and run, and the report's opening).
func (s *Status) UnexplainedOf() (count, verb string) {
	n, all := s.Unexplained(), len(s.Changes)
	verb = "have"
	if n == 1 {
		verb = "has"
	}
	switch {
	case n == all && n == 1:
		return "the 1 change", verb
	case n == all:
		return fmt.Sprintf("all %d changes", n), verb
	}
	return fmt.Sprintf("%d of the %s", n, words.Count(all, "change", "changes")), verb
}

// Compare compares a plan with a lock.
func Compare(p *plan.Plan, f *File) (*Status, error) {
	frozen, err := indentCanonical(f.Canonical)
	if err != nil {
		return nil, err
	}
	st := &Status{LockFile: filepath.Base(PathFor(p.Path)), Lock: f, State: StateMatches}
	cur := p.Canonical()
	if canonicalSum(cur) == f.SHA256 {
		st.Unused = p.Deviations
		return st, nil
	}
	changes, err := Diff(frozen, cur)
	if err != nil {
		return nil, err
	}
	st.RemovedSensitivity = removedSensitivity(p, frozen)
	used := make([]bool, len(p.Deviations))
	for _, c := range changes {
		e := Explained{Change: c}
		// The most specific stated key wins.
		best := stated(p.Deviations, c.Path)
		if best < 0 && c.Moved != "" {
			// An item moved: its key in the frozen plan names it too.
			best = stated(p.Deviations, c.Moved)
		}
		if best < 0 && len(c.Keys) > 0 {
			// An item moved and changed: a reason for each key that
			// changed in it, at its place now or then, explains it.
			e.Reason = movedReasons(p.Deviations, c, used)
		}
		if src, ok := p.Derived[c.Path]; ok && best < 0 && changedAt(changes, src) {
			// A key the plan does not write, changed with the key it
			// follows: that key's change, with its reason.
			e.Follows = src
			best = stated(p.Deviations, src)
		}
		if best >= 0 {
			e.Reason = p.Deviations[best].Reason
			used[best] = true
		}
		st.Changes = append(st.Changes, e)
	}
	for i, dv := range p.Deviations {
		if !used[i] {
			st.Unused = append(st.Unused, dv)
		}
	}
	st.State = StateDeviations
	if st.Unexplained() > 0 {
		st.State = StateUnexplained
	}
	return st, nil
}

// movedReasons is the reason of an item that moved and changed (c.Keys)
// when the deviations state one for each key that changed in it, under
// the item's key now or in the frozen plan (rules[3].reject_if_sparse.
// per_parameter), their distinct reasons joined and marked used; "" when
// a key has none.
func movedReasons(devs []plan.Deviation, c Change, used []bool) string {
	var idx []int
	for _, k := range c.Keys {
		i := stated(devs, c.Path+"."+k.Path)
		if i < 0 {
			i = stated(devs, c.Moved+"."+k.Path)
		}
		if i < 0 {
			return ""
		}
		if !slices.Contains(idx, i) {
			idx = append(idx, i)
		}
	}
	reasons := make([]string, len(idx))
	for n, i := range idx {
		used[i] = true
		reasons[n] = devs[i].Reason
	}
	return strings.Join(reasons, "; ")
}

// stated is the index of the most specific deviation covering the key
// path, or -1.
func stated(devs []plan.Deviation, path string) int {
	best := -1
	for i, dv := range devs {
		if dv.Covers(path) && (best < 0 || len(dv.Key) > len(devs[best].Key)) {
			best = i
		}
	}
	return best
}

// changedAt says whether a change is at key or below it.
func changedAt(changes []Change, key string) bool {
	return slices.ContainsFunc(changes, func(c Change) bool {
		return plan.Deviation{Key: key}.Covers(c.Path)
	})
}

// Check finds the lock beside the plan and compares. Changes without a
// stated reason are an error unless allow is set; the error lists them.
func Check(p *plan.Plan, allow bool) (*Status, error) { return CheckVersion(p, allow, "") }

// CheckVersion is Check by a program of the given version, which the
// error names when it is not the lock's.
func CheckVersion(p *plan.Plan, allow bool, version string) (*Status, error) {
	path := PathFor(p.Path)
	if err := DanglingLink(path); err != nil {
		return nil, err
	}
	if _, err := os.Stat(path); errors.Is(err, fs.ErrNotExist) {
		return &Status{State: StateNone, LockFile: filepath.Base(path), Unused: p.Deviations, Replaced: replacedLocks(p, path)}, nil
	}
	f, err := Read(path)
	if err != nil {
		return nil, err
	}
	st, err := Compare(p, f)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	st.Replaced = replacedLocks(p, path)
	if st.State == StateUnexplained {
		if !allow {
			return st, &UnexplainedError{Plan: p.Path, Lock: path, Status: st, Version: version}
		}
		st.Allowed = true
	}
	return st, nil
}

// NearestChanged is the changed key (or a key enclosing one) nearest to a
// stated deviation's key that explains no change, when one is near enough
// to be a misspelling of it, or "".
func (st *Status) NearestChanged(dv plan.Deviation) string {
	var keys []string
	for _, c := range st.Changes {
		p := c.Path
		for i := range len(p) {
			if p[i] == '.' || p[i] == '[' {
				keys = append(keys, p[:i])
			}
		}
		keys = append(keys, p)
	}
	if near := words.Nearest(dv.Key, keys, 1); len(near) == 1 {
		return near[0]
	}
	return ""
}

// UnusedNote says that a stated deviation explains no change from the
// frozen plan, naming the changed key it may misspell; or, when there is
// no lock, that nothing is frozen.
func (st *Status) UnusedNote(dv plan.Deviation) string {
	if st.State == StateNone {
		return fmt.Sprintf("deviations: %q (line %d) explains a change, but nothing is frozen: the plan has no lock file (%s) whose plan it could depart from; the list is for changes made after ordplan freeze", dv.Key, dv.Line, st.LockFile)
	}
	s := fmt.Sprintf("deviations: %q (line %d) explains no change from the frozen plan", dv.Key, dv.Line)
	if k := st.NearestChanged(dv); k != "" {
		s += fmt.Sprintf("; did you mean %q, which changed?", k)
	}
	return s
}

// UnexplainedError stops a run whose plan departs from the frozen form
// without a stated reason.
type UnexplainedError struct {
	Plan, Lock string
	Status     *Status
	Version    string // of the program comparing ("" = not known)
}

func (e *UnexplainedError) Error() string {
	var b strings.Builder
	n := e.Status.Unexplained()
	fmt.Fprintf(&b, "%s: the plan departs from its registered form (%s, frozen %s) in %s without a stated reason:",
		e.Plan, filepath.Base(e.Lock), e.Status.Lock.FrozenAt, words.Count(n, "key", "keys"))
	for _, c := range e.Status.Changes {
		if c.Reason == "" && c.Follows == "" {
			fmt.Fprintf(&b, "\n  %s: %s", c.Path, c.Transition())
		}
	}
	for _, dv := range e.Status.Unused {
		fmt.Fprintf(&b, "\n%s", e.Status.UnusedNote(dv))
	}
	if e.Status.Lock.Version != e.Version && e.Version != "" {
		fmt.Fprintf(&b, "\n(the lock was written by ordplan %s, this is %s: a key the newer program adds shows as a change from (absent))", e.Status.Lock.Version, e.Version)
	}
	b.WriteString("\nstate the reason for each in the plan's deviations list (- key: KEY, reason: WHY), or run with --allow-unregistered-changes (the report then says so in its first lines)")
	return b.String()
}

// SensitivityChanges lists the changes from the lock that touch the
// plan's sensitivity analysis at index i: the analysis added since the
// plan was frozen (the whole list, or its item, new), or a key of it
// changed (in its place, or moved there and changed; moved unchanged, it
// is the analysis registered). An analysis removed since is named by its index in the frozen
// list, not the plan's, and is left out. None without a lock.
func (s *Status) SensitivityChanges(i int) []Explained {
	if s == nil || s.Lock == nil {
		return nil
	}
	item := fmt.Sprintf("sensitivity[%d]", i)
	var out []Explained
	for _, c := range s.Changes {
		switch {
		case c.Path == "sensitivity" && c.To != Absent,
			c.Path == item && c.To != Absent && (c.Moved == "" || len(c.Keys) > 0),
			strings.HasPrefix(c.Path, item+"."):
			out = append(out, c)
		}
	}
	return out
}

// RuleChanges lists the changes from the lock that touch the plan's rule
// at index i: the rule added since the plan was frozen, moved there
// (changed or not: the order of the rules is part of what they decide),
// or a key of it changed. A rule removed since is named by its index in
// the frozen list and is left out. None without a lock.
func (s *Status) RuleChanges(i int) []Explained {
	if s == nil || s.Lock == nil {
		return nil
	}
	item := fmt.Sprintf("rules[%d]", i)
	var out []Explained
	for _, c := range s.Changes {
		if c.Path == item && c.To != Absent || strings.HasPrefix(c.Path, item+".") {
			out = append(out, c)
		}
	}
	return out
}

// SensitivityAdded says whether the plan's sensitivity analysis at index
// i is new since the plan was frozen (changes: its SensitivityChanges):
// the frozen plan had no such item, not a changed key of one it had.
func SensitivityAdded(changes []Explained) bool {
	return slices.ContainsFunc(changes, func(c Explained) bool { return c.From == Absent && !strings.Contains(c.Path, ".") })
}
