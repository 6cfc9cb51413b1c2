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
	md := string(renderSource(t, dir, src, 0)["report.md"])
	hasAll(t, "report.md", md,
		"#### stage_backward, logit\n",
		"Parallel-lines tests, stage_backward logit\n",
		"Nested likelihood-ratio tests, stage_backward logit\n",
		"| stage_backward/parallel/logit within stage_backward/nonparallel/logit |")
	if strings.Contains(md, "#### stage, logit") {
		t.Error("the tests of backward stage models are headed stage, logit")
	}
}
