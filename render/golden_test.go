package render

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite testdata/golden/report.md from the current output")

// updateHow is the command that rewrites the golden report: -update goes
// after the package (or after -args), where go test passes it to the test
// binary; before the package, go test misreads the package as its value.
const updateHow = "go test ./render/ -run TestGoldenReport -args -update"

// TestGoldenReport compares report.md with the reviewed copy, and checks
// that two runs (with different numbers of workers) give the same bytes.
func TestGoldenReport(t *testing.T) {
	first := renderPlan(t, goldenPlan, 1)
	path := filepath.Join("testdata", "golden", "report.md")
	if *update {
		if err := os.WriteFile(path, first["report.md"], 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (make it with %s)", err, updateHow)
	}
	if got := first["report.md"]; !bytes.Equal(got, want) {
		t.Errorf("report.md differs from %s (after checking the change, rewrite it with %s):\n%s", path, updateHow, firstDiff(string(want), string(got)))
	}
	second := renderPlan(t, goldenPlan, 4)
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
