package runner

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/plan/lock"
)

// RegistrationRecord is the plan compared with its lock, in decisions.json
// and run.json.
type RegistrationRecord struct {
	State           string           `json:"state"` // none, matches, deviations or unexplained
	LockFile        string           `json:"lock_file"`
	CanonicalSHA256 string           `json:"canonical_sha256,omitempty"`
	FrozenAt        string           `json:"frozen_at,omitempty"`
	ProgramVersion  string           `json:"program_version,omitempty"`
	Registration    string           `json:"registration,omitempty"`
	Changes         []lock.Explained `json:"changes"`
	// AllowedUnexplained is true when changes without a stated reason were
	// let through by --allow-unregistered-changes.
	AllowedUnexplained bool `json:"allowed_unexplained"`
	// ReplacedLocks are the earlier locks of the plan that freeze
	// --replace kept beside its lock.
	ReplacedLocks []lock.Replaced `json:"replaced_locks,omitempty"`
	// EarlierRegistered: the earlier runs of the registered plan,
	// unchanged, in the output folder of a run that departs from it.
	EarlierRegistered []EarlierRun `json:"earlier_registered_runs,omitempty"`
	// UnderEarlierLocks: the earlier runs in the output folder made under
	// another lock of the plan than its lock now (one freeze --replace
	// replaced, or one removed).
	UnderEarlierLocks []EarlierLockRun `json:"runs_under_earlier_locks,omitempty"`
}

// EarlierRun is an earlier run of the registered plan, unchanged, found
// in the output folder (its run.json or one kept under earlier/): named
// by the SHA-256 of its decisions.json, which stays the same wherever
// the run is kept, and whether it read the same data.
type EarlierRun struct {
	DecisionsSHA256 string `json:"decisions_sha256"`
	DataSHA256      string `json:"data_sha256"`
	SameData        bool   `json:"same_data"`
}

// EarlierRegisteredRuns picks, from the run records an output folder
// holds, the runs of the registered plan unchanged (made by run, the
// plan matching the same lock) when st departs from that lock; dataHash
// is this run's data. Sorted by their decisions' hash, each once, so the
// list is the same wherever the folder keeps them.
func EarlierRegisteredRuns(st *lock.Status, dataHash string, records []RunRecord) []EarlierRun {
	if st == nil || st.Lock == nil || (st.State != lock.StateDeviations && st.State != lock.StateUnexplained) {
		return nil
	}
	var out []EarlierRun
	for _, rec := range records {
		g := rec.Registration
		if g == nil || g.State != lock.StateMatches || g.CanonicalSHA256 != st.Lock.SHA256 {
			continue
		}
		if e, ok := earlierRun(rec, dataHash); ok && !slices.ContainsFunc(out, func(o EarlierRun) bool { return o.DecisionsSHA256 == e.DecisionsSHA256 }) {
			out = append(out, e)
		}
	}
	slices.SortFunc(out, func(a, b EarlierRun) int { return strings.Compare(a.DecisionsSHA256, b.DecisionsSHA256) })
	return out
}

// earlierRun names a run record of the folder by its decisions and data;
// false for a record not made by run or without decisions.
func earlierRun(rec RunRecord, dataHash string) (EarlierRun, bool) {
	dec := rec.Outputs["decisions.json"]
	if rec.MadeBy != "" && rec.MadeBy != "run" || dec == "" {
		return EarlierRun{}, false
	}
	e := EarlierRun{DecisionsSHA256: dec}
	if rec.Data != nil {
		e.DataSHA256 = rec.Data.SHA256
		e.SameData = rec.Data.SHA256 == dataHash
	}
	return e, true
}

// EarlierLockRun is an earlier run in the output folder made under a lock
// of the plan other than its lock now: its results existed before the
// plan was frozen anew (or before its lock was removed), so it is not a
// run of the registered plan, and a reader needs it named with the lock
// it was run under.
type EarlierLockRun struct {
	EarlierRun
	// The lock the run was compared with, as its run.json recorded it.
	LockFile         string `json:"lock_file"`
	LockSHA256       string `json:"lock_canonical_sha256"`
	LockFrozenAt     string `json:"lock_frozen_at"`
	LockRegistration string `json:"lock_registration,omitempty"`
	// KeptAs is the file freeze --replace kept that lock in (its
	// canonical hash the same); "" when no kept lock beside the plan has it.
	KeptAs string `json:"lock_kept_as,omitempty"`
	// State is how that run's plan stood against that lock: matches,
	// deviations or unexplained.
	State string `json:"state"`
}

// EarlierLockRuns picks, from the run records an output folder holds,
// the runs made (by run) under a lock of the plan other than st's lock:
// a lock freeze --replace replaced, or one since removed. dataHash is
// this run's data. Sorted by the time their lock was frozen, then by
// their decisions' hash, each run once.
func EarlierLockRuns(st *lock.Status, dataHash string, records []RunRecord) []EarlierLockRun {
	if st == nil {
		return nil
	}
	now := ""
	if st.Lock != nil {
		now = st.Lock.SHA256
	}
	var out []EarlierLockRun
	for _, rec := range records {
		g := rec.Registration
		if g == nil || g.State == lock.StateNone || g.CanonicalSHA256 == "" || g.CanonicalSHA256 == now {
			continue
		}
		e, ok := earlierRun(rec, dataHash)
		if !ok || slices.ContainsFunc(out, func(o EarlierLockRun) bool { return o.DecisionsSHA256 == e.DecisionsSHA256 }) {
			continue
		}
		r := EarlierLockRun{EarlierRun: e, LockFile: g.LockFile, LockSHA256: g.CanonicalSHA256, LockFrozenAt: g.FrozenAt,
			LockRegistration: g.Registration, State: g.State}
		for _, k := range st.Replaced {
			if k.Error == "" && k.SHA256 == g.CanonicalSHA256 {
				r.KeptAs = k.File
				break
			}
		}
		out = append(out, r)
	}
	slices.SortFunc(out, func(a, b EarlierLockRun) int {
		if c := strings.Compare(a.LockFrozenAt, b.LockFrozenAt); c != 0 {
			return c
		}
		return strings.Compare(a.DecisionsSHA256, b.DecisionsSHA256)
	})
	return out
}

// registrationRecord converts a status (nil: not compared).
func registrationRecord(st *lock.Status) *RegistrationRecord {
	if st == nil {
		return nil
	}
	r := &RegistrationRecord{State: st.State, LockFile: st.LockFile, Changes: st.Changes, AllowedUnexplained: st.Allowed, ReplacedLocks: st.Replaced}
	if r.Changes == nil {
		r.Changes = []lock.Explained{}
	}
	if f := st.Lock; f != nil {
		r.CanonicalSHA256, r.FrozenAt, r.ProgramVersion, r.Registration = f.SHA256, f.FrozenAt, f.Version, f.Registration
	}
	return r
}

// registrationChange says how the plan's registration differs between an
// earlier run and this one, for the list of --previous ("" when it does
// not, or when either run did not record it): a lock removed, added or
// frozen anew, a plan that matched its lock and now departs from it.
func registrationChange(was, now *RegistrationRecord) string {
	if was == nil || now == nil || unregistered(was) && unregistered(now) {
		return "" // two plans without a lock have no registration to differ in
	}
	w, n := registrationPhrase(was), registrationPhrase(now)
	if w == n && was.CanonicalSHA256 == now.CanonicalSHA256 {
		return ""
	}
	if w == n { // frozen anew within the same second: the phrases alike
		w += fmt.Sprintf(", canonical sha256 %.12s...", was.CanonicalSHA256)
		n += fmt.Sprintf(", canonical sha256 %.12s...", now.CanonicalSHA256)
	}
	out := fmt.Sprintf("The plan's registration changed: in the earlier run %s; in this run %s.", w, n)
	if was.CanonicalSHA256 != "" && now.CanonicalSHA256 != "" && was.CanonicalSHA256 != now.CanonicalSHA256 {
		out += " The plan was frozen anew between the two runs"
		for _, k := range now.ReplacedLocks {
			if k.Error == "" && k.SHA256 == was.CanonicalSHA256 {
				out += " (the earlier run's lock is kept as " + k.File + ")"
				break
			}
		}
		out += ": the earlier run is not a run of the plan as registered now, whose registration counts from " + now.FrozenAt + "."
	}
	return out
}

// registrationPhrase words a run's registration for registrationChange.
func registrationPhrase(r *RegistrationRecord) string {
	lockAt := r.LockFile + " (frozen " + r.FrozenAt + ")"
	var keys []string
	unexplained := 0
	for _, c := range r.Changes {
		keys = append(keys, c.Path)
		if c.Reason == "" && c.Follows == "" {
			unexplained++
		}
	}
	listed := ""
	if len(keys) <= 5 {
		listed = " (" + strings.Join(keys, ", ") + ")"
	}
	switch r.State {
	case lock.StateNone:
		return "the plan had no lock file (" + r.LockFile + ")"
	case lock.StateMatches:
		return "the plan matched its lock " + lockAt
	case lock.StateDeviations:
		return fmt.Sprintf("the plan departed from its lock %s in %d %s%s, each with a stated reason", lockAt, len(keys), plural("key", len(keys)), listed)
	}
	return fmt.Sprintf("the plan departed from its lock %s in %d %s%s, %d without a stated reason (let through by --allow-unregistered-changes)", lockAt, len(keys), plural("key", len(keys)), listed, unexplained)
}
