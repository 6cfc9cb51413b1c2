package render

import (
	"strings"
	"testing"
)

// The parallel-lines tests of backward stage models are headed by the name
// those models carry in every table (stage_backward), not "stage", which
// is the forward model's.
func TestBackwardStageTestsHeading(t *testing.T) {
	dir, src := levelPairsPlan(t, "  marginal_effects: [average]\n")
	src = strings.Replace(src, "models: {approaches: [cumulative], effects: [parallel], links: [logit]}",
		"models: {approaches: [stage], direction: backward, effects: [parallel, nonparallel], links: [logit]}\ntests: {parallel_lines: [lr]}", 1)
	files := renderSource(t, dir, src, 0)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"#### stage_backward, logit\n",
		"Parallel-lines tests, stage_backward logit\n",
		"Nested likelihood-ratio tests, stage_backward logit\n",
		"| stage_backward/parallel/logit within stage_backward/nonparallel/logit |")
	if strings.Contains(md, "#### stage, logit") {
		t.Error("the tests of backward stage models are headed stage, logit")
	}
	// table-tests' approach column names the block as the heading does.
	seen := false
	for name, b := range files {
		if !strings.HasPrefix(name, "table-tests-") {
			continue
		}
		seen = true
		csv := string(b)
		hasAll(t, name, csv, "parallel_lines,stage_backward,logit,", "nested_lr,stage_backward,logit,")
		if strings.Contains(csv, ",stage,logit,") {
			t.Errorf("%s names backward stage tests' approach stage", name)
		}
	}
	if !seen {
		t.Error("no table-tests file")
	}
}
