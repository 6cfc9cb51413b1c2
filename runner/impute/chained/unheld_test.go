package chained

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// boundedTable is invented data: an age between 18 and 90 (many near 18),
// a count of visits (mostly 0 and 1), both missing in about a fifth of
// the rows, and a two-level outcome related to both.
func boundedTable(n int) []Column {
	rng := rand.New(rand.NewPCG(41, 9))
	age, visits, y := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		age[i] = math.Round(18 + 72*math.Pow(rng.Float64(), 3))
		visits[i] = float64(min(int(-math.Log(rng.Float64())*0.8), 6))
		if rng.Float64() < 1/(1+math.Exp(2-0.04*age[i]-0.5*visits[i])) {
			y[i] = 1
		}
	}
	for i := range n {
		if rng.Float64() < 0.2 {
			age[i] = math.NaN()
		}
		if rng.Float64() < 0.2 {
			visits[i] = math.NaN()
		}
	}
	return []Column{
		{Name: "y", Kind: Ordered, Levels: 2, Values: y},
		{Name: "age", Values: age, Bounds: &Bounds{Key: "dictionary.age", Range: []float64{18, 90}}},
		{Name: "visits", Values: visits},
	}
}

// Normal draws can fall outside the range the data dictionary declares
// (an age below 18) and below 0 where every observed value is 0 or more
// (a count): Impute counts them per column, over the final sets, and says
// so, suggesting mean matching; mean matching, which imputes observed
// values, gives none. The counts are checked against the sets themselves.
func TestUnheldImputedValuesCounted(t *testing.T) {
	cfg := Config{Sets: 5, Iterations: 3, Seed: 3}
	for _, m := range []Method{NormalDraw, MeanMatching} {
		cols := boundedTable(400)
		cols[1].Method, cols[2].Method = m, m
		res, err := Impute(cols, cfg)
		if err != nil {
			t.Fatal(err)
		}
		outside, negative := 0, 0
		for _, set := range res.Sets {
			for i := range cols[1].Values {
				if math.IsNaN(cols[1].Values[i]) && (set[1][i] < 18 || set[1][i] > 90) {
					outside++
				}
				if math.IsNaN(cols[2].Values[i]) && set[2][i] < 0 {
					negative++
				}
			}
		}
		got := map[string]Model{}
		for _, md := range res.Models {
			got[md.Column] = md
		}
		if got["age"].OutsideDictionary != outside || got["visits"].BelowObservedZero != negative || got["age"].BelowObservedZero != 0 || got["visits"].OutsideDictionary != 0 {
			t.Errorf("%s: counted %+v, the sets hold %d ages outside [18, 90] and %d negative visits", m, res.Models, outside, negative)
		}
		if m == MeanMatching {
			if outside != 0 || negative != 0 || len(res.Unheld) != 0 {
				t.Errorf("mean matching imputed values the data do not hold: %d, %d, %v", outside, negative, res.Unheld)
			}
			continue
		}
		if outside == 0 || negative == 0 || len(res.Unheld) != 2 {
			t.Fatalf("normal draws: %d outside, %d negative, notes %v (the data were made so that some are)", outside, negative, res.Unheld)
		}
		for _, want := range []string{
			"age: of its " + itoa(5*got["age"].Missing) + " imputed values (" + itoa(got["age"].Missing) + " in each of the 5 sets, by normal_draw), " + itoa(outside) + " (" + pct(outside, 5*got["age"].Missing) + ") are outside the range [18, 90] the data dictionary declares (dictionary.age): the analysis uses them as drawn; mean_matching, which imputes values observed in the data, keeps every imputed value among them (data.imputation.column_models)",
			"visits: of its " + itoa(5*got["visits"].Missing) + " imputed values (" + itoa(got["visits"].Missing) + " in each of the 5 sets, by normal_draw), " + itoa(negative) + " (" + pct(negative, 5*got["visits"].Missing) + ") are below 0, where every observed value is 0 or more: the analysis uses them as drawn; mean_matching",
		} {
			if !strings.Contains(strings.Join(res.Unheld, "\n"), want) {
				t.Errorf("notes lack %q:\n%s", want, strings.Join(res.Unheld, "\n"))
			}
		}
	}
}

func itoa(n int) string { return fmtNum(float64(n)) }
