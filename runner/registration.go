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
	// RemovedSensitivity (JSON sensitivity_removed) are the registered
	// sensitivity analyses the plan no longer has (removed or renamed
	// after freezing), with the stated reasons: not run.
	RemovedSensitivity []lock.RemovedAnalysis `json:"sensitivity_removed,omitempty"`
	// UnusedDeviations are the plan's stated deviations that explain no
	// change from the lock (all of them when there is none), as the
	// report lists them.
	UnusedDeviations []UnusedDeviation `json:"unused_deviations,omitempty"`
	// ReplacedLocks are the earlier locks of the plan that freeze
	// --replace kept beside its lock.
	ReplacedLocks []lock.Replaced `json:"replaced_locks,omitempty"`
	// EarlierRegistered: the earlier runs of the registered plan
	// unchanged in the output folder (EarlierRegisteredRuns): of a run
	// that departs from it, every one; of a run that matches it, those
	// on other data.
	EarlierRegistered []EarlierRun `json:"earlier_registered_runs,omitempty"`
	// UnderEarlierLocks (JSON runs_outside_this_lock): the earlier runs in the output folder made under
	// another lock of the plan than its lock now (one freeze --replace
	// replaced, or one removed), and, when the plan has a lock, those made
	// while it had none (state "none": before it was registered).
	UnderEarlierLocks []EarlierLockRun `json:"runs_outside_this_lock,omitempty"`
}

// EarlierRun is an earlier run of the registered plan, unchanged, found
// in the output folder (its run.json or one kept under earlier/): named
// by the SHA-256 of its decisions.json, which stays the same wherever
// the run is kept, and whether it read the same data.
type EarlierRun struct {
	DecisionsSHA256 string `json:"decisions_sha256"`
	DataSHA256      string `json:"data_sha256"`
	SameData        bool   `json:"same_data"`
	// Time is when the run started, as its run.json records it (only
	// when its plan asked for timestamps).
	Time string `json:"time,omitempty"`
}

// EarlierRegisteredRuns picks, from the run records an output folder
// holds, the runs of the registered plan unchanged (made by run, the
// plan matching the same lock): when st departs from that lock, every
// one (results that existed before the deviations were run); when st
// matches it, those on other data than dataHash, this run's (results of
// the same analysis on other data, such as fewer rows: an earlier look).
// Sorted by their decisions' hash, each once, so the list is the same
// wherever the folder keeps them.
func EarlierRegisteredRuns(st *lock.Status, dataHash string, records []RunRecord) []EarlierRun {
	if st == nil || st.Lock == nil || (st.State != lock.StateDeviations && st.State != lock.StateUnexplained && st.State != lock.StateMatches) {
		return nil
	}
	matches := st.State == lock.StateMatches
	var out []EarlierRun
	for _, rec := range records {
		g := rec.Registration
		if g == nil || g.State != lock.StateMatches || g.CanonicalSHA256 != st.Lock.SHA256 {
			continue
		}
		if e, ok := earlierRun(rec, dataHash); ok && !(matches && e.SameData) && !slices.ContainsFunc(out, func(o EarlierRun) bool { return o.DecisionsSHA256 == e.DecisionsSHA256 }) {
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
	e := EarlierRun{DecisionsSHA256: dec, Time: rec.Timestamp}
	if rec.Data != nil {
		e.DataSHA256 = rec.Data.SHA256
		e.SameData = rec.Data.SHA256 == dataHash
	}
	return e, true
}

// EarlierLockRun is an earlier run in the output folder made under
// another registration of the plan than its lock now: under a lock of
// the plan since replaced or removed, or, when the plan has a lock, with
// no lock at all (State "none": made before the plan was registered, or
// while its lock was missing). Its results existed before the plan was
// frozen as it is now, so it is not a run of the registered plan, and a
// reader needs it named with the registration it was run under.
type EarlierLockRun struct {
	EarlierRun
	// The lock the run was compared with, as its run.json recorded it
	// (absent for a run made with no lock).
	LockFile         string `json:"lock_file,omitempty"`
	LockSHA256       string `json:"lock_canonical_sha256,omitempty"`
	LockFrozenAt     string `json:"lock_frozen_at,omitempty"`
	LockRegistration string `json:"lock_registration,omitempty"`
	// KeptAs is the file freeze --replace kept that lock in (its
	// canonical hash the same); "" when no kept lock beside the plan has it.
	KeptAs string `json:"lock_kept_as,omitempty"`
	// State is how that run's plan stood against that lock: matches,
	// deviations or unexplained; none when the plan had no lock.
	State string `json:"state"`
	// BeforeFirstLock, for a run made with no lock whose run.json records
	// its time: whether it started before the plan was first frozen (the
	// earliest of its lock and the locks kept beside it), or while its
	// lock was missing later. Absent when the time is not recorded.
	BeforeFirstLock *bool `json:"before_first_lock,omitempty"`
}

// Unregistered is true for a run made while the plan had no lock.
func (e EarlierLockRun) Unregistered() bool { return e.State == lock.StateNone }

// EarlierLockRuns picks, from the run records an output folder holds,
// the runs made (by run) under another registration of the plan than
// st's: under a lock freeze --replace replaced or one since removed,
// and, when st has a lock, with no lock at all (before the plan was
// registered). dataHash is this run's data. The runs without a lock
// first, then by the time their lock was frozen, then by their
// decisions' hash, each run once.
func EarlierLockRuns(st *lock.Status, dataHash string, records []RunRecord) []EarlierLockRun {
	if st == nil {
		return nil
	}
	now, first := "", ""
	if st.Lock != nil {
		now, first = st.Lock.SHA256, st.Lock.FrozenAt
	}
	for _, k := range st.Replaced {
		if k.Error == "" && k.FrozenAt != "" && (first == "" || k.FrozenAt < first) {
			first = k.FrozenAt
		}
	}
	var out []EarlierLockRun
	for _, rec := range records {
		g := rec.Registration
		unregistered := g != nil && g.State == lock.StateNone && now != ""
		if g == nil || !unregistered && (g.State == lock.StateNone || g.CanonicalSHA256 == "" || g.CanonicalSHA256 == now) {
			continue
		}
		e, ok := earlierRun(rec, dataHash)
		if !ok || slices.ContainsFunc(out, func(o EarlierLockRun) bool { return o.DecisionsSHA256 == e.DecisionsSHA256 }) {
			continue
		}
		if unregistered {
			r := EarlierLockRun{EarlierRun: e, State: lock.StateNone}
			if e.Time != "" {
				before := e.Time < first // both RFC 3339 times in UTC
				r.BeforeFirstLock = &before
			}
			out = append(out, r)
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
		if a.Unregistered() != b.Unregistered() {
			if a.Unregistered() {
				return -1
			}
			return 1
		}
		if c := strings.Compare(a.LockFrozenAt, b.LockFrozenAt); c != 0 {
			return c
		}
		return strings.Compare(a.DecisionsSHA256, b.DecisionsSHA256)
	})
	return out
}

// UnusedDeviation is a stated deviation that explains no change: its key,
// reason and plan line, and the changed key it may misspell
// (lock.Status.NearestChanged).
type UnusedDeviation struct {
	Key      string `json:"key"`
	Reason   string `json:"reason"`
	Line     int    `json:"line"`
	Misspelt string `json:"nearest_changed_key,omitempty"`
}

// registrationRecord converts a status (nil: not compared).
func registrationRecord(st *lock.Status) *RegistrationRecord {
	if st == nil {
		return nil
	}
	r := &RegistrationRecord{State: st.State, LockFile: st.LockFile, Changes: st.Changes, AllowedUnexplained: st.Allowed, ReplacedLocks: st.Replaced, RemovedSensitivity: st.RemovedSensitivity}
	if r.Changes == nil {
		r.Changes = []lock.Explained{}
	}
	for _, dv := range st.Unused {
		u := UnusedDeviation{Key: dv.Key, Reason: dv.Reason, Line: dv.Line}
		if st.State != lock.StateNone {
			u.Misspelt = st.NearestChanged(dv)
		}
		r.UnusedDeviations = append(r.UnusedDeviations, u)
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
