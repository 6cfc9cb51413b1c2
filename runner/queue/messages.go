package queue

import (
	"bytes"
	"encoding/gob"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// Kinds of task.
const (
	KindFit  = "fit"  // fit one model of a plan on a whole data file
	KindSums = "sums" // log-likelihood (and derivatives) of one partition
	KindDiag = "diag" // fitted-probability diagnostics of one partition
	// KindScores answers a question about the ordinal scores of one
	// partition's rows (the Lipsitz test of a fit over partitions).
	KindScores = "scores"
)

// Task is one job message: what a worker computes.
type Task struct {
	Batch string // batch id: the first part of the reply key
	Index int    // position in the batch: the second part
	ID    string // what the reply must name: the fit id or the partition hash
	Kind  string
	Build string         // the coordinator's build (Build), which the worker's must be
	Fit   *runner.Job    // KindFit
	Part  *PartitionTask // KindSums, KindDiag, KindScores
}

// PartitionTask asks for one partition's sums (or diagnostics) at theta.
type PartitionTask struct {
	Name        string // partition name, for messages
	DataHash    string // hex SHA-256 of the partition file
	DataOptions data.Options
	J           int // categories of the whole data
	Model       fit.Model
	Theta       []float64
	Order       int // 0 log-likelihood, 1 and score, 2 and second derivatives
	// Shift: with KindSums and KindDiag, the rows' predictors less these
	// values (the whole data's fit.Whole.Shift; Theta is then in centred
	// coordinates).
	Shift []float64
	// Score is the question of KindScores; with KindSums and KindDiag, the
	// cut whose group indicators the rows get (Model is then the model
	// with them).
	Score *fit.ScoreQuery
}

// Reply is what a worker stores for a task. Exactly one of Result, Sums,
// Scores or Err is meaningful; diagnostics fill Negative and MinProb.
// Fault marks an Err that is a failure of the worker or the queue
// (fetching or caching the data, the worker's limits, an internal error,
// a job no worker finished), not the fit's own outcome: it never enters
// the rules as a model that could not be fitted; the run stops instead.
type Reply struct {
	Batch     string
	Index     int
	ID        string
	Worker    string // which worker computed it
	Delivered uint64 // delivery count of the job message when it was done
	Result    *fit.Result
	Sums      *fit.Sums
	Scores    *fit.ScoreAnswer
	Negative  int
	MinProb   float64
	Err       string
	Fault     bool
}

func encode(v any) ([]byte, error) {
	var buf bytes.Buffer
	if err := gob.NewEncoder(&buf).Encode(v); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func decode(b []byte, v any) error {
	return gob.NewDecoder(bytes.NewReader(b)).Decode(v)
}
