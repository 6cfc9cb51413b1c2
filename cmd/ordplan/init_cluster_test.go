package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/plan"
)

// Codes repeated over rows, as the ids of clinics are (1..48, or c1..c48,
// over 700 rows), are offered as the cluster column and left out of the
// predictors, not described as a numeric predictor with a range; whole
// numbers that do not run from 1 without a gap (ages) and a few codes
// under a name that says nothing of clusters stay predictors. Invented
// data: 700 rows of seeded arithmetic. Weights that are not whole numbers
// are said to be sampling weights, since frequency weights are counts.
func TestInitOffersClusterIDs(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("grade,clinic,centre,age,dose,sw\n")
	for i := range 700 {
		fmt.Fprintf(&b, "%d,%d,c%d,%d,%d,%.3f\n", 1+i%3, 1+(i*7)%48, 1+(i*11)%48, 18+(i*13)%60, i%12, 0.5+float64(i%50)/20)
	}
	planPath, text := initSkeleton(t, dir, b.String(), "grade")
	hasEach(t, text,
		"#   clinic  numeric, whole numbers from 1 to 48, 48 distinct codes over 700 rows (14.6 rows each on average): cluster ids (clinics, schools, ...) or identifiers, not an amount?  (clusters? not a predictor below: see data.cluster)",
		"#   centre  text, 48 distinct codes over 700 rows (14.6 rows each on average): cluster ids (clinics, schools, ...) or identifiers, not an amount?  (clusters? not a predictor below: see data.cluster)",
		"  cluster: null           # a column of cluster ids (needs covariance: clustered); clinic and centre look like cluster ids or identifiers",
		"predictors: [age, dose]",
		"  weights: null           # a column of case weights (and weight_kind: frequency or sampling); sw looks like weights (sw not whole numbers: sampling weights, weight_kind: sampling; frequency weights are counts)",
	)
	if strings.Contains(string(text), "  clinic:") {
		t.Errorf("clinic is described in the dictionary as a predictor:\n%s", text)
	}
	loadSkeleton(t, planPath)
}

// TestInitKeepsNumericPredictors: whole-number measurements with many
// values repeated over rows (sizes, incomes, ages, hours, a 0-40 score)
// stay predictors, even when a word of the name is also an id word
// (class_size, subject_age, household_income): only a name that ends in
// an id word (clinic, school_id, ClinicID) says cluster ids.
func TestInitKeepsNumericPredictors(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("y,class_size,household_income,subject_age,hours,score,ClinicID\n")
	for i := range 400 {
		fmt.Fprintf(&b, "%d,%d,%d,%d,%d,%d,%d\n", 1+i%3, 15+(i*8)%21, 20+(i*13)%101, 18+(i*17)%63, (i*11)%51, (i*19)%41, 1+(i*7)%30)
	}
	_, text := initSkeleton(t, dir, b.String(), "y")
	hasEach(t, text,
		"predictors: [class_size, household_income, subject_age, hours, score]",
		"#   hours             numeric, whole numbers from 0 to 50\n",
		"#   ClinicID          numeric, whole numbers from 1 to 30, 30 distinct codes",
		"ClinicID looks like cluster ids or identifiers",
	)
}

// initSkeleton writes csv as dir/t.csv, runs ordplan init on it with the
// given outcome into dir/t.yaml and returns the plan's path and text.
func initSkeleton(t *testing.T, dir, csv, outcome string) (string, string) {
	t.Helper()
	dataPath := filepath.Join(dir, "t.csv")
	if err := os.WriteFile(dataPath, []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	planPath := filepath.Join(dir, "t.yaml")
	if _, errs, code := runCLI("init", planPath, "--data", dataPath, "--outcome", outcome); code != 0 {
		t.Fatal(errs)
	}
	text, err := os.ReadFile(planPath)
	if err != nil {
		t.Fatal(err)
	}
	return planPath, string(text)
}

// loadSkeleton loads the plan init wrote at path: the test stops, showing
// the plan, when it is not a valid plan.
func loadSkeleton(t *testing.T, path string) *plan.Plan {
	t.Helper()
	p, err := plan.Load(path)
	if err != nil {
		text, _ := os.ReadFile(path)
		t.Fatalf("not a valid plan: %v\n%s", err, text)
	}
	return p
}

// checksInside runs ordplan check on the plan init wrote at path: exit 0,
// and no value of the data outside the dictionary init wrote.
func checksInside(t *testing.T, path string) {
	t.Helper()
	if out, errs, code := runCLI("check", path); code != 0 || strings.Contains(out+errs, "outside") {
		t.Errorf("check: exit %d\n%s%s", code, out, errs)
	}
}

// hasEach reports each of wants that text lacks.
func hasEach(t *testing.T, text string, wants ...string) {
	t.Helper()
	for _, want := range wants {
		if !strings.Contains(text, want) {
			t.Errorf("want %q in\n%s", want, text)
		}
	}
}
