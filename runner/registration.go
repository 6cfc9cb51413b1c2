package runner

import "ordplan/plan/lock"

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
