package queue

import (
	"fmt"
)

// Limits bound what one job may ask of a worker, so that a job cannot
// exhaust a worker's memory or hold it forever. A job beyond a limit is
// answered with an error naming it, never computed.
type Limits struct {
	Starts     int   // random starts of a constrained fit
	Iterations int   // Newton iterations of one fit
	Predictors int   // predictors (columns) of one job
	Params     int   // parameters of a partition evaluation
	DataBytes  int64 // size of the data file a job reads
}

// DefaultLimits are generous for real analyses.
var DefaultLimits = Limits{Starts: 1000, Iterations: 10000, Predictors: 5000, Params: 100000, DataBytes: 8 << 30}

func (l Limits) withDefaults() Limits {
	d := DefaultLimits
	if l.Starts > 0 {
		d.Starts = l.Starts
	}
	if l.Iterations > 0 {
		d.Iterations = l.Iterations
	}
	if l.Predictors > 0 {
		d.Predictors = l.Predictors
	}
	if l.Params > 0 {
		d.Params = l.Params
	}
	if l.DataBytes > 0 {
		d.DataBytes = l.DataBytes
	}
	return d
}

func (l Limits) String() string {
	return fmt.Sprintf("%d starts, %d iterations, %d predictors, %d MB of data", l.Starts, l.Iterations, l.Predictors, l.DataBytes>>20)
}

// check refuses a task that asks more than the limits allow.
func (l Limits) check(t *Task) error {
	switch t.Kind {
	case KindFit:
		if t.Fit == nil {
			return fmt.Errorf("job %s carries no fit", t.ID)
		}
		o := t.Fit.FitOptions
		switch {
		case o.RandomStarts > l.Starts:
			return fmt.Errorf("job %s asks for %d random starts; this worker allows at most %d (ordplan worker --max-starts)", t.ID, o.RandomStarts, l.Starts)
		case o.MaxIter > l.Iterations:
			return fmt.Errorf("job %s asks for %d iterations; this worker allows at most %d (ordplan worker --max-iterations)", t.ID, o.MaxIter, l.Iterations)
		case len(o.Start) > l.Params:
			return fmt.Errorf("job %s gives %d starting values; this worker allows at most %d", t.ID, len(o.Start), l.Params)
		case len(t.Fit.DataOptions.Predictors) > l.Predictors:
			return fmt.Errorf("job %s has %d predictors; this worker allows at most %d (ordplan worker --max-predictors)", t.ID, len(t.Fit.DataOptions.Predictors), l.Predictors)
		}
	case KindSums, KindDiag, KindScores:
		if t.Part == nil {
			return fmt.Errorf("job %s carries no partition", t.ID)
		}
		switch {
		case len(t.Part.Theta) > l.Params || t.Part.Score != nil && len(t.Part.Score.Estimates) > l.Params:
			return fmt.Errorf("job %s has %d parameters; this worker allows at most %d", t.ID, len(t.Part.Theta), l.Params)
		case len(t.Part.DataOptions.Predictors) > l.Predictors:
			return fmt.Errorf("job %s has %d predictors; this worker allows at most %d (ordplan worker --max-predictors)", t.ID, len(t.Part.DataOptions.Predictors), l.Predictors)
		case t.Part.Score != nil && len(t.Part.DataOptions.Predictors)+len(t.Part.Score.Cuts) > l.Predictors:
			return fmt.Errorf("job %s has %d predictors and %d score-group indicators; this worker allows at most %d columns (ordplan worker --max-predictors)", t.ID, len(t.Part.DataOptions.Predictors), len(t.Part.Score.Cuts), l.Predictors)
		case t.Part.J > 1000 || t.Part.J < 2:
			return fmt.Errorf("job %s has %d categories", t.ID, t.Part.J)
		case t.Part.Order < 0 || t.Part.Order > 2:
			return fmt.Errorf("job %s asks for derivatives of order %d", t.ID, t.Part.Order)
		}
	}
	return nil
}
