package simulate

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"sync"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
)

// A power study of a plan with a subset says what n is (the rows drawn,
// before the subset) and how many rows the subset kept at each size: the
// mean, smallest and largest over the replicates equal the counts of
// rows with age >= 30 in the replicates' own files, written again here
// and read as text.
func TestPowerCountsRowsTheSubsetKept(t *testing.T) {
	p := parsePlan(t, subsetPopPlan)
	sizes := []int{60, 200}
	const R = 5
	res, err := Power(p, PowerOptions{Sizes: sizes, Replicates: R, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Subset) != 1 || res.Subset[0] != "age >= 30" {
		t.Errorf("subset %q", res.Subset)
	}
	if !strings.Contains(res.SizeMeans, "before the plan's subset") {
		t.Errorf("n_means %q", res.SizeMeans)
	}
	if len(res.SubsetKept) != len(sizes) {
		t.Fatalf("subset_kept %+v", res.SubsetKept)
	}
	sim, err := New(p)
	if err != nil {
		t.Fatal(err)
	}
	for i, n := range sizes {
		lo, hi, sum := n, 0, 0
		for r := 0; r < R; r++ {
			var buf bytes.Buffer
			if err := sim.Write(&buf, n, uint64(r)); err != nil {
				t.Fatal(err)
			}
			k := 0
			for _, l := range strings.Split(strings.TrimSpace(buf.String()), "\n")[1:] {
				if parseNum(t, strings.Split(l, ",")[1]) >= 30 {
					k++
				}
			}
			lo, hi, sum = min(lo, k), max(hi, k), sum+k
		}
		got := res.SubsetKept[i]
		if got.N != n || got.Min != lo || got.Max != hi || got.Mean != float64(sum)/R || got.Replicates != R {
			t.Errorf("n = %d: kept %+v, counted min %d max %d mean %g", n, got, lo, hi, float64(sum)/R)
		}
		if !(got.Max < n) {
			t.Errorf("n = %d: the subset kept every row (%+v): the test shows nothing", n, got)
		}
	}
	// Without a subset n is every row, and nothing is counted.
	plain, err := Power(parsePlan(t, waldPlan), PowerOptions{Sizes: []int{40}, Replicates: 2})
	if err != nil {
		t.Fatal(err)
	}
	if plain.Subset != nil || plain.SubsetKept != nil || !strings.Contains(plain.SizeMeans, "every row is analysed") {
		t.Errorf("without a subset: %q %+v %q", plain.Subset, plain.SubsetKept, plain.SizeMeans)
	}
}

// Where no model is chosen, the study says how often and which rule
// emptied the grid, from each replicate's decision log. Here the sparse
// rule asks for 60 rows per parameter; the plan's model has two (one
// cutpoint, one slope), so every replicate of 40 rows is emptied by it
// and no replicate of 400 rows is.
func TestPowerSaysWhyNoModelWasChosen(t *testing.T) {
	src := strings.Replace(waldPlan, "  - reject_unconverged: true\n", "  - reject_unconverged: true\n  - reject_if_sparse: {per_parameter: 60}\n", 1)
	if src == waldPlan {
		t.Fatal("plan not changed")
	}
	p := parsePlan(t, src)
	line := 0
	for _, r := range p.Rules {
		if r.Kind == "reject_if_sparse" {
			line = r.Line
		}
	}
	res, err := Power(p, PowerOptions{Sizes: []int{40, 400}, Replicates: 3})
	if err != nil {
		t.Fatal(err)
	}
	small, large := res.Outcomes[0].Sizes[0], res.Outcomes[0].Sizes[1]
	if small.NoModel.Count != 3 || small.NoModel.Rate != 1 {
		t.Errorf("n = 40: no model in %+v", small.NoModel)
	}
	want := "reject_if_sparse (rule 2, line " + strconv.Itoa(line) + ") rejected the last candidates"
	if len(small.EmptiedBy) != 1 || small.EmptiedBy[0].Cause != want || small.EmptiedBy[0].Share.Count != 3 {
		t.Errorf("n = 40: causes %+v, want %q in all 3", small.EmptiedBy, want)
	}
	if large.NoModel.Count != 0 || large.EmptiedBy != nil {
		t.Errorf("n = 400: no model %+v, causes %+v", large.NoModel, large.EmptiedBy)
	}
}

// A replicate whose run panics (an internal error of the program) fails
// alone: the study goes on, counts it under the failed runs with the
// internal error's message, and leaves no temporary folder behind.
func TestPowerReplicatePanicIsAFailedRun(t *testing.T) {
	tmp := t.TempDir()
	t.Setenv("TMPDIR", tmp)
	runs := 0
	var mu sync.Mutex
	opt := PowerOptions{Sizes: []int{40}, Replicates: 4, Workers: 2, Run: func(q *plan.Plan) (*runner.Result, error) {
		mu.Lock()
		runs++
		k := runs
		mu.Unlock()
		if k%2 == 0 {
			panic("boom")
		}
		return runner.Run(q, runner.Options{Workers: 1, NoTermTests: true})
	}}
	res, err := Power(parsePlan(t, waldPlan), opt)
	if err != nil {
		t.Fatal(err)
	}
	s := res.Outcomes[0].Sizes[0]
	want := InternalError("boom")
	if s.Failed.Count != 2 || s.InternalErrors != 2 || s.FirstInternal != want || s.FirstFailure != want {
		t.Errorf("failed %+v, internal %d %q, first %q; want 2 of 4 failed with %q", s.Failed, s.InternalErrors, s.FirstInternal, s.FirstFailure, want)
	}
	if !strings.Contains(want, "internal error: boom") {
		t.Errorf("message %q does not say internal error", want)
	}
	// The temporary folder Power made (under TMPDIR) is gone.
	if entries, _ := os.ReadDir(tmp); len(entries) > 0 {
		t.Errorf("%d entries left in the temporary folder, first %s", len(entries), entries[0].Name())
	}
}

// Every rate of a power study is written by Rate.Text: the share with its
// Monte Carlo standard error, except at 0 or R of R replicates, where the
// bracket gives the exact one-sided 95% bound: the rate p at which the
// binomial probability of what was seen, (1-p)^R for none and p^R for
// all, is 0.05 (Clopper-Pearson; checked here by that identity).
func TestRateText(t *testing.T) {
	for _, c := range []struct {
		r       Rate
		se, out string
	}{
		{rate(27, 100), "", "0.270 (0.044)"},
		{rate(27, 100), "MC se ", "0.270 (MC se 0.044)"},
		{rate(0, 100), "MC se ", "0.000 (0 of 100; below 0.030 with 95% confidence)"},
		{rate(100, 100), "", "1.000 (100 of 100; above 0.970 with 95% confidence)"},
		{rate(0, 20), "", "0.000 (0 of 20; below 0.139 with 95% confidence)"},
		{rate(0, 0), "", "0.000 (0.000)"},
	} {
		if got := c.r.Text(c.se); got != c.out {
			t.Errorf("%+v: %q, want %q", c.r, got, c.out)
		}
	}
	for _, R := range []int{1, 20, 100, 500} {
		up := 1 - math.Pow(0.05, 1/float64(R))
		if p := math.Pow(1-up, float64(R)); math.Abs(p-0.05) > 1e-12 {
			t.Errorf("R = %d: P(0 of R | p = %g) = %g, want 0.05", R, up, p)
		}
		text := rate(0, R).Text("")
		if want := fmt.Sprintf("below %.3f with", up); !strings.Contains(text, want) {
			t.Errorf("R = %d: %q lacks %q", R, text, want)
		}
	}
}
