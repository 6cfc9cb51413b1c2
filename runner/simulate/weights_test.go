package simulate

import (
	"bytes"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"ordplan/plan"
)

// weightsPlan: waldPlan with a frequency weights column w whose
// dictionary entry is replaced by each case.
func weightsPlan(t *testing.T, entry string) string {
	src := strings.Replace(waldPlan, "data: {file: none.csv}", "data: {file: none.csv, weights: w}", 1)
	src = strings.Replace(src, "dictionary:\n", "dictionary:\n  w: "+entry+"\n", 1)
	if !strings.Contains(src, "weights: w") || !strings.Contains(src, "  w: "+entry) {
		t.Fatalf("plan not changed:\n%s", src)
	}
	return src
}

// splitRows gives the simulated file's rows, cells split at commas, and
// the index of column col.
func splitRows(t *testing.T, sim *Sim, n int, col string) ([][]string, int) {
	t.Helper()
	var buf bytes.Buffer
	if err := sim.Write(&buf, n, 7); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(buf.String()), "\n")
	k := slices.Index(strings.Split(lines[0], ","), col)
	if k < 0 {
		t.Fatalf("no column %q in %q", col, lines[0])
	}
	var rows [][]string
	for _, l := range lines[1:] {
		rows = append(rows, strings.Split(l, ","))
	}
	return rows, k
}

// The weights are drawn from the dictionary's values, equally often
// (each share within 4 binomial standard deviations of 1/3 over 30000
// rows), or uniformly over its range (the mean within 4 standard errors
// of the midpoint, every value inside); without values or a range every
// weight is 1. They come from a stream of their own: every other column
// is the same bytes as the same plan's with constant weights.
func TestWeightsDrawnFromTheDictionary(t *testing.T) {
	const n = 30000
	sim := func(entry string) *Sim {
		s, err := New(parsePlan(t, weightsPlan(t, entry)))
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	plain, w := splitRows(t, sim("{label: Weight}"), n, "w")
	for _, r := range plain {
		if r[w] != "1" {
			t.Fatalf("weight %q without values or range", r[w])
		}
	}
	if rec := sim("{label: Weight}").WeightsRecord(); rec == nil || rec.Drawn || rec.Kind != "frequency" || rec.Column != "w" {
		t.Errorf("record %+v", rec)
	}
	vals, _ := splitRows(t, sim("{values: [1, 2, 3]}"), n, "w")
	count := map[string]int{}
	for i, r := range vals {
		count[r[w]]++
		a, b := slices.Clone(r), slices.Clone(plain[i])
		a[w], b[w] = "", ""
		if !slices.Equal(a, b) {
			t.Fatalf("row %d differs beyond the weight: %q, %q", i+1, r, plain[i])
		}
	}
	sd := math.Sqrt(n * (1.0 / 3) * (2.0 / 3))
	for _, v := range []string{"1", "2", "3"} {
		if math.Abs(float64(count[v])-n/3.0) > 4*sd {
			t.Errorf("weight %s in %d rows of %d", v, count[v], n)
		}
	}
	if len(count) != 3 {
		t.Errorf("weights %v", count)
	}
	if rec := sim("{values: [1, 2, 3]}").WeightsRecord(); !rec.Drawn || !slices.Equal(rec.Values, []string{"1", "2", "3"}) || len(rec.Proportions) != 3 {
		t.Errorf("record %+v", rec)
	}
	// Frequency weights are counts: over a range, its whole numbers
	// 1, 2, 3 equally often.
	whole, _ := splitRows(t, sim("{range: [0.5, 3]}"), n, "w")
	count = map[string]int{}
	for _, r := range whole {
		count[r[w]]++
	}
	for _, v := range []string{"1", "2", "3"} {
		if math.Abs(float64(count[v])-n/3.0) > 4*sd {
			t.Errorf("whole weight %s in %d rows of %d", v, count[v], n)
		}
	}
	if len(count) != 3 {
		t.Errorf("whole weights %v", count)
	}
	if rec := sim("{range: [0.5, 3]}").WeightsRecord(); !rec.Whole || !slices.Equal(rec.Range, []float64{1, 3}) {
		t.Errorf("record %+v", rec)
	}
	for entry, want := range map[string]string{
		"{range: [0.2, 0.8]}":   "the dictionary's range [0.2, 0.8] holds none",
		"{values: [1, 2.5, 3]}": "the dictionary's values include 2.5",
	} {
		// The plan's check refuses them (D36).
		if _, err := plan.Parse([]byte(weightsPlan(t, entry)), filepath.Join(t.TempDir(), "p.yaml")); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: got %v, want %q", entry, err, want)
		}
	}
	// Sampling weights are drawn over the range itself.
	sampling := func(entry string) *Sim {
		src := strings.Replace(weightsPlan(t, entry), "weights: w}", "weights: w, weight_kind: sampling}", 1)
		src = strings.Replace(src, "by: aic", "by: tic", 1)
		s, err := New(parsePlan(t, src))
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	rng, _ := splitRows(t, sampling("{range: [0.5, 3]}"), n, "w")
	sum := 0.0
	for _, r := range rng {
		x := parseNum(t, r[w])
		if x < 0.5 || x > 3 {
			t.Fatalf("weight %g outside [0.5, 3]", x)
		}
		sum += x
	}
	// uniform on [0.5, 3]: mean 1.75, sd 2.5/sqrt(12)
	if se := 2.5 / math.Sqrt(12) / math.Sqrt(n); math.Abs(sum/n-1.75) > 4*se {
		t.Errorf("mean weight %.4f, want 1.75 (se %.4f)", sum/n, se)
	}
}
