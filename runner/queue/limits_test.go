package queue

import (
	"strings"
	"testing"

	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// A worker refuses a job of the Lipsitz test whose predictors and
// score-group indicators together pass its limit on columns, and takes
// one within it.
func TestLimitsCountScoreGroupIndicators(t *testing.T) {
	l := Limits{Starts: 1, Iterations: 1, Predictors: 5, Params: 100, DataBytes: 1 << 20}
	task := func(kind string, cuts int) *Task {
		return &Task{ID: "j1", Kind: kind, Part: &PartitionTask{J: 3, DataOptions: data.Options{Predictors: []string{"a", "b", "c"}},
			Score: &fit.ScoreQuery{Step: fit.StepTable, Cuts: make([]uint64, cuts)}}}
	}
	for _, kind := range []string{KindScores, KindSums, KindDiag} {
		if err := l.check(task(kind, 2)); err != nil {
			t.Errorf("%s: 3 predictors and 2 indicators refused: %v", kind, err)
		}
		err := l.check(task(kind, 3))
		if err == nil || !strings.Contains(err.Error(), "3 predictors and 3 score-group indicators; this worker allows at most 5 columns") {
			t.Errorf("%s: 3 predictors and 3 indicators: %v", kind, err)
		}
	}
}
