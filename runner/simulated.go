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
	// Truth is each outcome's generating model, to hold the estimates
	// against.
	Truth []SimulatedModel `json:"generating,omitempty"`
}

// SimulatedModel is the model one outcome was drawn from: the cutpoints
// tau[m] and the coefficient of every design column at every boundary
// (L_m = tau_m - x'b_m).
type SimulatedModel struct {
	Outcome      string      `json:"outcome"`
	Boundaries   []string    `json:"boundaries"` // lower/upper category labels
	Cutpoints    []float64   `json:"cutpoints"`
	Columns      []string    `json:"columns"`
	Coefficients [][]float64 `json:"coefficients"` // [column][boundary]
}
