package render

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
)

var update = flag.Bool("update", false, "rewrite testdata/golden/report.md from the current output")

// runGolden runs the golden plan through the whole pipeline, as
// `ordplan run` does, and returns the rendered files.
func runGolden(t *testing.T, workers int) map[string][]byte {
	t.Helper()
	p, err := plan.Load(filepath.Join("testdata", "golden.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	res, err := runner.Run(p, runner.Options{Workers: workers})
	if err != nil {
		t.Fatal(err)
	}
	// The build environment is shown in the report; fixed here so that the
	// reviewed copy does not depend on the Go release or the machine.
	res.GoVersion, res.Platform = "go (test)", "os/arch (test)"
	files, err := Outputs(res, runner.BuildDecisions(res), nil)
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// TestGoldenReport compares report.md with the reviewed copy, and checks
// that two runs (with different numbers of workers) give the same bytes.
func TestGoldenReport(t *testing.T) {
	first := runGolden(t, 1)
	path := filepath.Join("testdata", "golden", "report.md")
	if *update {
		if err := os.WriteFile(path, first["report.md"], 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run with -update to create it)", err)
	}
	if got := first["report.md"]; !bytes.Equal(got, want) {
		t.Errorf("report.md differs from %s (run with -update after checking the change):\n%s", path, firstDiff(string(want), string(got)))
	}
	second := runGolden(t, 4)
	for _, name := range []string{"report.md", "report.html", "decisions.json"} {
		if !bytes.Equal(first[name], second[name]) {
			t.Errorf("%s differs between two runs:\n%s", name, firstDiff(string(first[name]), string(second[name])))
		}
	}
}

// firstDiff shows the first line where two texts differ.
func firstDiff(want, got string) string {
	wl, gl := strings.Split(want, "\n"), strings.Split(got, "\n")
	for i := 0; i < len(wl) || i < len(gl); i++ {
		var w, g string
		if i < len(wl) {
			w = wl[i]
		}
		if i < len(gl) {
			g = gl[i]
		}
		if w != g {
			return "line " + strconv.Itoa(i+1) + "\nwant: " + clip(w) + "\n got: " + clip(g)
		}
	}
	return "(same lines)"
}

func clip(s string) string {
	if len(s) > 300 {
		return s[:300] + "..."
	}
	return s
}
