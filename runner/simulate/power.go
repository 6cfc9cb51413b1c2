package simulate

import (
	"bytes"
	"fmt"
	"math"
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
}

// Rate is a proportion of replicates with its Monte Carlo standard error
// sqrt(p (1 - p) / R).
type Rate struct {
	Count int     `json:"count"`
	Of    int     `json:"of"`
	Rate  float64 `json:"rate"`
	SE    float64 `json:"mc_se"`
}

func rate(count, of int) Rate {
	if of == 0 {
		return Rate{Count: count}
	}
	p := float64(count) / float64(of)
	return Rate{Count: count, Of: of, Rate: p, SE: math.Sqrt(p * (1 - p) / float64(of))}
}

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
	// Replicates with at least one candidate fit that has no finite
	// maximum (separation), or that did not converge.
	Separation   Rate `json:"separation"`
	NotConverged Rate `json:"not_converged"`
	// Replicates the plan could not be run on (e.g. a category that no
	// simulated row has), with the first such message.
	Failed       Rate   `json:"failed"`
	FirstFailure string `json:"first_failure,omitempty"`
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
	Missing    []runner.SimulatedMissing `json:"missing,omitempty"`
	Replicates int                       `json:"replicates"`
	Alpha      float64                   `json:"alpha"`
	// Multiplicity is the plan's correction of its hypotheses' p-values
	// (inference.multiplicity: holm or benjamini_hochberg; "" for none):
	// a hypothesis is rejected when its adjusted p-value is below Alpha,
	// as the plan's run decides.
	Multiplicity string         `json:"multiplicity,omitempty"`
	Sizes        []int          `json:"sizes"`
	Outcomes     []OutcomePower `json:"outcomes"`
	Version      string         `json:"version"`
}

// replicate is what one run gave, per outcome.
type replicate struct {
	err      string
	outcomes []repOutcome
}

type repOutcome struct {
	chosen       string
	rejected     []int // per hypothesis: 1 rejected, 0 not, -1 untested
	separation   bool
	notConverged bool
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
	if opt.Alpha <= 0 {
		opt.Alpha = 0.05
	}
	if opt.Workers <= 0 {
		opt.Workers = runtime.GOMAXPROCS(0)
	}
	tmp, err := os.MkdirTemp("", "ordplan-power-")
	if err != nil {
		return nil, err
	}
	defer os.RemoveAll(tmp)
	res := &PowerResult{Simulated: true, PlanFile: filepath.Base(p.Path), PlanSHA256: p.Hash, Title: p.Title, Seed: p.Seed, Link: sim.Link.String(), Generator: sim.GeneratingModel(),
		Replicates: opt.Replicates, Alpha: opt.Alpha, Sizes: opt.Sizes, Version: runner.Version}
	if m := p.Inference.Multiplicity; m != "" && m != plan.MultiplicityNone && len(p.Inference.Hypotheses) > 0 {
		res.Multiplicity = m
	}
	for _, c := range p.Assumptions.Correlations {
		res.Correlations = append(res.Correlations, fmt.Sprintf("%s, %s: r = %g", c.A, c.B, c.R))
	}
	res.Missing = sim.MissingRecord(nil, 0)
	for _, oc := range p.Outcomes {
		res.Outcomes = append(res.Outcomes, generating(p, oc, sim))
	}
	for _, n := range opt.Sizes {
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
		for oi := range res.Outcomes {
			res.Outcomes[oi].Sizes = append(res.Outcomes[oi].Sizes, summarize(p, n, reps, oi))
		}
	}
	return res, nil
}

// runReplicate simulates replicate r of size n and runs the plan on it.
func runReplicate(p *plan.Plan, sim *Sim, n, r int, path string, opt PowerOptions) replicate {
	alpha := opt.Alpha
	var buf bytes.Buffer
	if err := sim.Write(&buf, n, uint64(r)); err != nil {
		return replicate{err: err.Error()}
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		return replicate{err: err.Error()}
	}
	q := *p
	name := fmt.Sprintf("simulated n=%d replicate %d", n, r+1)
	q.Data.SetFile(name, path)
	run := opt.Run
	if run == nil {
		run = func(q *plan.Plan) (*runner.Result, error) {
			return runner.Run(q, runner.Options{Workers: 1, NoTermTests: true})
		}
	}
	res, err := run(&q)
	if err != nil {
		// The replicate's temporary file is gone when the report is read:
		// name the replicate instead.
		return replicate{err: strings.ReplaceAll(err.Error(), path, name)}
	}
	var out replicate
	for _, or := range res.Outcomes {
		ro := repOutcome{rejected: make([]int, len(p.Inference.Hypotheses))}
		if or.Chosen != nil {
			ro.chosen = or.Chosen.ID
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
	sep, nc, failed := 0, 0, 0
	rej := make([]int, len(p.Inference.Hypotheses))
	untested := make([]int, len(p.Inference.Hypotheses))
	for _, rp := range reps {
		if rp.err != "" {
			failed++
			if sr.FirstFailure == "" {
				sr.FirstFailure = rp.err
			}
			counts["(none)"]++
			for hi := range untested {
				untested[hi]++
			}
			continue
		}
		ro := rp.outcomes[oi]
		c := ro.chosen
		if c == "" {
			c = "(none)"
		}
		counts[c]++
		if ro.separation {
			sep++
		}
		if ro.notConverged {
			nc++
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
		sr.Hypotheses = append(sr.Hypotheses, HypothesisPower{Hypothesis: h.Text, Line: h.Line, Power: rate(rej[hi], R), Untested: untested[hi]})
	}
	models := make([]string, 0, len(counts))
	for m := range counts {
		models = append(models, m)
	}
	sort.Slice(models, func(i, j int) bool {
		if counts[models[i]] != counts[models[j]] {
			return counts[models[i]] > counts[models[j]]
		}
		return models[i] < models[j]
	})
	for _, m := range models {
		sr.Chosen = append(sr.Chosen, ModelShare{Model: m, Share: rate(counts[m], R)})
	}
	sr.Separation, sr.NotConverged, sr.Failed = rate(sep, R), rate(nc, R), rate(failed, R)
	return sr
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
