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
