package queue

import (
	"bytes"
	"encoding/json"
	"testing"

	"ordplan/internal/jsonkeys"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// The JSON form of a job (what RunID hashes: the data options, the model,
// the frozen design and the fit options) has snake_case keys only, like
// every JSON the program writes, and loses nothing in a round trip. Every
// field of the job and of the structs inside it is set, so a field added
// without a json tag shows up here under its Go name. (The map keys of
// predictor_levels and column_missing are column names, chosen snake_case.)
func TestJobJSONKeysAreSnakeCase(t *testing.T) {
	spec := design.Spec{
		Sources: []design.Source{{Name: "age"}, {Name: "site", Cat: &design.Categorical{Levels: []string{"n", "s"}, Coding: design.Sum, Unobserved: design.UnobservedDrop}}},
		Terms: []design.TermSpec{
			{Name: "site", Source: "site"},
			{Name: "age.s", Source: "age", Transform: design.Transform{Centre: "mean", Scale: true}},
			{Name: "site&age.s", Interact: []string{"site", "age.s"}},
		},
	}
	raw := []float64{20, 0, 35, 1, 50, 0, 65, 1}
	d, err := design.Build(spec, raw, 4, []float64{1, 1, 1, 1}, nil)
	if err != nil {
		t.Fatal(err)
	}
	job := runner.Job{
		Outcome: "grade", Index: 3, ID: "stage/constrained/cloglog", DataFile: "clinic.csv", DataHash: "ab12",
		Spec: runner.Spec{Approach: fit.Stage, Backward: true, Link: fit.Cloglog, Predictors: []string{"site", "age_s", "dose"},
			Nonparallel: []string{"dose"}, Groups: []runner.Group{{Name: "g1", Predictors: []string{"site", "age_s"}}}},
		DataOptions: data.Options{
			Outcome: "grade", Categories: []string{"low", "mid", "high"}, Codes: []int64{1, 2, 3},
			Predictors: []string{"age", "site"}, PredictorLevels: map[string][]string{"site": {"n", "s"}},
			Keep:    []data.Condition{{Column: "age", Op: ">=", Number: 18, Values: []string{"x"}, Key: "data.keep[0]"}},
			Weights: "w", Offset: "off", Cluster: "clinic", Refuse: true, KeepIncomplete: true,
			MissingTokens: []string{"NA"}, ColumnMissing: map[string][]string{"age": {"-9"}},
			Dialect: data.Dialect{Delimiter: ';', DecimalComma: true, Sheet: "s1", HeaderRow: 2},
		},
		Design: d.Freeze(spec),
		FitOptions: fit.Options{Covariance: fit.Expected, MaxIter: 50, Workers: 1, Start: []float64{0.5, -1},
			Scoring: true, RandomStarts: 3, ScreenAbove: 10, SubsampleAbove: 100, KeepStarts: true},
	}
	js, err := json.Marshal(job)
	if err != nil {
		t.Fatal(err)
	}
	if bad, err := jsonkeys.NotSnakeCase(js); err != nil || len(bad) > 0 {
		t.Errorf("job JSON keys not in snake_case: %v %v\n%s", bad, err, js)
	}
	var back runner.Job
	if err := json.Unmarshal(js, &back); err != nil {
		t.Fatal(err)
	}
	again, err := json.Marshal(back)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(again, js) {
		t.Errorf("job JSON changed in a round trip:\n%s\n%s", js, again)
	}

	// The model and data options of a partition task are hashed as JSON
	// too (the partitioned fit's key, a worker's cache of parts).
	m, err := job.Spec.Model()
	if err != nil {
		t.Fatal(err)
	}
	mj, err := json.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	if bad, err := jsonkeys.NotSnakeCase(mj); err != nil || len(bad) > 0 {
		t.Errorf("model JSON keys not in snake_case: %v %v\n%s", bad, err, mj)
	}
}
