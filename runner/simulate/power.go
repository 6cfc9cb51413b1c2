package simulate

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// PowerOptions control a power study; none changes the results but the
// sizes, the replicates and alpha.
type PowerOptions struct {
	Sizes      []int
	Replicates int
	Alpha      float64  // level of the hypothesis tests (default 0.05)
	Workers    int      // replicates run at once (default: all cores)
	Progress   Progress // hears of every finished replicate (nil: nobody)
	// Run runs the plan on one replicate (nil: here, one fit at a time);
	// `ordplan power --queue` sends each replicate's fits to workers.
	Run func(*plan.Plan) (*runner.Result, error)
	// TempDir is the folder the replicates' data files are written to,
	// made and removed by the caller; "": a temporary folder Power makes
	// and removes on return.
	TempDir string
}

// Rate is a proportion of replicates with its Monte Carlo standard
// error (runner.Rate, shared with selection_stability's shares).
type Rate = runner.Rate

func rate(count, of int) Rate { return runner.RateOf(count, of) }

// HypothesisPower is how often one plan hypothesis was rejected in the
// chosen model.
type HypothesisPower struct {
	Hypothesis string `json:"hypothesis"`
	Line       int    `json:"line"`
	// Power: rejected at alpha in the chosen model, over all replicates
	// (a replicate whose chosen model cannot test it, or with no model
	// chosen, counts as not rejected).
	Power Rate `json:"power"`
	// Untested counts replicates where the chosen model lacked the
	// hypothesis's parameters or no model was chosen.
	Untested int `json:"untested"`
	// HoldsAt says where the hypothesis holds when it names a term that
	// enters an interaction (the run's runner.HypothesisResult.HoldsAt,
	// the same in every replicate: the terms are the plan's).
	HoldsAt string `json:"holds_at,omitempty"`
}

// NoneShare is how often one cause left a replicate without a chosen
// model, as a share of all replicates of the size.
type NoneShare struct {
	Cause string `json:"cause"`
	Share Rate   `json:"replicates"`
}

// KeptRows is how many of the n rows drawn at one size the plan's subset
// kept, over the replicates that could be read.
type KeptRows struct {
	N          int     `json:"n"`
	Mean       float64 `json:"mean"`
	Min        int     `json:"min"`
	Max        int     `json:"max"`
	Replicates int     `json:"replicates"`
}

// ModelShare is how often a candidate model was chosen.
type ModelShare struct {
	Model string `json:"model"` // or "(none)"
	Share Rate   `json:"chosen"`
}

// SizeResult is one outcome at one sample size.
type SizeResult struct {
	N          int               `json:"n"`
	Hypotheses []HypothesisPower `json:"hypotheses"`
	Chosen     []ModelShare      `json:"chosen_models"`
	// NoModel: replicates where no model was chosen (failed runs
	// included), and EmptiedBy why, from each replicate's decision log:
	// the rule that rejected the last candidates, or another cause.
	NoModel   Rate        `json:"no_model_chosen"`
	EmptiedBy []NoneShare `json:"no_model_because,omitempty"`
	// Replicates with at least one candidate fit that has no finite
	// maximum (separation), or that did not converge.
	Separation   Rate `json:"separation"`
	NotConverged Rate `json:"not_converged"`
	// Replicates the plan could not be run on (e.g. a category that no
	// simulated row has), with the first such message.
	Failed       Rate   `json:"failed"`
	FirstFailure string `json:"first_failure,omitempty"`
	// InternalErrors counts the failed replicates whose run met an
	// internal error of the program (a panic, recovered: a defect to
	// report, not a property of the plan), FirstInternal the first one's
	// message.
	InternalErrors int    `json:"internal_errors,omitempty"`
	FirstInternal  string `json:"first_internal_error,omitempty"`
	// Clusters: the clusters simulated at this size and those the runs
	// used (nil: the plan has no cluster column).
	Clusters *SizeClusters `json:"clusters,omitempty"`
}

// SizeClusters is the clusters of one outcome at one size: Simulated in
// the n rows drawn, and the fewest and most among the rows the
// replicates' runs used (the subset and dropped rows may empty some).
// FewWarned counts the replicates whose run warned that its clustered
// errors rest on fewer than FewBelow clusters (the run's own warning,
// runner.Analysis.FewClusters; Warning is the first).
type SizeClusters struct {
	Simulated int    `json:"simulated"`
	UsedMin   int    `json:"used_min"`
	UsedMax   int    `json:"used_max"`
	FewBelow  int    `json:"few_below"`
	FewWarned Rate   `json:"few_warned"`
	Warning   string `json:"warning,omitempty"`
}

// OutcomePower is one outcome's results at every size.
type OutcomePower struct {
	Outcome string `json:"outcome"`
	// Nonparallel lists the terms the assumptions make nonparallel, and
	// Generating the candidate of the grid with that structure (cumulative
	// with the generating link: parallel, partial with exactly those terms
	// free, or nonparallel with every term), "" when no candidate has it.
	Nonparallel []string     `json:"nonparallel_terms"`
	Generating  string       `json:"generating_model"`
	Sizes       []SizeResult `json:"sizes"`
}

// PowerResult is a whole power study.
type PowerResult struct {
	Simulated  bool   `json:"simulated_data"` // always true: no real observation is used
	PlanFile   string `json:"plan"`
	PlanSHA256 string `json:"plan_sha256"`
	Title      string `json:"title"`
	Seed       uint64 `json:"seed"`
	Link       string `json:"link"`
	Generator  string `json:"generating_model"` // comparison (direction) and link, e.g. "cumulative logit"
	// Correlations stated between predictor columns ("a, b: r = 0.3"); the
	// other columns are drawn independently.
	Correlations []string `json:"correlations,omitempty"`
	// Missing is the missingness the assumptions state, drawn in every
	// replicate (assumptions.missing).
	Missing []runner.SimulatedMissing `json:"missing,omitempty"`
	// Weights says how the plan's weights column was simulated (nil: the
	// plan has none).
	Weights *runner.SimulatedWeights `json:"weights,omitempty"`
	// Truncated are the normal columns drawn truncated to their
	// dictionary range (without counts: they differ by replicate).
	Truncated []runner.SimulatedTruncation `json:"truncated,omitempty"`
	// Clusters says how the plan's cluster column was simulated (nil: the
	// plan has none); each size's clusters are in its SizeResult.
	Clusters   *runner.SimulatedClusters `json:"clusters,omitempty"`
	Replicates int                       `json:"replicates"`
	Alpha      float64                   `json:"alpha"`
	// Multiplicity is the plan's correction of its hypotheses' p-values
	// (inference.multiplicity: holm or benjamini_hochberg; "" for none):
	// a hypothesis is rejected when its adjusted p-value is below Alpha,
	// as the plan's run decides.
	Multiplicity string `json:"multiplicity,omitempty"`
	Sizes        []int  `json:"sizes"`
	// SizeMeans says what a size is: the rows drawn from the assumptions,
	// before the plan's subset (Subset, its conditions), which kept
	// SubsetKept rows at each size.
	SizeMeans  string         `json:"n_means"`
	Subset     []string       `json:"subset,omitempty"`
	SubsetKept []KeptRows     `json:"subset_kept,omitempty"`
	Outcomes   []OutcomePower `json:"outcomes"`
	// SensitivityNotRun names the plan's sensitivity analyses, which the
	// replicates do not run (their power is that of the primary analysis).
	SensitivityNotRun []string `json:"sensitivity_not_run,omitempty"`
	// StabilityNotRun is set when the plan asks for selection_stability,
	// whose bootstrap resamples the replicates do not run; StabilityDraw
	// is its draw when that is chosen_model ("" for the bootstrap).
	StabilityNotRun bool   `json:"selection_stability_not_run,omitempty"`
	StabilityDraw   string `json:"selection_stability_draw,omitempty"`
	Version         string `json:"version"`
}

// replicate is what one run gave, per outcome.
type replicate struct {
	err      string
	internal bool // err is an internal error (a recovered panic)
	kept     int  // rows that meet the plan's subset (-1: none written)
	outcomes []repOutcome
}

type repOutcome struct {
	chosen       string
	emptied      string   // with no model chosen: why (noneCause)
	rejected     []int    // per hypothesis: 1 rejected, 0 not, -1 untested
	holdsAt      []string // per hypothesis: where it holds (runner.HypothesisResult.HoldsAt)
	separation   bool
	notConverged bool
	clusters     int    // in the rows the run used (-1: not known)
	fewClusters  string // the run's warning of too few clusters, or ""
}

// Progress hears of the replicates of a power study as they finish: done
// of total replicates of size n are finished.
type Progress interface {
	Replicated(n, done, total int)
}

// Power simulates the plan's assumptions at each size and runs the whole
// decision procedure on every replicate.
func Power(p *plan.Plan, opt PowerOptions) (*PowerResult, error) {
	sim, err := New(p)
	if err != nil {
		return nil, err
	}
	simulated := make([]int, len(opt.Sizes)) // clusters at each size
	if sim.Cluster != "" {
		for i, n := range opt.Sizes {
			if simulated[i], err = sim.Clusters(n); err != nil {
				return nil, err
			}
		}
	}
	if opt.Alpha <= 0 {
		opt.Alpha = 0.05
	}
	if opt.Workers <= 0 {
		opt.Workers = runtime.GOMAXPROCS(0)
	}
	tmp := opt.TempDir
	if tmp == "" {
		if tmp, err = os.MkdirTemp("", "ordplan-power-"); err != nil {
			return nil, err
		}
		defer os.RemoveAll(tmp)
	}
	res := &PowerResult{Simulated: true, PlanFile: filepath.Base(p.Path), PlanSHA256: p.Hash, Title: p.Title, Seed: p.Seed, Link: sim.Link.String(), Generator: sim.GeneratingModel(),
		Replicates: opt.Replicates, Alpha: opt.Alpha, Sizes: opt.Sizes, Version: runner.Version}
	if m := p.Inference.Multiplicity; m != "" && m != plan.MultiplicityNone && len(p.Inference.Hypotheses) > 0 {
		res.Multiplicity = m
	}
	for _, c := range p.Assumptions.Correlations {
		res.Correlations = append(res.Correlations, fmt.Sprintf("%s, %s: r = %g", c.A, c.B, c.R))
	}
	for _, sa := range p.Sensitivity {
		res.SensitivityNotRun = append(res.SensitivityNotRun, sa.Name)
	}
	res.StabilityNotRun = p.SelectionStability != nil
	if res.StabilityNotRun && p.SelectionStability.Draw == plan.StabilityChosenModel {
		res.StabilityDraw = p.SelectionStability.Draw
	}
	res.Missing = sim.MissingRecord(nil, 0)
	res.Weights = sim.WeightsRecord()
	res.Truncated = sim.TruncationRecord(nil, 0)
	res.Clusters = sim.ClustersRecord(0)
	res.SizeMeans = "rows drawn from the assumptions; every row is analysed (less any incomplete rows data.missing drops)"
	if len(p.Subset) > 0 {
		res.SizeMeans = "rows drawn from the assumptions, before the plan's subset: the rows analysed are those the subset keeps (subset_kept; less any incomplete rows data.missing drops)"
		for _, c := range p.Subset {
			res.Subset = append(res.Subset, c.String())
		}
	}
	for _, oc := range p.Outcomes {
		res.Outcomes = append(res.Outcomes, generating(p, oc, sim))
	}
	for si, n := range opt.Sizes {
		reps := make([]replicate, opt.Replicates)
		var wg sync.WaitGroup
		var mu sync.Mutex
		next, done := 0, 0
		for w := 0; w < opt.Workers; w++ {
			wg.Add(1)
			go func(w int) {
				defer wg.Done()
				path := filepath.Join(tmp, "w"+strconv.Itoa(w)+".csv")
				for {
					mu.Lock()
					r := next
					next++
					mu.Unlock()
					if r >= opt.Replicates {
						return
					}
					reps[r] = runReplicate(p, sim, n, r, path, opt)
					mu.Lock()
					done++
					if opt.Progress != nil {
						opt.Progress.Replicated(n, done, opt.Replicates)
					}
					mu.Unlock()
				}
			}(w)
		}
		wg.Wait()
		if len(p.Subset) > 0 {
			res.SubsetKept = append(res.SubsetKept, keptRows(n, reps))
		}
		for oi := range res.Outcomes {
			sr := summarize(p, n, reps, oi)
			if sim.Cluster != "" {
				sr.Clusters = summarizeClusters(simulated[si], reps, oi)
			}
			res.Outcomes[oi].Sizes = append(res.Outcomes[oi].Sizes, sr)
		}
	}
	return res, nil
}

// InternalError is the message of a replicate whose run met an internal
// error (a panic, recovered by runReplicate): the replicate counts as
// failed, with this message in the report and on stderr.
func InternalError(p any) string {
	return fmt.Sprintf("internal error: %v (please report it with the command line that caused it)", p)
}

// runReplicate simulates replicate r of size n and runs the plan on it. A
// panic in the replicate's run (an internal error) fails the replicate
// alone, with InternalError's message, rather than the whole study.
func runReplicate(p *plan.Plan, sim *Sim, n, r int, path string, opt PowerOptions) (rep replicate) {
	defer func() {
		if e := recover(); e != nil {
			rep = replicate{err: InternalError(e), internal: true, kept: -1}
		}
	}()
	alpha := opt.Alpha
	var buf bytes.Buffer
	written, err := sim.WriteCounted(&buf, n, uint64(r))
	if err != nil {
		return replicate{err: err.Error(), kept: -1}
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		return replicate{err: err.Error(), kept: -1}
	}
	q := *p
	name := fmt.Sprintf("simulated n=%d replicate %d", n, r+1)
	q.Data.SetFile(name, path)
	run := opt.Run
	if run == nil {
		run = func(q *plan.Plan) (*runner.Result, error) {
			return runner.Run(q, runner.Options{Workers: 1, NoTermTests: true, NoSensitivity: true, NoStability: true})
		}
	}
	res, err := run(&q)
	if err != nil {
		// The replicate's temporary file is gone when the report is read:
		// name the replicate instead.
		return replicate{err: strings.ReplaceAll(err.Error(), path, name), kept: written.Kept}
	}
	out := replicate{kept: written.Kept}
	for oi, or := range res.Outcomes {
		ro := repOutcome{rejected: make([]int, len(p.Inference.Hypotheses)), holdsAt: make([]string, len(p.Inference.Hypotheses)), clusters: -1}
		if an := res.Analysis; an != nil && oi < len(an.Outcomes) && or.Data != nil && sim.Cluster != "" {
			ro.clusters = runner.ClusterCount(or.Data)
			ro.fewClusters = an.FewClusters(an.Outcomes[oi], or.Data)
		}
		if or.Chosen != nil {
			ro.chosen = or.Chosen.ID
		} else {
			ro.emptied = noneCause(or)
		}
		for _, f := range or.Fits {
			if f.Auxiliary || f.Result == nil {
				continue
			}
			switch f.Result.Status {
			case fit.StatusNoFiniteMaximum:
				ro.separation = true
			case fit.StatusNotConverged:
				ro.notConverged = true
			}
		}
		for hi, h := range p.Inference.Hypotheses {
			ro.rejected[hi] = -1
			for _, hr := range or.Hypotheses {
				if hr.Line == h.Line && hr.Text == h.Text && hr.HoldsAt != "" {
					ro.holdsAt[hi] = hr.HoldsAt
				}
				if hr.Line == h.Line && hr.Text == h.Text && ro.chosen != "" && hr.Model == ro.chosen && hr.Test.OK {
					ro.rejected[hi] = 0
					// The run's decision: the adjusted p-value when the
					// plan corrects for multiplicity.
					pv := hr.Test.P
					if hr.Adjusted != nil {
						pv = *hr.Adjusted
					}
					if pv < alpha {
						ro.rejected[hi] = 1
					}
				}
			}
		}
		out.outcomes = append(out.outcomes, ro)
	}
	return out
}

func summarize(p *plan.Plan, n int, reps []replicate, oi int) SizeResult {
	R := len(reps)
	sr := SizeResult{N: n}
	counts := map[string]int{}
	causes := map[string]int{}
	sep, nc, failed := 0, 0, 0
	rej := make([]int, len(p.Inference.Hypotheses))
	untested := make([]int, len(p.Inference.Hypotheses))
	holdsAt := make([]string, len(p.Inference.Hypotheses))
	for _, rp := range reps {
		if rp.err != "" {
			failed++
			if sr.FirstFailure == "" {
				sr.FirstFailure = rp.err
			}
			if rp.internal {
				sr.InternalErrors++
				if sr.FirstInternal == "" {
					sr.FirstInternal = rp.err
				}
			}
			counts["(none)"]++
			causes["the plan could not be run on the replicate"]++
			for hi := range untested {
				untested[hi]++
			}
			continue
		}
		ro := rp.outcomes[oi]
		c := ro.chosen
		if c == "" {
			c = "(none)"
			causes[ro.emptied]++
		}
		counts[c]++
		if ro.separation {
			sep++
		}
		if ro.notConverged {
			nc++
		}
		for hi, w := range ro.holdsAt {
			if holdsAt[hi] == "" {
				holdsAt[hi] = w
			}
		}
		for hi, v := range ro.rejected {
			switch v {
			case 1:
				rej[hi]++
			case -1:
				untested[hi]++
			}
		}
	}
	for hi, h := range p.Inference.Hypotheses {
		sr.Hypotheses = append(sr.Hypotheses, HypothesisPower{Hypothesis: h.Text, Line: h.Line, Power: rate(rej[hi], R), Untested: untested[hi], HoldsAt: holdsAt[hi]})
	}
	for _, m := range byCount(counts) {
		sr.Chosen = append(sr.Chosen, ModelShare{Model: m, Share: rate(counts[m], R)})
	}
	sr.Separation, sr.NotConverged, sr.Failed = rate(sep, R), rate(nc, R), rate(failed, R)
	sr.NoModel = rate(counts["(none)"], R)
	for _, c := range byCount(causes) {
		sr.EmptiedBy = append(sr.EmptiedBy, NoneShare{Cause: c, Share: rate(causes[c], R)})
	}
	return sr
}

// summarizeClusters sums up the clusters of outcome oi's runs at one
// size, of which simulated were drawn.
func summarizeClusters(simulated int, reps []replicate, oi int) *SizeClusters {
	sc := &SizeClusters{Simulated: simulated, FewBelow: fit.FewClusters}
	few, seen := 0, false
	for _, rp := range reps {
		if rp.err != "" || rp.outcomes[oi].clusters < 0 {
			continue
		}
		ro := rp.outcomes[oi]
		if !seen || ro.clusters < sc.UsedMin {
			sc.UsedMin = ro.clusters
		}
		sc.UsedMax = max(sc.UsedMax, ro.clusters)
		seen = true
		if ro.fewClusters != "" {
			few++
			if sc.Warning == "" {
				sc.Warning = ro.fewClusters
			}
		}
	}
	sc.FewWarned = rate(few, len(reps))
	return sc
}

// byCount gives the keys of counts, the largest count first, ties in
// order of name.
func byCount(counts map[string]int) []string {
	keys := make([]string, 0, len(counts))
	for k := range counts {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if counts[keys[i]] != counts[keys[j]] {
			return counts[keys[i]] > counts[keys[j]]
		}
		return keys[i] < keys[j]
	})
	return keys
}

// noneCause says, from a run's decision log, why it chose no model: the
// first rule after which no candidate was left (its kind, its place among
// the rules and its plan line), or that no candidate could be fitted, or
// the run's own words (a plan without a choosing rule).
func noneCause(or *runner.OutcomeResult) string {
	fitted := false
	for _, f := range or.Fits {
		if !f.Auxiliary && f.Err == "" && f.Result != nil {
			fitted = true
		}
	}
	if !fitted {
		return "no candidate could be fitted"
	}
	for i, ro := range or.Rules {
		if len(ro.Verdicts) > 0 && !slices.ContainsFunc(ro.Verdicts, func(v runner.Verdict) bool { return v.Kept }) {
			return fmt.Sprintf("%s (rule %d, line %d) rejected the last candidates", ro.Rule.Kind, i+1, ro.Rule.Line)
		}
	}
	if or.Choice != "" {
		return or.Choice
	}
	return "no model chosen"
}

// keptRows sums up how many rows met the subset in the replicates of
// size n that were written (those the plan failed on too).
func keptRows(n int, reps []replicate) KeptRows {
	k := KeptRows{N: n}
	sum := 0
	for _, rp := range reps {
		if rp.kept < 0 {
			continue
		}
		if k.Replicates == 0 || rp.kept < k.Min {
			k.Min = rp.kept
		}
		k.Max = max(k.Max, rp.kept)
		sum += rp.kept
		k.Replicates++
	}
	if k.Replicates > 0 {
		k.Mean = float64(sum) / float64(k.Replicates)
	}
	return k
}

// generating names the candidate with the structure that generated the
// data: the generating comparison, direction and link, with parallel
// effects, the stated nonparallel terms free (partial), or every term free.
func generating(p *plan.Plan, oc plan.Outcome, sim *Sim) OutcomePower {
	op := OutcomePower{Outcome: oc.Column, Nonparallel: []string{}}
	for _, oa := range p.Assumptions.Outcomes {
		if oa.Column != oc.Column {
			continue
		}
		for _, te := range oa.Terms {
			if te.Nonparallel {
				op.Nonparallel = append(op.Nonparallel, te.Term)
			}
		}
	}
	has := func(effects fit.Structure) bool {
		return p.Models.HasApproach(sim.Comparison) && slices.Contains(p.Models.Links, sim.Link) && p.Models.HasEffects(effects) &&
			(sim.Comparison != fit.Stage || sim.Backward == p.Models.Backward())
	}
	sameSet := func(a, b []string) bool {
		return len(a) == len(b) && !slices.ContainsFunc(a, func(x string) bool { return !slices.Contains(b, x) })
	}
	terms := p.PredictorsOf(oc)
	cmp := fit.Model{Comparison: sim.Comparison, Backward: sim.Backward}.ComparisonName()
	switch {
	case len(op.Nonparallel) == 0 && has(fit.ParallelEffects):
		op.Generating = fit.ModelID(cmp, fit.ParallelEffects.String(), sim.Link)
	case len(op.Nonparallel) == len(terms) && has(fit.NonparallelEffects):
		op.Generating = fit.ModelID(cmp, fit.NonparallelEffects.String(), sim.Link)
	case p.Models.Partial.Select == nil && sameSet(op.Nonparallel, p.Models.Partial.Free) && has(fit.PartialEffects):
		op.Generating = fit.ModelID(cmp, fit.PartialEffects.String(), sim.Link)
	}
	return op
}
