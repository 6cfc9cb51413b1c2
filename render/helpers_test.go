package render

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
)

// goldenPlan is the plan of the golden report.
var goldenPlan = filepath.Join("testdata", "golden.yaml")

// runPlan loads and runs the plan at path as `ordplan run` does, with the
// build environment the report shows fixed, so that the output does not
// depend on the Go release or the machine.
func runPlan(t *testing.T, path string, workers int) *runner.Result {
	t.Helper()
	p, err := plan.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	res, err := runner.Run(p, runner.Options{Workers: workers})
	if err != nil {
		t.Fatal(err)
	}
	res.GoVersion, res.Platform = "go (test)", "os/arch (test)"
	return res
}

// renderPlan runs the plan at path (runPlan) and returns the files the
// run writes.
func renderPlan(t *testing.T, path string, workers int) map[string][]byte {
	t.Helper()
	return outputsOf(t, runPlan(t, path, workers))
}

// renderSource writes the plan src as dir/p.yaml and renders it
// (renderPlan).
func renderSource(t *testing.T, dir, src string, workers int) map[string][]byte {
	t.Helper()
	path := filepath.Join(dir, "p.yaml")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return renderPlan(t, path, workers)
}

// outputsOf renders a run: the files it writes.
func outputsOf(t *testing.T, res *runner.Result) map[string][]byte {
	t.Helper()
	files, err := Outputs(res, runner.BuildDecisions(res), nil)
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// hasAll reports each of wants that the rendered file name (its text doc)
// does not contain.
func hasAll(t *testing.T, name, doc string, wants ...string) {
	t.Helper()
	for _, want := range wants {
		if !strings.Contains(doc, want) {
			t.Errorf("%s lacks %q", name, want)
		}
	}
}
