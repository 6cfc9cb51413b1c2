package render

import (
	"bytes"
	"encoding/csv"
	"math"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
	"path/filepath"
)

// TestTableFiles: every table file of the golden run is CSV with one
// header and rows of the same width, is listed in the report, and the
// estimates file holds the chosen model's estimates to full precision.
func TestTableFiles(t *testing.T) {
	p, err := plan.Load(filepath.Join("testdata", "golden.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	res, err := runner.Run(p, runner.Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	files, err := Outputs(res, runner.BuildDecisions(res), nil)
	if err != nil {
		t.Fatal(err)
	}
	md := string(files["report.md"])
	want := []string{"descriptives", "models", "estimates", "odds-ratios", "tests", "decision-log", "marginal-effects", "predicted", "calibration"}
	for _, kind := range want {
		name := "table-" + kind + "-safety.csv"
		b, ok := files[name]
		if !ok {
			t.Errorf("%s not written", name)
			continue
		}
		if !strings.Contains(md, name) {
			t.Errorf("%s not listed in report.md", name)
		}
		recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if len(recs) < 2 {
			t.Errorf("%s: %d lines", name, len(recs))
		}
	}
	recs, _ := csv.NewReader(bytes.NewReader(files["table-estimates-safety.csv"])).ReadAll()
	ch := res.Outcomes[0].Chosen.Result
	found := 0
	for _, r := range recs[1:] {
		if r[0] != res.Outcomes[0].Chosen.ID {
			continue
		}
		i := found
		found++
		est, _ := strconv.ParseFloat(r[3], 64)
		se, _ := strconv.ParseFloat(r[4], 64)
		if math.Abs(est-ch.Estimates[i]) > 1e-11*math.Max(1, math.Abs(est)) || math.Abs(se-ch.StdErrors[i]) > 1e-11*math.Max(1, se) {
			t.Errorf("%s: %s %s, want %g %g", r[2], r[3], r[4], ch.Estimates[i], ch.StdErrors[i])
		}
	}
	if found != len(ch.Estimates) {
		t.Errorf("%d estimates of the chosen model in the file, want %d", found, len(ch.Estimates))
	}
}
