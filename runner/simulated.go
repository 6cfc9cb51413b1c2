package runner

// Simulation says that a run's data were simulated from the plan's
// assumptions (ordplan rehearse), and how.
type Simulation struct {
	Command string `json:"command"` // "rehearse"
	N       int    `json:"n"`
	Seed    uint64 `json:"seed"`
	Link    string `json:"link"`
	File    string `json:"file"` // the simulated data file among the outputs
}
