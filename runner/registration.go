package runner

import (
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
	// EarlierRegistered: the earlier runs of the registered plan,
	// unchanged, in the output folder of a run that departs from it.
	EarlierRegistered []EarlierRun `json:"earlier_registered_runs,omitempty"`
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
		if rec.MadeBy != "" && rec.MadeBy != "run" || g == nil || g.State != lock.StateMatches || g.CanonicalSHA256 != st.Lock.SHA256 {
			continue
		}
		dec := rec.Outputs["decisions.json"]
		if dec == "" || slices.ContainsFunc(out, func(e EarlierRun) bool { return e.DecisionsSHA256 == dec }) {
			continue
		}
		e := EarlierRun{DecisionsSHA256: dec}
		if rec.Data != nil {
			e.DataSHA256 = rec.Data.SHA256
			e.SameData = rec.Data.SHA256 == dataHash
		}
		out = append(out, e)
	}
	slices.SortFunc(out, func(a, b EarlierRun) int { return strings.Compare(a.DecisionsSHA256, b.DecisionsSHA256) })
	return out
}

// registrationRecord converts a status (nil: not compared).
func registrationRecord(st *lock.Status) *RegistrationRecord {
	if st == nil {
		return nil
	}
	r := &RegistrationRecord{State: st.State, LockFile: st.LockFile, Changes: st.Changes, AllowedUnexplained: st.Allowed}
	if r.Changes == nil {
		r.Changes = []lock.Explained{}
	}
	if f := st.Lock; f != nil {
		r.CanonicalSHA256, r.FrozenAt, r.ProgramVersion, r.Registration = f.SHA256, f.FrozenAt, f.Version, f.Registration
	}
	return r
}
