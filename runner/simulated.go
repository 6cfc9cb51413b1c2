package runner

// Simulation says that a run's data were simulated from the plan's
// assumptions (ordplan rehearse), and how.
type Simulation struct {
	Command string `json:"command"` // "rehearse"
	N       int    `json:"n"`
	Seed    uint64 `json:"seed"`
	Link    string `json:"link"`
	Model   string `json:"generating_model"` // comparison (direction) and link, e.g. "cumulative logit"
	File    string `json:"file"`             // the simulated data file among the outputs
	// Subset: the plan's subset conditions, and how many of the N
	// simulated rows they kept (nil without a subset).
	Subset []string `json:"subset,omitempty"`
	Kept   *int     `json:"subset_kept,omitempty"`
}

// WriteReport writes the named files of a report that is not a plan run
// (a power study) into dir the way a run writes its outputs: all or
// nothing, through temporary files renamed into place, in the given
// order (the last marks a complete report). The caller holds the
// folder's lock (LockOutput).
func WriteReport(dir string, names []string, files map[string][]byte) error {
	return writeAll(dir, names, files)
}
