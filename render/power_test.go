package render

import (
	"strings"
	"testing"

	"ordplan/plan/lock"
	"ordplan/runner"
	"ordplan/runner/simulate"
)

// The power report's opening speaks of a power study, not of a run on
// data: the plan simulated against its lock, with the deviations listed
// (the sentence a run's methods use, "listed at the head of the report",
// would be untrue there), and the multiplicity correction its hypotheses
// are powered under.
func TestPowerReportWords(t *testing.T) {
	f := &lock.File{FrozenAt: "2026-01-02T03:04:05Z", Version: "0.1.0", Registration: "REG-7", SHA256: "0123456789abcdef0123"}
	pr := &simulate.PowerResult{Simulated: true, PlanFile: "p.yaml", PlanSHA256: "abc", Seed: 1, Generator: "cumulative logit",
		Replicates: 10, Alpha: 0.05, Sizes: []int{100}, Version: "0.1.0",
		Outcomes: []simulate.OutcomePower{{Outcome: "y", Sizes: []simulate.SizeResult{{N: 100}}}}}
	changed := []lock.Explained{{Change: lock.Change{Path: "rules[1].reject_if_test_rejects.alpha", From: "0.01", To: "0.02"}, Reason: "the pilot"}}
	for _, tc := range []struct {
		name         string
		st           *lock.Status
		multiplicity string
		want, not    []string
	}{
		{"no lock", &lock.Status{State: lock.StateNone, LockFile: "p.lock.json"}, "",
			[]string{"**Registered plan: none.** No lock file (`p.lock.json`) lies beside the plan, so nothing ties these numbers to a registered analysis", "(Wald tests at alpha 0.05)"},
			[]string{"the report cannot show when it was written", "the data are seen; `ordplan freeze` writes one"}},
		{"matches", &lock.Status{State: lock.StateMatches, LockFile: "p.lock.json", Lock: f}, "holm",
			[]string{"**Registered plan: matches**", "The plan simulated here is the frozen plan", "(Wald tests at alpha 0.05). As in the plan's run (inference.multiplicity: holm), a hypothesis counts as rejected when its p-value adjusted by Holm's step-down correction (family-wise error rate) over every hypothesis of every outcome, each in its chosen model, is below alpha."},
			[]string{"The plan run here"}},
		{"deviations", &lock.Status{State: lock.StateDeviations, LockFile: "p.lock.json", Lock: f, Changes: changed}, "benjamini_hochberg",
			[]string{"## Deviations from the registered plan", "The plan simulated here, whose power and model choice are below, departs from it in 1 key", "| `rules[1].reject_if_test_rejects.alpha` | `0.01` | `0.02` | the pilot |", "| Key | Registered | This study | Stated reason |", "Benjamini-Hochberg"},
			[]string{"listed at the head of the report", "This run"}},
		{"forced", &lock.Status{State: lock.StateUnexplained, LockFile: "p.lock.json", Lock: f, Changes: []lock.Explained{{Change: changed[0].Change}}}, "",
			[]string{"the study was forced with `--allow-unregistered-changes`.** The power and model choice below are those of a plan that differs from the registered one", "**no stated reason**"},
			[]string{"before the data were seen"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			pr.Multiplicity = tc.multiplicity
			files, err := PowerOutputs(pr, tc.st)
			if err != nil {
				t.Fatal(err)
			}
			md := string(files["power.md"])
			for _, w := range tc.want {
				if !strings.Contains(md, w) {
					t.Errorf("power.md lacks %q:\n%s", w, md)
				}
			}
			for _, w := range tc.not {
				if strings.Contains(md, w) {
					t.Errorf("power.md has %q:\n%s", w, md)
				}
			}
		})
	}
}

// The report says what n is, how many rows the subset kept at each size,
// and why no model was chosen where none was.
func TestPowerReportSubsetAndNoModel(t *testing.T) {
	rate := func(c, of int) simulate.Rate { return simulate.Rate{Count: c, Of: of, Rate: float64(c) / float64(of)} }
	pr := &simulate.PowerResult{Simulated: true, PlanFile: "p.yaml", Generator: "cumulative logit", Replicates: 4, Alpha: 0.05, Sizes: []int{40, 300},
		Subset: []string{"age >= 45"}, SubsetKept: []simulate.KeptRows{{N: 40, Mean: 18.5, Min: 18, Max: 20, Replicates: 4}, {N: 300, Mean: 148.75, Min: 142, Max: 158, Replicates: 4}},
		Outcomes: []simulate.OutcomePower{{Outcome: "y", Sizes: []simulate.SizeResult{
			{N: 40, NoModel: rate(4, 4), Chosen: []simulate.ModelShare{{Model: "(none)", Share: rate(4, 4)}},
				EmptiedBy: []simulate.NoneShare{{Cause: "reject_if_sparse (rule 3, line 52) rejected the last candidates", Share: rate(3, 4)}, {Cause: "the plan could not be run on the replicate", Share: rate(1, 4)}}},
			{N: 300, NoModel: rate(0, 4), Chosen: []simulate.ModelShare{{Model: "cumulative/parallel/logit", Share: rate(4, 4)}}}}}}}
	files, err := PowerOutputs(pr, nil)
	if err != nil {
		t.Fatal(err)
	}
	md := string(files["power.md"])
	for _, w := range []string{
		"A sample size n is the number of rows drawn from the assumptions, before the plan's subset (age >= 45); the plan analyses only the rows the subset keeps. The subset kept, per replicate, on average (smallest to largest): n = 40: 18.5 (18 to 20); n = 300: 148.8 (142 to 158).",
		"| No model chosen because | n = 40 | n = 300 |",
		"| any cause | 1.000 (4 of 4; above 0.473 with 95% confidence) | 0.000 (0 of 4; below 0.527 with 95% confidence) |",
		"| reject_if_sparse (rule 3, line 52) rejected the last candidates | 0.750 (0.000) | 0 |",
	} {
		if !strings.Contains(md, w) {
			t.Errorf("power.md lacks %q:\n%s", w, md)
		}
	}
	pr.Subset, pr.SubsetKept = nil, nil
	files, _ = PowerOutputs(pr, nil)
	if md := string(files["power.md"]); !strings.Contains(md, "A sample size n is the number of rows drawn from the assumptions; the plan has no subset, so every row is analysed") {
		t.Errorf("without a subset:\n%s", md)
	}
}

// Both reports say how the weights were simulated. The design effect of
// unequal weights is 1 + CV^2 (Kish's approximation; cited from memory):
// values 1, 2, 3 equally often have mean 2 and variance 2/3, so 1 + 1/6
// = 1.17; frequency weights make about mean-weight (2.00) units a row.
func TestSimulatedWeightsWords(t *testing.T) {
	third := []float64{1.0 / 3, 1.0 / 3, 1.0 / 3}
	for _, tc := range []struct {
		w    runner.SimulatedWeights
		want []string
	}{
		{runner.SimulatedWeights{Column: "fw", Kind: "frequency"},
			[]string{"The weights column `fw` (frequency weights) was 1 in every simulated row: the dictionary (`dictionary.fw`) states neither values nor a range for it, so the simulated data are unweighted."}},
		{runner.SimulatedWeights{Column: "sw", Kind: "sampling"},
			[]string{"the real data's power is below these numbers"}},
		{runner.SimulatedWeights{Column: "fw", Kind: "frequency", Drawn: true, Values: []string{"1", "2", "3"}, Proportions: third},
			[]string{"drawn for each row from the dictionary's values, in the shares 1 (0.3333), 2 (0.3333), 3 (0.3333), independently of the predictors and the outcomes", "about 2.00 times the rows"}},
		{runner.SimulatedWeights{Column: "sw", Kind: "sampling", Drawn: true, Values: []string{"1", "2", "3"}, Proportions: third},
			[]string{"a design effect of 1 + CV^2 of the weights, about 1.17)", "they do not count strata or clusters"}},
		{runner.SimulatedWeights{Column: "fw", Kind: "frequency", Drawn: true, Range: []float64{1, 3}, Whole: true},
			[]string{"uniformly over the whole numbers 1 to 3 of the dictionary's range (frequency weights are counts)", "about 2.00 times the rows"}},
		{runner.SimulatedWeights{Column: "sw", Kind: "sampling", Drawn: true, Range: []float64{0.5, 3}},
			[]string{"uniformly over the dictionary's range [0.5, 3]", "about 1.17)"}},
	} {
		got := simulatedWeightsText(&tc.w)
		for _, w := range tc.want {
			if !strings.Contains(got, w) {
				t.Errorf("%+v: lacks %q:\n%s", tc.w, w, got)
			}
		}
		pr := &simulate.PowerResult{PlanFile: "p.yaml", Generator: "cumulative logit", Replicates: 2, Sizes: []int{100}, Weights: &tc.w,
			Outcomes: []simulate.OutcomePower{{Outcome: "y", Sizes: []simulate.SizeResult{{N: 100}}}}}
		files, err := PowerOutputs(pr, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(files["power.md"]), got) {
			t.Errorf("power.md lacks the weights' sentence")
		}
	}
}

// power.md says where a hypothesis on a term that enters an interaction
// holds, in the words of the run's report (holdsAtSentence).
func TestPowerReportSaysWhereHypothesesHold(t *testing.T) {
	hs := []simulate.HypothesisPower{{Hypothesis: "dose = 0", Line: 9, HoldsAt: "female = 0", Power: simulate.Rate{Count: 5, Of: 10, Rate: 0.5}},
		{Hypothesis: "dose&female = 0", Line: 10, Power: simulate.Rate{Of: 10}}}
	pr := &simulate.PowerResult{Simulated: true, PlanFile: "p.yaml", PlanSHA256: "abc", Seed: 1, Generator: "cumulative logit",
		Replicates: 10, Alpha: 0.05, Sizes: []int{100}, Version: "0.1.0",
		Outcomes: []simulate.OutcomePower{{Outcome: "y", Sizes: []simulate.SizeResult{{N: 100, Hypotheses: hs}}}}}
	files, err := PowerOutputs(pr, &lock.Status{State: lock.StateNone, LockFile: "p.lock.json"})
	if err != nil {
		t.Fatal(err)
	}
	md := string(files["power.md"])
	for _, w := range []string{holdsAtSentence("dose = 0", "female = 0"), "| Hypothesis (plan line) | Holds at | n = 100 | not testable |", "| `dose = 0` (9) | female = 0 | 0.500 (0.000) | 0 |", "| `dose&female = 0` (10) |  | 0.000 (0 of 10; below 0.259 with 95% confidence) | 0 |"} {
		if !strings.Contains(md, w) {
			t.Errorf("power.md lacks %q:\n%s", w, md)
		}
	}
}

// The power chart's n axis spans the sizes; a single size sits in the
// middle of an axis from half of it to one and a half times it, not at an
// edge.
func TestPowerChartAxisAroundOneSize(t *testing.T) {
	for _, c := range []struct {
		sizes []int
		axis  string
	}{
		{[]int{150}, `"xAxis":[{"type":"value","name":"n","min":75,"max":225}]`},
		{[]int{100, 400}, `"xAxis":[{"type":"value","name":"n","min":100,"max":400}]`},
	} {
		var srs []simulate.SizeResult
		for _, n := range c.sizes {
			srs = append(srs, simulate.SizeResult{N: n, Hypotheses: []simulate.HypothesisPower{{Hypothesis: "x = 0", Line: 9, Power: simulate.Rate{Count: 3, Of: 10, Rate: 0.3}}}})
		}
		pr := &simulate.PowerResult{Simulated: true, PlanFile: "p.yaml", PlanSHA256: "abc", Seed: 1, Generator: "cumulative logit",
			Replicates: 10, Alpha: 0.05, Sizes: c.sizes, Version: "0.1.0",
			Outcomes: []simulate.OutcomePower{{Outcome: "y", Sizes: srs}}}
		files, err := PowerOutputs(pr, nil)
		if err != nil {
			t.Fatal(err)
		}
		if html := string(files["power.html"]); !strings.Contains(html, c.axis) {
			t.Errorf("sizes %v: power.html lacks %s", c.sizes, c.axis)
		}
	}
}

// TestTruncationWords: the truncated normal's mean and sd and those of the
// values a rehearsal drew are both given, each labelled; a power study's
// record has no values drawn and gives the truncated normal's alone.
func TestTruncationWords(t *testing.T) {
	mean, sd := 58.885, 11.241
	redrawn := 0
	rec := runner.SimulatedTruncation{Column: "age", StatedMean: 58, StatedSD: 12, Range: []float64{18, 95}, Outside: 0.00145, Mean: 57.977199, SD: 11.904987,
		Drawn: 300, Redrawn: &redrawn, Values: 300, ValuesMean: &mean, ValuesSD: &sd}
	s := simulatedTruncationText([]runner.SimulatedTruncation{rec})
	hasAll(t, "rehearsal", s, "the truncated normal has mean 57.98 and sd 11.9, and the 300 values drawn here have mean 58.88 and sd 11.24")
	rec.Values, rec.ValuesMean, rec.ValuesSD, rec.Redrawn, rec.Drawn = 0, nil, nil, nil, 0
	s = simulatedTruncationText([]runner.SimulatedTruncation{rec})
	hasAll(t, "power study", s, "the truncated normal has mean 57.98 and sd 11.9.")
	if strings.Contains(s, "values drawn here") {
		t.Errorf("power study speaks of values drawn: %s", s)
	}
}

// A hypothesis the chosen model could not test in more than half the
// replicates of a size is named below the table, with those sizes: its
// power is mostly the rate of choosing a model that can test it. One
// untested in half or fewer is not. The plan's sensitivity analyses,
// which replicates do not run, are named.
func TestPowerReportNamesMostlyUntested(t *testing.T) {
	at := func(n, untested int) simulate.SizeResult {
		return simulate.SizeResult{N: n, Hypotheses: []simulate.HypothesisPower{
			{Hypothesis: "x[1] = x[2]", Line: 7, Power: simulate.Rate{Of: 10}, Untested: untested},
			{Hypothesis: "z = 0", Line: 8, Power: simulate.Rate{Count: 6, Of: 10, Rate: 0.6}, Untested: 5}}}
	}
	pr := &simulate.PowerResult{Simulated: true, PlanFile: "p.yaml", PlanSHA256: "abc", Seed: 1, Generator: "cumulative logit",
		Replicates: 10, Alpha: 0.05, Sizes: []int{100, 200}, Version: "0.1.0",
		Outcomes:          []simulate.OutcomePower{{Outcome: "y", Sizes: []simulate.SizeResult{at(100, 10), at(200, 4)}}},
		SensitivityNotRun: []string{"imputed", "clustered"}}
	files, err := PowerOutputs(pr, &lock.Status{State: lock.StateNone, LockFile: "p.lock.json"})
	if err != nil {
		t.Fatal(err)
	}
	md := string(files["power.md"])
	// The plan's sensitivity analyses are said not to be run.
	if !strings.Contains(md, "The plan's sensitivity analyses (`imputed`, `clustered`) are not run in the replicates: every rate below is that of the primary analysis") {
		t.Errorf("power.md does not say the sensitivity analyses are not run:\n%s", md)
	}
	if !strings.Contains(md, "**Not testable in most replicates.**") || !strings.Contains(md, "\n- `x[1] = x[2]` (plan line 7): 10 of 10 at n = 100\n\n") || strings.Contains(md, "- `z = 0` (plan line") {
		t.Errorf("power.md:\n%s", md)
	}
}
