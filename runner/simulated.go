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
	// Missing is the missingness the assumptions state (assumptions.missing),
	// column by column, with how many values were made missing.
	Missing []SimulatedMissing `json:"missing,omitempty"`
	// Weights says how the plan's weights column was simulated (nil:
	// the plan has none).
	Weights *SimulatedWeights `json:"weights,omitempty"`
	// Truncated are the numeric columns drawn from a normal distribution
	// truncated to their dictionary range, with the draws outside it that
	// were drawn again.
	Truncated []SimulatedTruncation `json:"truncated,omitempty"`
	// Clusters says how the plan's cluster column was simulated (nil:
	// the plan has none).
	Clusters *SimulatedClusters `json:"clusters,omitempty"`
}

// SimulatedTruncation is a numeric column drawn from the normal of its
// stated mean and sd truncated to its dictionary range: Outside is the
// share of that normal outside the range (the share of draws expected to
// be drawn again), Mean and SD those of the truncated normal (the
// distribution the column is drawn from), Drawn and Redrawn (a rehearsal's data) the draws
// made and, of them, those outside the range and drawn again; a column
// drawn with stated correlations (Copula) is drawn within the range by
// the truncated normal's quantile function, nothing drawn again.
type SimulatedTruncation struct {
	Column     string    `json:"column"`
	StatedMean float64   `json:"stated_mean"`
	StatedSD   float64   `json:"stated_sd"`
	Range      []float64 `json:"range"`
	Outside    float64   `json:"outside_share"`
	Mean       float64   `json:"truncated_mean"`
	SD         float64   `json:"truncated_sd"`
	Copula     bool      `json:"copula,omitempty"`
	Drawn      int       `json:"draws,omitempty"`
	Redrawn    *int      `json:"redrawn,omitempty"`
	// In a rehearsal: the values the simulated file holds (those made
	// missing left out), their mean and standard deviation, which differ
	// from the truncated normal's (Mean, SD) by the draws' chance.
	Values     int      `json:"values,omitempty"`
	ValuesMean *float64 `json:"values_mean,omitempty"`
	ValuesSD   *float64 `json:"values_sd,omitempty"`
}

// SimulatedClusters is how a plan's cluster column was simulated: runs of
// consecutive rows, Number of them (the same at every sample size) or
// RowsEach rows each, every cluster adding a normal intercept of
// standard deviation InterceptSD to its rows' linear predictors, as
// assumptions.clusters states (Stated) or by default (RowsEach 10, no
// effect). Effect names what the plan stated of the effect: intercept_sd,
// latent_icc, or none. LatentICC is InterceptSD^2 / (InterceptSD^2 +
// LinkVariance), the variance of the generating link's distribution (nil
// for a link without one). PerCluster are the predictor columns drawn
// once per cluster. In a rehearsal: the clusters made of its rows,
// the smallest and largest, and the standard deviation of the intercepts
// drawn.
type SimulatedClusters struct {
	Column       string   `json:"column"`
	Stated       bool     `json:"stated"`
	Number       int      `json:"number,omitempty"`
	RowsEach     int      `json:"rows_each,omitempty"`
	Effect       string   `json:"effect_stated_as"`
	InterceptSD  float64  `json:"intercept_sd"`
	LatentICC    *float64 `json:"latent_icc,omitempty"`
	LinkVariance *float64 `json:"link_variance,omitempty"`
	Clusters     int      `json:"clusters,omitempty"`
	RowsMin      int      `json:"rows_min,omitempty"`
	RowsMax      int      `json:"rows_max,omitempty"`
	DrawnSD      *float64 `json:"drawn_intercept_sd,omitempty"`
	PerCluster   []string `json:"per_cluster,omitempty"`
}

// SimulatedWeights is how a plan's weights column was simulated: drawn
// for each row independently of every other column, from the
// dictionary's values (with Proportions) or uniformly over its Range,
// or (Drawn false) 1 in every row, the dictionary stating neither.
type SimulatedWeights struct {
	Column      string    `json:"column"`
	Kind        string    `json:"kind"` // frequency or sampling
	Drawn       bool      `json:"drawn"`
	Values      []string  `json:"values,omitempty"`
	Proportions []float64 `json:"proportions,omitempty"`
	Range       []float64 `json:"range,omitempty"`
	// Whole says frequency weights were drawn over the whole numbers of
	// Range (the whole numbers the dictionary's range holds): counts.
	Whole bool `json:"whole,omitempty"`
}

// SimulatedMissing is the missingness simulated in one column: its stated
// proportion and mechanism, the text written for a missing value, and
// (in a rehearsal) how many of the rows the plan analyses lost the value.
type SimulatedMissing struct {
	Column     string         `json:"column"`
	Proportion float64        `json:"proportion"`
	Mechanism  string         `json:"mechanism"` // "completely at random" or "at random given ..."
	Given      []MissingGiven `json:"given,omitempty"`
	Marker     string         `json:"written_as"`
	// BlankRows is the text written instead of the empty Marker in a row
	// that misses every column written (this column is its first), which
	// an empty cell would make a blank line; "" when no row can.
	BlankRows string `json:"written_as_in_rows_missing_every_column,omitempty"`
	Count     *int   `json:"missing,omitempty"`
	Of        int    `json:"of_rows,omitempty"`
}

// MissingGiven is a column the missingness depends on, with its strength:
// the change of the log-odds of being missing per standard deviation.
type MissingGiven struct {
	Column   string  `json:"column"`
	Strength float64 `json:"log_odds_per_sd"`
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
