package simulate

import (
	"bytes"
	"math"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
)

// subsetPopPlan: the subset (age >= 30) keeps part of the simulated rows,
// and age moves the outcome; the proportions describe the analysed
// population, the rows the subset keeps.
var subsetPopPlan = testsurvey.Plan{
	Seed:       4242,
	Categories: `[a, b, c]`,
	Sections: `predictors: [age]
subset:
  - {column: age, at_least: 30}
dictionary:
  age: {range: [0, 100]}
`,
	Assumptions: `  predictors:
    age: {mean: 35, sd: 15}
  outcomes:
    y: {proportions: [0.5, 0.3, 0.2], effects: {age: 0.08}}
`,
}.YAML()

// TestProportionsHoldAfterSubset: the stated proportions hold among the
// rows the subset keeps (the population the plan analyses), within the
// Monte Carlo error of 100000 kept rows, while all rows (older and
// younger) have other shares: with the slope 0.08 per year the rows under
// 30 lean towards the lowest category.
func TestProportionsHoldAfterSubset(t *testing.T) {
	sim, err := New(parsePlan(t, subsetPopPlan))
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	const n = 300_000
	if err := sim.Write(&buf, n, 1); err != nil {
		t.Fatal(err)
	}
	kept, all := make([]float64, 3), make([]float64, 3)
	nk := 0.0
	for _, l := range strings.Split(strings.TrimSpace(buf.String()), "\n")[1:] {
		f := strings.Split(l, ",")
		j := int(f[0][0] - 'a')
		all[j]++
		if age := parseNum(t, f[1]); age >= 30 {
			kept[j]++
			nk++
		}
	}
	for j, want := range []float64{0.5, 0.3, 0.2} {
		got := kept[j] / nk
		// binomial sd of the kept rows (about 190000) <= 0.0012, of the
		// calibration sample <= 0.0016: 0.006 is over 3 combined sds.
		if math.Abs(got-want) > 0.006 {
			t.Errorf("category %c among the kept rows: %.4f, stated %.4f", 'a'+j, got, want)
		}
	}
	if a := all[0] / n; a < 0.52 {
		t.Errorf("share of a over all rows %.4f: the younger rows should raise it above 0.5", a)
	}
	t.Logf("kept %.0f of %d rows; shares among them %.4f %.4f %.4f; over all rows %.4f", nk, n, kept[0]/nk, kept[1]/nk, kept[2]/nk, all[0]/n)
}

// A subset that keeps too few of the rows drawn from the assumptions
// cannot be calibrated on; it is refused with the subset's conditions.
func TestSubsetKeepsTooFewRows(t *testing.T) {
	src := strings.Replace(subsetPopPlan, "{column: age, at_least: 30}", "{column: age, at_least: 99.99}", 1)
	_, err := New(parsePlan(t, src))
	if err == nil || !strings.Contains(err.Error(), "subset: the plan's subset (age >= 99.99) keeps ") {
		t.Errorf("got %v", err)
	}
}

// droppedLevelPlan: the level "east" of site is so rare (1 in 100000)
// that the calibration sample of this seed has none, and the plan drops
// a level no row has.
var droppedLevelPlan = testsurvey.Plan{
	Seed:       17,
	Categories: `[a, b, c]`,
	Sections: `categorical:
  site: {levels: [north, south, east], unobserved: drop}
predictors: [site, x, {interact: [x, site]}]
dictionary:
  site: {}
  x: {range: [-3, 3]}
`,
	Assumptions: `  predictors:
    x: {mean: 0, sd: 1}
    site: {proportions: [0.499995, 0.499995, 0.00001]}
  outcomes:
    y:
      proportions: [0.3, 0.4, 0.3]
      effects:
        site: {south: 0.4, east: 0.9}
        x: 0.5
`,
}.YAML()

// TestEffectOfDroppedLevel: an effect stated for a level that the
// simulated rows lack (so the design drops its column) is refused with
// the plan key and the level, for a level slope and for an interaction's
// design column; it is never ignored nor a panic. (A level the subset
// leaves out is refused when the plan is checked.)
func TestEffectOfDroppedLevel(t *testing.T) {
	_, err := New(parsePlan(t, droppedLevelPlan))
	if err == nil || !strings.Contains(err.Error(), `assumptions.outcomes.y.effects.site.east: level "east" of site occurs in no simulated row, so the design drops its column`) {
		t.Errorf("level slope: %v", err)
	}
	src := strings.Replace(droppedLevelPlan, "site: {south: 0.4, east: 0.9}", "site: {south: 0.4}\n        x&site: {x&site.south: 0.2, x&site.east: 0.3}", 1)
	_, err = New(parsePlan(t, src))
	if err == nil || !strings.Contains(err.Error(), `assumptions.outcomes.y.effects.x&site.x&site.east: the design column "x&site.east" is not made on the simulated rows: level "east" of site occurs in none of them`) {
		t.Errorf("interaction column: %v", err)
	}
	// Without the effects of east the plan simulates.
	src = strings.Replace(droppedLevelPlan, "site: {south: 0.4, east: 0.9}", "site: {south: 0.4}", 1)
	if _, err := New(parsePlan(t, src)); err != nil {
		t.Error(err)
	}
}

func parseNum(t *testing.T, s string) float64 {
	t.Helper()
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return x
}

// TestNegativeProbabilityRowStops: a simulated row at which the stated
// nonparallel effects make P(y <= 2) fall below P(y <= 1) stops the
// simulation with the plan key, the row and the category, instead of
// getting a category anyway. The calibration check refuses such effects
// on the calibration sample, so the row here is made as a row beyond that
// sample would see it: the cutpoints moved together (tau_2 - tau_1 = 0.05)
// until the slopes 0 and 0.1 of x cross inside x's range [-3, 3] (at
// x = 0.5). Rows the subset leaves out are never analysed and do not stop
// it: with the subset x <= 0.4 every row is written.
func TestNegativeProbabilityRowStops(t *testing.T) {
	src := strings.Replace(subsetPopPlan, "predictors: [age]", "predictors: [x]", 1)
	src = strings.Replace(src, "  age: {range: [0, 100]}", "  x: {range: [-3, 3]}", 1)
	src = strings.Replace(src, "    age: {mean: 35, sd: 15}", "    x: {mean: 0, sd: 1}", 1)
	src = strings.Replace(src, "effects: {age: 0.08}", "nonparallel: {x: [0, 0.1]}", 1)
	noSubset := strings.Replace(src, "subset:\n  - {column: age, at_least: 30}\n", "", 1)
	sim, err := New(parsePlan(t, noSubset))
	if err != nil {
		t.Fatal(err)
	}
	o := &sim.Outcomes[0]
	o.Cut[1] = o.Cut[0] + 0.05
	err = sim.Write(&bytes.Buffer{}, 200, 0)
	if err == nil || !strings.Contains(err.Error(), "assumptions.outcomes.y.nonparallel: simulated row ") || !strings.Contains(err.Error(), " gets a negative probability of category b") {
		t.Errorf("got %v", err)
	}
	sub, err := New(parsePlan(t, strings.Replace(src, "{column: age, at_least: 30}", "{column: x, at_most: 0.4}", 1)))
	if err != nil {
		t.Fatal(err)
	}
	o = &sub.Outcomes[0]
	o.Cut[1] = o.Cut[0] + 0.05
	if err := sub.Write(&bytes.Buffer{}, 200, 0); err != nil {
		t.Errorf("rows outside the subset: %v", err)
	}
}

// TestRowsOutsideSubsetWithoutValidModel: the stated nonparallel effect
// of x (0 and 0.3) makes the boundaries cross for large x, beyond the
// subset x <= 0.5, where the calibration sample is drawn; the rows there
// are never analysed, so the simulation goes on and leaves their outcome
// empty (missing) instead of stopping or giving them a category, while
// every row the subset keeps gets one.
func TestRowsOutsideSubsetWithoutValidModel(t *testing.T) {
	src := strings.Replace(subsetPopPlan, "predictors: [age]", "predictors: [x]", 1)
	src = strings.Replace(src, "{column: age, at_least: 30}", "{column: x, at_most: 0.5}", 1)
	src = strings.Replace(src, "  age: {range: [0, 100]}", "  x: {label: X}", 1)
	src = strings.Replace(src, "    age: {mean: 35, sd: 15}", "    x: {mean: 0, sd: 1}", 1)
	src = strings.Replace(src, "y: {proportions: [0.5, 0.3, 0.2], effects: {age: 0.08}}", "y: {proportions: [0.45, 0.1, 0.45], nonparallel: {x: [0, 0.3]}}", 1)
	sim, err := New(parsePlan(t, src))
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := sim.Write(&buf, 2000, 0); err != nil {
		t.Fatal(err)
	}
	empty := 0
	for _, l := range strings.Split(strings.TrimSpace(buf.String()), "\n")[1:] {
		f := strings.Split(l, ",")
		if f[0] == "" {
			empty++
			if x := parseNum(t, f[1]); x <= 0.5 {
				t.Errorf("row %q inside the subset has no category", l)
			}
		}
	}
	if empty == 0 {
		t.Error("no row beyond the crossing point: the test does not reach the case")
	}
	t.Logf("%d of 2000 rows outside the subset left without a category", empty)
}

// A subset is refused after the first probeDraws rows only when the share it
// keeps there is under 5% by a clear margin, so that the early answer is the
// one the full draw (maxCalibrationDraws) would give: counts by hand, k + 4
// sqrt(k) + 4 against drawn/20 = 1000 of 20000. A subset keeping 5% (1000)
// or just under it (900: 900 + 120 + 4 = 1024) goes on drawing; one keeping
// 4% (800: 800 + 113.1 + 4 = 917.1) or none is refused there.
func TestSubsetRefusedEarlyOnlyWhenClear(t *testing.T) {
	if probeDraws != 20000 || maxCalibrationDraws != 20*CalibrationRows {
		t.Fatalf("probe %d, limit %d: the hand counts below are for 20000 and 20 x %d", probeDraws, maxCalibrationDraws, CalibrationRows)
	}
	for _, c := range []struct {
		kept int
		far  bool
	}{{0, true}, {226, true}, {800, true}, {900, false}, {1000, false}, {5000, false}} {
		if got := keptFarBelow(c.kept, probeDraws); got != c.far {
			t.Errorf("%d kept of %d: refused early %v, want %v", c.kept, probeDraws, got, c.far)
		}
	}
}
