package render

import (
	"bytes"
	"encoding/csv"
	"regexp"
	"strings"
	"testing"

	"ordplan/runner"
)

// TestSimulatedMarkOnEveryOutput: the outputs of a run on simulated data
// each say so where a copy would be taken from: every CSV table has a
// last column simulated_data reading SIMULATED DATA in every row, after
// the columns of a run on real data; every figure's title and every
// chart's title in report.html (what its PNG and SVG exports draw) open
// with a line SIMULATED DATA; the methods draft opens with the mark. The
// same run on real data has none of it.
func TestSimulatedMarkOnEveryOutput(t *testing.T) {
	res := runPlan(t, goldenPlan, 1)
	real := outputsOf(t, res)
	res.Simulated = &runner.Simulation{Command: "rehearse", N: 300, Seed: 1, Link: "logit", Model: "cumulative logit", File: "simulated-data.csv"}
	sim := outputsOf(t, res)
	tables, figures := 0, 0
	for name, b := range sim {
		switch {
		case strings.HasSuffix(name, ".csv"):
			tables++
			recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			plain, _ := csv.NewReader(bytes.NewReader(real[name])).ReadAll()
			if len(recs) != len(plain) {
				t.Fatalf("%s: %d records, %d on real data", name, len(recs), len(plain))
			}
			for i, rec := range recs {
				want := SimulatedMark
				if i == 0 {
					want = simulatedColumn
				}
				if rec[len(rec)-1] != want || strings.Join(rec[:len(rec)-1], ",") != strings.Join(plain[i], ",") {
					t.Errorf("%s, record %d: %q; on real data %q", name, i+1, rec, plain[i])
					break
				}
			}
			if bytes.Contains(real[name], []byte(simulatedColumn)) {
				t.Errorf("%s of a real run has the column %s", name, simulatedColumn)
			}
		case strings.HasSuffix(name, ".svg"):
			figures++
			if !regexp.MustCompile(`<text[^>]*>SIMULATED DATA</text>`).Match(b) || bytes.Contains(real[name], []byte(SimulatedMark)) {
				t.Errorf("%s: the title's first line is not %s (or a real run's figure has it)", name, SimulatedMark)
			}
		}
	}
	if tables < 5 || figures < 5 {
		t.Fatalf("%d tables and %d figures", tables, figures)
	}
	page := string(sim["report.html"])
	charts := regexp.MustCompile(`ordplanDraw\("chart-[0-9]+",`).FindAllString(page, -1)
	// The chart's own title (its option's keys come sorted, the title's
	// after others), then those of its layouts for narrow and usual
	// widths (the first key of a media option).
	titles := regexp.MustCompile(`,"title":\{"text":"SIMULATED DATA\\n`).FindAllString(page, -1)
	if len(charts) == 0 || len(titles) != len(charts) {
		t.Errorf("%d of %d charts of report.html have the mark as their title's first line", len(titles), len(charts))
	}
	media := regexp.MustCompile(`"option":\{"title":\{"text":"([^"\\]|\\n)`).FindAllString(page, -1)
	if marked := regexp.MustCompile(`"option":\{"title":\{"text":"SIMULATED DATA\\n`).FindAllString(page, -1); len(marked) != len(media) {
		t.Errorf("%d of %d layouts of charts at a narrow or usual width have the mark as their title's first line", len(marked), len(media))
	}
	md := string(sim["report.md"])
	methods := md[strings.Index(md, "## Methods (draft)"):]
	hasAll(t, "report.md's methods draft", methods[:600], "**SIMULATED DATA.** This draft describes a rehearsal on data simulated")
	hasAll(t, "report.md's files", md, "has a last column `simulated_data` reading SIMULATED DATA in every row")
	if strings.Contains(string(real["report.html"]), `"text":"SIMULATED DATA`) || strings.Contains(string(real["report.md"]), "simulated_data") {
		t.Error("a real run's report carries the mark")
	}
}
