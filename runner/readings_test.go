package runner

import (
	"math"
	"strconv"
	"strings"
	"testing"
)

// What the odds ratio of each model column is for (ColumnReadings), read
// against the numbers: by the definition of the cumulative logit
// (docs/models.md: L_1 = tau_1 - x'b, so the log odds of y > 1 is x'b -
// tau_1), the log odds ratio of a column is the difference of the fitted
// log odds of y > 1 between the two raw rows its reading names (the change,
// at the point where it holds), computed by hand here from the model's own
// predicted probabilities of those rows. For sum coding the comparison is
// with the unweighted mean of the levels' log odds; for an interaction
// column, a difference of two such differences. Spline columns have no
// reading of their own.
func TestColumnReadingsSayWhatTheOddsRatioIs(t *testing.T) {
	const src = `version: 1
title: readings
data: {file: trial.csv}
outcomes: [{column: relief, categories: [none, slight, moderate, complete]}]
categorical:
  treat: {levels: [placebo, drug]}
  site: {levels: [north, east, south, west], coding: CODING}
predictors:
  - treat
  - site
  - {name: age, column: age, spline: {quantiles: [0.05, 0.35, 0.65, 0.95]}}
  - {name: dose, column: dose, log: {shift: 1}, centre: mean}
  - {interact: [treat, dose]}
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`
	files := map[string]string{"trial.csv": inventedTrial(500)}
	for _, coding := range []string{"treatment", "sum", "successive"} {
		t.Run(coding, func(t *testing.T) {
			or := runPlan(t, writePlan(t, strings.Replace(src, "CODING", coding+map[string]string{"successive": ", ordered: true"}[coding], 1), files), 0).Outcomes[0]
			res, dz := or.Chosen.Result, or.Design
			reads := or.ColumnReadings()
			if len(reads) != len(dz.Columns) {
				t.Fatalf("%d readings for %d columns", len(reads), len(dz.Columns))
			}
			byCol := map[string]ColumnReading{}
			for _, r := range reads {
				byCol[r.Column] = r
			}
			b := map[string]float64{}
			for i, n := range res.ParamNames {
				b[n] = res.Estimates[i]
			}
			// logOdds is the fitted log odds of y > 1 at a raw row
			// (treat, site, age, dose given by level index or value).
			logOdds := func(treat, site int, dose float64) float64 {
				row := make([]float64, len(dz.Columns))
				raw := make([]float64, len(dz.Sources))
				raw[dz.Source("treat")], raw[dz.Source("site")] = float64(treat), float64(site)
				raw[dz.Source("age")], raw[dz.Source("dose")] = 41, dose
				if err := dz.Row(raw, row); err != nil {
					t.Fatal(err)
				}
				pr, err := res.Predict(row, nil)
				if err != nil {
					t.Fatal(err)
				}
				p1 := pr.Prob[0]
				return math.Log((1 - p1) / p1)
			}
			check := func(col string, change, where string, got float64) {
				t.Helper()
				r, ok := byCol[col]
				if !ok || !r.Alone || r.Change != change || r.Where != where {
					t.Errorf("%s: reading %+v, want change %q where %q", col, r, change, where)
				}
				if math.Abs(got-b[col]) > 1e-9 {
					t.Errorf("%s: log odds ratio from the reading's rows %.12g, slope %.12g", col, got, b[col])
				}
			}
			d0 := math.Exp(dz.Terms[dz.Term("dose")].Mean) - 1 // log(dose + 1) at its centre
			d0Text := strconv.FormatFloat(d0, 'g', 6, 64)
			check("treat.drug", "drug against placebo", "dose = "+d0Text, logOdds(1, 0, d0)-logOdds(0, 0, d0))
			check("dose", "per unit of log(dose + 1)", "treat = placebo", logOdds(0, 2, math.E*(3+1)-1)-logOdds(0, 2, 3))
			lo := func(site int) float64 { return logOdds(0, site, 2) }
			sites := []string{"north", "east", "south", "west"}
			for l := 1; l < 4; l++ {
				col := "site." + sites[l]
				if r := byCol[col]; r.Level != sites[l] {
					t.Errorf("%s: level %q, want %q", col, r.Level, sites[l])
				}
				switch coding {
				case "treatment":
					check(col, sites[l]+" against north", "", lo(l)-lo(0))
				case "successive":
					check(col, sites[l]+" against "+sites[l-1], "", lo(l)-lo(l-1))
				case "sum":
					mean := (lo(0) + lo(1) + lo(2) + lo(3)) / 4
					check(col, sites[l]+" against the unweighted mean of the levels", "", lo(l)-mean)
				}
			}
			ratio := func(d float64) float64 { return logOdds(1, 1, d) - logOdds(0, 1, d) }
			check(dz.Terms[4].Columns[0], "interaction: treat drug against placebo × per unit of log(dose + 1)", "", ratio(math.E*(1+1)-1)-ratio(1))
			if r := byCol["dose"]; r.Level != "" {
				t.Errorf("dose: level %q, want none", r.Level)
			}
			for _, col := range dz.Terms[dz.Term("age")].Columns {
				if r := byCol[col]; r.Alone || !strings.HasPrefix(r.Change, "column ") {
					t.Errorf("%s: a spline column read as %+v", col, r)
				}
			}
		})
	}
}

// A hypothesis restricting a term that enters an interaction says where
// it holds in the odds ratios' own words (one function, holdsAt): "treat =
// 0" with treat&dose in the model tests treat at dose's centre only.
func TestHypothesisHoldsWhereTheOddsRatioDoes(t *testing.T) {
	const src = `version: 1
title: holds at
data: {file: trial.csv}
outcomes: [{column: relief, categories: [none, slight, moderate, complete]}]
categorical:
  treat: {levels: [placebo, drug]}
  site: {levels: [north, east, south, west]}
predictors:
  - treat
  - site
  - {name: dose, column: dose, log: {shift: 1}, centre: mean}
  - {interact: [treat, dose]}
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
inference:
  hypotheses: ["treat = 0", "treat.drug[2] = treat.drug[1]", "treat&dose = 0", "site = 0", "dose = 0; treat = 0", "site.east = 0"]
`
	or := runPlan(t, writePlan(t, src, map[string]string{"trial.csv": inventedTrial(300)}), 0).Outcomes[0]
	where := map[string]string{}
	for _, r := range or.ColumnReadings() {
		where[r.Column] = r.Where
	}
	want := map[string]string{
		"treat = 0":                     where["treat.drug"],
		"treat.drug[2] = treat.drug[1]": where["treat.drug"],
		"treat&dose = 0":                "",
		"site = 0":                      "",
		"site.east = 0":                 "",
		"dose = 0; treat = 0":           "dose: " + where["dose"] + "; treat: " + where["treat.drug"],
	}
	if !strings.HasPrefix(where["treat.drug"], "dose = ") || where["dose"] != "treat = placebo" {
		t.Fatalf("readings: %v", where)
	}
	seen := map[string]bool{}
	for _, h := range or.Hypotheses {
		w, ok := want[h.Text]
		if !ok || h.HoldsAt != w {
			t.Errorf("%s in %s: holds at %q, want %q", h.Text, h.Model, h.HoldsAt, w)
		}
		seen[h.Text] = true
	}
	if len(seen) != len(want) {
		t.Errorf("tested: %v", seen)
	}
}

// Where an effect holds is a raw value of each term it interacts with: for
// a spline, the value at which all of its columns are 0, or the words
// that no value gives that; a value outside the range of the rows fitted
// is flagged in the words the new rows' extrapolation uses (one decision,
// sourceRanges.extrapolation), here age 0 against ages 20 to 70 of the
// invented trial.
func TestHoldsAtFlagsExtrapolation(t *testing.T) {
	const src = `version: 1
title: holds at a raw value
data: {file: trial.csv}
outcomes: [{column: relief, categories: [none, slight, moderate, complete]}]
categorical:
  treat: {levels: [placebo, drug]}
predictors:
  - treat
  - TERM
  - {interact: [treat, a]}
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
inference:
  hypotheses: ["treat = 0"]
`
	trial := inventedTrial(300)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, line := range strings.Split(strings.TrimSpace(trial), "\n")[1:] {
		v, err := strconv.ParseFloat(strings.Split(line, ",")[3], 64)
		if err != nil {
			t.Fatal(err)
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	beyond := "extrapolation: age 0 is beyond the range of the rows the model was fitted to, " + strconv.FormatFloat(lo, 'g', -1, 64) + " to " + strconv.FormatFloat(hi, 'g', -1, 64)
	for _, c := range []struct{ term, want string }{
		{"{name: a, column: age, spline: {knots: [30, 45, 60]}}", "age = 0 (the columns of a at 0; " + beyond + ")"},
		{"{name: a, column: age, centre: mean, spline: {quantiles: [0.1, 0.5, 0.9]}}", "the columns of a at 0, which no value of age gives"},
		{"{name: a, column: age}", "age = 0 (" + beyond + ")"},
		{"{name: a, column: age, centre: 45}", "age = 45"},
	} {
		or := runPlan(t, writePlan(t, strings.Replace(src, "TERM", c.term, 1), map[string]string{"trial.csv": trial}), 0).Outcomes[0]
		if len(or.Hypotheses) != 1 || or.Hypotheses[0].HoldsAt != c.want {
			t.Errorf("%s: hypotheses %+v, want holds at %q", c.term, or.Hypotheses, c.want)
		}
		for _, r := range or.ColumnReadings() {
			if r.Column == "treat.drug" && r.Where != c.want {
				t.Errorf("%s: the odds ratio of treat.drug holds at %q, want %q", c.term, r.Where, c.want)
			}
		}
	}
}
