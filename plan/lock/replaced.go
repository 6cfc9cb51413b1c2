package lock

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
)

// Replaced is an earlier lock of the plan that `ordplan freeze --replace`
// kept beside it (LOCK.replaced-TIME): the plan was frozen anew, and a
// reader of the results needs to know when it was first frozen and how
// the plan run differs from that form.
type Replaced struct {
	File         string `json:"file"`
	FrozenAt     string `json:"frozen_at,omitempty"`
	Registration string `json:"registration,omitempty"`
	SHA256       string `json:"canonical_sha256,omitempty"`
	// Changed are the keys of the canonical form in which the plan run
	// differs from this lock's (none: it is the plan run, key for key).
	Changed []string `json:"keys_changed"`
	// Error says why the kept lock could not be read (edited by hand, not
	// a lock); the other fields are then empty.
	Error string `json:"error,omitempty"`
}

// replacedLocks reads the locks kept beside the lock at path by freeze
// --replace, in the order they were frozen (their names' times), and
// compares the plan p with each.
func replacedLocks(p *plan.Plan, path string) []Replaced {
	entries, err := os.ReadDir(filepath.Dir(path))
	if err != nil {
		return nil
	}
	prefix := filepath.Base(path) + ".replaced-"
	var out []Replaced
	for _, e := range entries {
		if !strings.HasPrefix(e.Name(), prefix) {
			continue
		}
		r := Replaced{File: e.Name(), Changed: []string{}}
		kept := filepath.Join(filepath.Dir(path), e.Name())
		f, err := Read(kept)
		if err != nil {
			r.Error = strings.TrimPrefix(err.Error(), kept+": ") // the note names the file
			out = append(out, r)
			continue
		}
		r.FrozenAt, r.Registration, r.SHA256 = f.FrozenAt, f.Registration, f.SHA256
		if st, err := Compare(p, f); err != nil {
			r.Error = err.Error()
		} else {
			for _, c := range st.Changes {
				r.Changed = append(r.Changed, c.Path)
			}
		}
		out = append(out, r)
	}
	slices.SortFunc(out, func(a, b Replaced) int { return strings.Compare(a.File, b.File) })
	return out
}

// ReplacedNote says, for the registration lines of check, run, rehearse
// and power, that the plan was frozen anew (or that its lock is gone while
// a replaced one is still there), naming the kept lock and how the plan
// differs from it.
func (st *Status) ReplacedNote(r Replaced) string {
	if r.Error != "" {
		return fmt.Sprintf("%s, a lock of this plan that ordplan freeze --replace kept, cannot be read: %s", r.File, r.Error)
	}
	first := fmt.Sprintf("%s (frozen %s", r.File, r.FrozenAt)
	if r.Registration != "" {
		first += ", registration " + r.Registration
	}
	first += ")"
	differs := "the plan run is the same, key for key"
	if n := len(r.Changed); n > 0 {
		differs = "the plan run differs from it in " + words.Count(n, "key", "keys")
		if n <= 5 {
			differs += " (" + strings.Join(r.Changed, ", ") + ")"
		}
	}
	if st.State == StateNone {
		return fmt.Sprintf("the plan has no lock file (%s), but an earlier lock of it is kept beside it: %s; %s. Was the lock removed? Put it back, or freeze the plan again (ordplan freeze)", st.LockFile, first, differs)
	}
	return fmt.Sprintf("%s was frozen anew (ordplan freeze --replace): it replaced the lock kept as %s; %s. The plan counts as registered only from %s's time; the report says so", st.LockFile, first, differs, st.LockFile)
}
