package queue

import (
	"strings"
	"testing"
	"time"

	"ordplan/runner/fit"
)

// The fits of a sensitivity analysis carry its name (runner.Job.Analysis):
// the coordinator's lines of the batch and the worker's lines of each job
// name it, while the batch's run id, which reused results are found by,
// does not depend on it.
func TestLogLinesNameTheAnalysis(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	before, err := RunID("plan-hash", q.jobs)
	if err != nil {
		t.Fatal(err)
	}
	for i := range q.jobs {
		q.jobs[i].Analysis = "imputed"
	}
	if after, err := RunID("plan-hash", q.jobs); err != nil || after != before {
		t.Errorf("the run id changed with the analysis's name: %s -> %s (%v)", before, after, err)
	}
	wlog := startWorker(t, q.url, "w1", 5*time.Second, 0)
	clog := &LogBuffer{}
	res, errs := q.coordinator(t, clog).Execute(q.jobs)
	if errs[0] != nil || !res[0].OK() {
		t.Fatalf("fit: %v", errs[0])
	}
	for _, want := range []string{"queue: sensitivity analysis imputed: warm: run ", "queue: sensitivity analysis imputed: warm: all 1 fits collected in "} {
		if !strings.Contains(clog.String(), want) {
			t.Errorf("the coordinator's log lacks %q:\n%s", want, clog)
		}
	}
	job := "cumulative/parallel/logit of sensitivity analysis imputed"
	waitFor(t, 10*time.Second, "the worker's line of the job done", func() bool { return strings.Contains(wlog.String(), " "+job+" in ") })
	if !strings.Contains(wlog.String(), " "+job+" (delivery 1)") {
		t.Errorf("the worker's log does not name the analysis:\n%s", wlog)
	}
}
