package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// `ordplan fit` shows the odds ratios the report shows: the same rows (no
// spline basis column), each with what it compares and where it holds,
// and names the term left out, because both take them from
// runner.OddsRatios. The plan below and the flags describe the same model;
// the rows of the fit's text and of its --json (checks.odds_ratios) are
// compared with the report's CSV, and each ratio with exp of the estimate
// printed by --json (the definition exp(b), docs/models.md); what each change compares is checked against
// the fitted probabilities in runner/readings_test.go.
func TestFitOddsRatiosAsTheReport(t *testing.T) {
	qs, err := filepath.Abs(filepath.Join("..", "..", "plans", "data", "quietstreets.csv"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	plan := filepath.Join(dir, "plan.yaml")
	src := `version: 1
title: odds ratios of fit and report
data: {file: ` + qs + `}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
categorical:
  street_type: {levels: [residential, through_road, cul_de_sac]}
predictors:
  - pilot
  - {name: age.spline, column: age, spline: {quantiles: [0.1, 0.5, 0.9]}}
  - street_type
  - {name: yrs, column: years_resident, scale: sd}
  - {interact: [pilot, yrs]}
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`
	if err := os.WriteFile(plan, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	if _, errs, code := runCLI("run", plan, "--out", out, "--quiet"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errs)
	}
	b, err := os.ReadFile(filepath.Join(out, "table-odds-ratios-safety.csv"))
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	args := []string{"fit", "--data", qs, "--outcome", "safety", "--categories", "very_unsafe,unsafe,neutral,safe,very_safe",
		"--predictors", "pilot,age|spline=q0.1/0.5/0.9,street_type|levels=residential/through_road/cul_de_sac,years_resident|scale|as=yrs,pilot&yrs"}
	text, errs, code := runCLI(args...)
	if code != 0 {
		t.Fatalf("fit: exit %d: %s", code, errs)
	}
	js, errs, code := runCLI(append(args, "--json")...)
	if code != 0 {
		t.Fatalf("fit --json: exit %d: %s", code, errs)
	}
	var rec struct {
		Estimates map[string]float64 `json:"estimates"`
		Checks    struct {
			OddsRatios struct {
				Level float64 `json:"level"`
				Rows  []struct {
					Predictor string  `json:"predictor"`
					Change    string  `json:"change"`
					HoldsAt   string  `json:"holds_at"`
					Boundary  int     `json:"boundary"`
					Ratio     float64 `json:"ratio"`
					Low       float64 `json:"low"`
					High      float64 `json:"high"`
				} `json:"rows"`
				Omitted []string `json:"omitted"`
			} `json:"odds_ratios"`
		} `json:"checks"`
	}
	if err := json.Unmarshal([]byte(js), &rec); err != nil {
		t.Fatal(err)
	}
	if len(recs) != 6 { // header and pilot, two street types, yrs, pilot&yrs
		t.Fatalf("report's odds ratios:\n%s", b)
	}
	// The text's lines as single-spaced words.
	var lines []string
	for _, l := range strings.Split(text, "\n") {
		lines = append(lines, strings.Join(strings.Fields(l), " "))
	}
	joined := strings.Join(lines, "\n")
	for _, r := range recs[1:] { // model,predictor,change,holds_at,boundary,categories,kind,log_estimate,log_se,ratio,...
		pred, change, holds := r[1], r[2], r[3]
		ratio := math.Exp(rec.Estimates[pred])
		row := strings.Join(strings.Fields(fmt.Sprintf("%s %s %s all %.4f [", pred, change, holds, ratio)), " ")
		if !strings.Contains(joined, "\n"+row) {
			t.Errorf("report row %q: no line %q in the fit's text:\n%s", r, row, text)
		}
	}
	// --json holds the same rows under checks.odds_ratios, with the
	// report's numbers (its CSV's) and the term left out.
	jsORs := rec.Checks.OddsRatios
	if jsORs.Level != 0.95 || len(jsORs.Rows) != len(recs)-1 || !slices.Equal(jsORs.Omitted, []string{"age.spline"}) {
		t.Fatalf("fit --json odds ratios: %+v, want the %d rows of the report and age.spline left out", jsORs, len(recs)-1)
	}
	for i, r := range recs[1:] {
		o := jsORs.Rows[i]
		if got := []string{o.Predictor, o.Change, o.HoldsAt, strconv.Itoa(o.Boundary)}; !slices.Equal(got, r[1:5]) {
			t.Errorf("fit --json odds ratio %d: %v, the report's %v", i, got, r[1:5])
		}
		for j, v := range []float64{o.Ratio, o.Low, o.High} {
			want, err := strconv.ParseFloat(r[9+j], 64)
			if err != nil || math.Abs(v-want) > 1e-9*math.Abs(want) {
				t.Errorf("fit --json odds ratio %d (%s): %v, the report's %s", i, o.Predictor, v, r[9+j])
			}
		}
	}
	_, ors, _ := strings.Cut(joined, "odds ratios, exp(b)")
	if strings.Contains(ors, "age.spline.1") || !strings.Contains(joined, "No odds ratio for the columns of age.spline:") {
		t.Errorf("the spline's columns in the fit's odds ratios, or the term not named:\n%s", text)
	}
	if !strings.Contains(joined, "predictor change holds at boundary ratio 95% interval") {
		t.Errorf("header:\n%s", text)
	}
}

// An odds ratio per unit of a column measured in units of 1e-12 (slope
// about 1e12) is beyond what a number holds: ordplan fit and the report
// say why it reads inf or 0 and how to rescale, and --json gives null; a
// column in ordinary units gets no such note.
func TestFitOddsRatiosBeyondNumbers(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("y,x,tiny\n")
	for i := range 120 {
		x := float64(i%11)/5 - 1
		tiny := float64((i*7)%13-6) * 1e-12
		y := 1 + (i%3+int(math.Round(x+tiny*1e12/3))+3)%3
		fmt.Fprintf(&b, "%d,%g,%g\n", y, x, tiny)
	}
	data := filepath.Join(dir, "tiny.csv")
	if err := os.WriteFile(data, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errs, code := runCLI("fit", "--data", data, "--outcome", "y", "--predictors", "x,tiny")
	if code != 0 {
		t.Fatalf("exit %d\n%s%s", code, out, errs)
	}
	want := "The odds ratios of tiny read inf or 0: exp(b) per unit of the column lies beyond what a number holds"
	if !strings.Contains(out, want) || strings.Contains(out, "odds ratios of x") {
		t.Errorf("want %q (tiny alone) in\n%s", want, out)
	}
	// --json gives the ratio as the number it is (0, or null for an
	// infinite one), with its log.
	jout, _, _ := runCLI("fit", "--data", data, "--outcome", "y", "--predictors", "x,tiny", "--json")
	var j struct {
		Checks struct {
			OddsRatios struct {
				Rows []struct {
					Predictor string   `json:"predictor"`
					Log       float64  `json:"log_estimate"`
					Ratio     *float64 `json:"ratio"`
				} `json:"rows"`
			} `json:"odds_ratios"`
		} `json:"checks"`
	}
	if err := json.Unmarshal([]byte(jout), &j); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, r := range j.Checks.OddsRatios.Rows {
		if r.Predictor == "tiny" {
			found = true
			if math.Abs(r.Log) < 1e9 || r.Ratio != nil && *r.Ratio != 0 && !math.IsInf(*r.Ratio, 0) {
				t.Errorf("--json: tiny log %g ratio %v", r.Log, r.Ratio)
			}
		}
	}
	if !found {
		t.Errorf("--json: no odds ratio of tiny in\n%s", jout)
	}
}
