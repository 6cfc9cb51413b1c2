package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sort"
	"sync"

	"gonum.org/v1/gonum/stat"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// MaxStabilityFailures is how many distinct reasons of failed repetitions
// a Stability keeps (the first met).
const MaxStabilityFailures = 5

// Stability is selection_stability for one outcome: the whole decision
// procedure (decideOutcome: the partial sets, the grid, the tests and the
// rules, in order) repeated on bootstrap resamples of the rows used, and
// how often each model was chosen, each rule rejected each model and each
// hypothesis was rejected in the model chosen in the resample.
type Stability struct {
	Resamples int    `json:"resamples"`
	Seed      uint64 `json:"seed"`
	// Unit is what was resampled: rows, clusters (data.cluster) or
	// frequency-weighted units (data.weights, frequency weights: a row of
	// weight w is w units, and a resample's counts are multinomial).
	Unit string `json:"unit"`
	// Units is the number of units of the primary analysis, which every
	// resample draws with replacement.
	Units int `json:"units"`
	// Primary is the model the primary analysis chose ("" none).
	Primary string `json:"primary_choice"`
	// Models are the candidates, in the grid's order, each with the share
	// of resamples that chose it.
	Models []StabilityModel `json:"models"`
	// None is the share of resamples whose procedure ran and chose no
	// model; Failed the share whose procedure failed entirely (Failures
	// says why, the first resample of each distinct reason).
	None     Rate     `json:"none_chosen"`
	Failed   Rate     `json:"failed"`
	Failures []string `json:"failures,omitempty"`
	// Rules are the plan's rules in order, each with the share of
	// resamples in which it rejected each candidate.
	Rules []StabilityRule `json:"rules"`
	// Hypotheses are the plan's hypotheses, each rejected or not in the
	// model chosen in each resample.
	Hypotheses []StabilityHypothesis `json:"hypotheses,omitempty"`
	// Alpha is the level a hypothesis counts as rejected at: 1 minus the
	// report's confidence level, on the adjusted p-value when the plan
	// corrects for multiplicity.
	Alpha float64 `json:"alpha,omitempty"`
	// Imputed says that each resample drew the rows as read, incomplete
	// ones included, and was imputed anew (data.missing: impute).
	Imputed bool `json:"imputed_anew,omitempty"`
	// Level is the coverage of the percentile intervals (the report's).
	Level float64 `json:"interval_level,omitempty"`
	// Draw is plan.StabilityChosenModel when each repetition's outcomes
	// were simulated from the primary analysis's chosen model at the rows
	// used ("" for bootstrap resamples, the default).
	Draw string `json:"draw,omitempty"`
	// Redrawn counts the resamples for which at least one draw was set
	// aside and drawn again because it lacked a category of the outcome,
	// a level of a categorical predictor or a combination of levels an
	// interaction reads that the data hold (resampleNeeds); SetAside is
	// the draws set aside in all, Lacking what they lacked most often
	// (at most MaxStabilityFailures, each with the draws that lacked
	// it), MaxDraws the draws a resample may take. AlwaysDrawn counts
	// the units that alone hold such a value, so that every resample
	// kept draws them.
	Redrawn     int             `json:"redrawn_resamples"`
	SetAside    int             `json:"draws_set_aside"`
	Lacking     []StabilityLack `json:"draws_lacked,omitempty"`
	MaxDraws    int             `json:"max_draws_per_resample,omitempty"`
	AlwaysDrawn int             `json:"units_always_drawn,omitempty"`
}

// StabilityLack is one thing draws set aside lacked ("site = z") and how
// many draws lacked it.
type StabilityLack struct {
	What  string `json:"what"`
	Draws int    `json:"draws"`
}

// StabilityModel is how often one candidate was chosen.
type StabilityModel struct {
	Model   string `json:"model"`
	Chosen  Rate   `json:"chosen"`
	Primary bool   `json:"primary_choice,omitempty"`
	// Fallback counts the resamples in which it was the plan's fallback
	// (every candidate rejected), among those in Chosen.
	Fallback int `json:"fallback,omitempty"`
}

// StabilityRule is how often one rule rejected each candidate.
type StabilityRule struct {
	Number      int          `json:"rule"` // 1-based, as the decision log numbers it
	Kind        string       `json:"kind"`
	Description string       `json:"description"`
	Rejected    []ModelShare `json:"rejected"`
}

// ModelShare is a share of resamples for one model.
type ModelShare struct {
	Model string `json:"model"`
	Share Rate   `json:"share"`
}

// StabilityHypothesis is how often one hypothesis was rejected in the
// model chosen in a resample, and the spread of its estimate there.
type StabilityHypothesis struct {
	Hypothesis string `json:"hypothesis"`
	Line       int    `json:"line"`
	// Tested counts the resamples whose chosen model has the hypothesis's
	// parameters and gave a test; Rejected is over every resample.
	Tested   int  `json:"tested"`
	Rejected Rate `json:"rejected"`
	// Low and High are the percentile interval of the estimate over the
	// Estimated resamples that tested it as a single restriction (nil
	// when none did).
	Estimated int      `json:"estimated,omitempty"`
	Low       *float64 `json:"low,omitempty"`
	High      *float64 `json:"high,omitempty"`
}

// stabilityAlpha is the level a hypothesis counts as rejected at in a
// resample, 1 minus the confidence level, rounded to 12 decimals so that
// 0.95 gives 0.05 as the report says and decisions.json records, not the
// difference as computed (0.050000000000000044).
func stabilityAlpha(level float64) float64 {
	return math.Round((1-level)*1e12) / 1e12
}

// stabilityPass is what one resample of one outcome gave.
type stabilityPass struct {
	failed string // the procedure failed entirely: why
	// lacked is what each draw set aside before the resample lacked
	// (drawResample).
	lacked   [][]string
	chosen   string
	fallback bool
	rejected map[[2]string]bool // (rule index, model) -> rejected
	// per plan hypothesis: -1 not tested in the chosen model, 0 kept, 1
	// rejected; est the single restriction's estimate (NaN: none).
	hyp []int
	est []float64
}

// Resampling units (Stability.Unit).
const (
	UnitRows     = "rows"
	UnitClusters = "clusters"
	UnitWeighted = "frequency-weighted units"
)

// resampleUnit says what ds's bootstrap resamples, and how many of it.
func resampleUnit(ds *data.Dataset) (string, int) {
	switch {
	case ds.Cluster != nil:
		return UnitClusters, ClusterCount(ds)
	case ds.Weights != nil && !ds.Sampling:
		var m float64
		for _, w := range ds.Weights {
			m += w
		}
		return UnitWeighted, int(math.Round(m))
	}
	return UnitRows, ds.N
}

// Resample draws one bootstrap resample of ds's rows from rng: n rows
// with replacement; whole clusters with replacement when ds has clusters
// (each draw of a cluster a cluster of its own, named id#k for its k-th
// draw); with frequency weights (and no clusters) the sum of the weights
// as units, a row of weight w being w units, so that the row's new weight
// is its multinomial count (rows drawn no time are left out). Sampling
// weights go with their rows and are rescaled to sum to the rows drawn,
// as the reader rescales them. The rows keep their order in ds, so a
// resample is the same whatever the workers.
func Resample(ds *data.Dataset, rng *rand.Rand) *data.Dataset {
	rows, weights, cluster := resampleRows(ds, rng)
	return resampleOf(ds, rows, weights, cluster)
}

// resampleOf is the data set of ds's rows drawn (resampleRows), with
// their weights and cluster ids.
func resampleOf(ds *data.Dataset, rows []int, weights []float64, cluster []string) *data.Dataset {
	out := *ds
	out.N = len(rows)
	out.Y = make([]int, len(rows))
	out.X = make([]float64, len(rows)*ds.K)
	out.Lines = make([]int, len(rows))
	if ds.Offset != nil {
		out.Offset = make([]float64, len(rows))
	}
	out.Weights = weights
	out.Cluster = cluster
	out.Counts = make([]float64, len(ds.Categories))
	out.Incomplete = 0
	for i, r := range rows {
		out.Y[i] = ds.Y[r]
		copy(out.X[i*ds.K:(i+1)*ds.K], ds.X[r*ds.K:(r+1)*ds.K])
		out.Lines[i] = ds.Lines[r]
		if ds.Offset != nil {
			out.Offset[i] = ds.Offset[r]
		}
		w := 1.0
		if weights != nil {
			w = weights[i]
		}
		if ds.Y[r] >= 0 {
			out.Counts[ds.Y[r]] += w
		}
		// A row kept for imputation (data.missing: impute) misses its
		// outcome (-1) or a predictor (NaN).
		if ds.Y[r] < 0 || slices.ContainsFunc(ds.X[r*ds.K:(r+1)*ds.K], math.IsNaN) {
			out.Incomplete++
		}
	}
	return &out
}

// resampleRows gives the rows of ds a resample holds, in ds's order, with
// their weights (nil without weights) and cluster ids (nil without).
func resampleRows(ds *data.Dataset, rng *rand.Rand) (rows []int, weights []float64, cluster []string) {
	unit, _ := resampleUnit(ds)
	switch unit {
	case UnitClusters:
		var ids []string
		members := map[string][]int{}
		for i, c := range ds.Cluster {
			if _, ok := members[c]; !ok {
				ids = append(ids, c)
			}
			members[c] = append(members[c], i)
		}
		used := map[string]bool{}
		draws := make([]int, len(ids))
		for range ids {
			draws[rng.IntN(len(ids))]++
		}
		// Each cluster's copies in turn, in the order clusters first
		// appear in ds.
		for g, id := range ids {
			for k := 1; k <= draws[g]; k++ {
				name := id
				if k > 1 {
					// A name no cluster of the data has (an id may
					// itself end in #2).
					name = fmt.Sprintf("%s#%d", id, k)
					for members[name] != nil || used[name] {
						name += "#"
					}
					used[name] = true
				}
				for _, i := range members[id] {
					rows = append(rows, i)
					cluster = append(cluster, name)
					if ds.Weights != nil {
						weights = append(weights, ds.Weights[i])
					}
				}
			}
		}
	case UnitWeighted:
		cum := make([]float64, ds.N)
		var total float64
		for i, w := range ds.Weights {
			total += w
			cum[i] = total
		}
		m := int(math.Round(total))
		counts := make([]int, ds.N)
		for range m {
			u := float64(rng.IntN(m)) + 0.5
			counts[sort.SearchFloat64s(cum, u)]++
		}
		for i, c := range counts {
			if c > 0 {
				rows = append(rows, i)
				weights = append(weights, float64(c))
			}
		}
	default:
		counts := make([]int, ds.N)
		for range ds.N {
			counts[rng.IntN(ds.N)]++
		}
		for i, c := range counts {
			for range c {
				rows = append(rows, i)
				if ds.Weights != nil {
					weights = append(weights, ds.Weights[i])
				}
			}
		}
	}
	if ds.Sampling && weights != nil {
		var sum float64
		for _, w := range weights {
			sum += w
		}
		for i := range weights {
			weights[i] *= float64(len(weights)) / sum
		}
	}
	return rows, weights, cluster
}

// StabilityLevels warns, when the plan's selection_stability draws
// bootstrap resamples of whole clusters (data.cluster set, draw:
// bootstrap), of the levels of categorical predictors whose rows all lie
// in one cluster (levelsInOneCluster, every level of every coding): a
// draw that leaves that cluster out has no row of the level, so it is set
// aside and drawn again (drawResample), and every resample kept draws
// the cluster. It names the levels and gives the share of draws expected
// to be set aside (missingClusterShare); when every cluster holds such a
// level, no resample can differ from the data and the study fails. ""
// when there is no such level.
func (a *Analysis) StabilityLevels(r Reading, ds *data.Dataset) string {
	st := a.Stability
	if st == nil || st.Draw == plan.StabilityChosenModel || len(ds.Cluster) == 0 || a.Imputed != nil {
		return ""
	}
	found, clusters := levelsInOneCluster(r, ds, true)
	if len(found) == 0 {
		return ""
	}
	G := ClusterCount(ds)
	each := ""
	if len(found) > 1 {
		each = " each"
	}
	head := fmt.Sprintf("selection_stability: the bootstrap draws whole clusters of %q, and the rows of %s lie in one cluster%s: a draw that leaves that cluster out has no row of the level, so its column cannot be estimated",
		r.Options.Cluster, words.Some(found, 3), each)
	advice := "To avoid this, merge such levels with others or leave the term out, or use selection_stability.draw: chosen_model, which keeps the rows used"
	if len(clusters) >= G {
		return fmt.Sprintf("%s; every one of the %d clusters holds such a level, so a resample holding every level is the data again, and no resample is drawn (the study reports every resample as failed). %s", head, G, advice)
	}
	share := missingClusterShare(G, len(clusters))
	held := fmt.Sprintf("%d such clusters of %d, each", len(clusters), G)
	if len(clusters) == 1 {
		held = fmt.Sprintf("1 such cluster of %d,", G)
	}
	lost := fmt.Sprintf("%s left out of a draw with probability (1-1/%d)^%d = %.2f", held, G, G, math.Pow(1-1/float64(G), float64(G)))
	them := "those clusters"
	if len(clusters) == 1 {
		them = "that cluster"
	}
	return fmt.Sprintf("%s. Such a draw is set aside and another drawn (at most %d for one resample), so every resample kept draws %s (a bootstrap conditional on each level appearing) and the effects of those levels vary across resamples less than they would across new samples; about %.1f%% of the draws are expected to be set aside (%s). %s",
		head, MaxStabilityDraws, them, 100*share, lost, advice)
}

// missingClusterShare is the probability that a resample of G clusters
// drawn with replacement (G draws) leaves out at least one of k given
// clusters: 1 less the probability that the draws meet all k, followed
// draw by draw over the number met so far (a new one with probability
// (k - m)/G after m), which stays exact where the alternating sums of
// inclusion and exclusion cancel.
func missingClusterShare(G, k int) float64 {
	if k <= 0 || G <= 0 {
		return 0
	}
	p := make([]float64, k+1) // p[m]: m of the k met so far
	p[0] = 1
	for range G {
		for m := k; m >= 0; m-- {
			stay := p[m] * (1 - float64(k-m)/float64(G))
			if m > 0 {
				stay += p[m-1] * float64(k-m+1) / float64(G)
			}
			p[m] = stay
		}
	}
	return math.Min(1, math.Max(0, 1-p[k]))
}

// resampleRNG is the stream of resample r of outcome oi: from the plan's
// selection_stability.seed, the outcome and r alone.
func resampleRNG(seed uint64, oi, r int) *rand.Rand {
	return rand.New(rand.NewPCG(seed, uint64(oi)<<40^uint64(r)^0x5e1ec7))
}

// runStability repeats each outcome's decision procedure on the plan's
// bootstrap resamples, on opt.Workers resamples at once (each with one
// fit at a time, as a power study's replicates), and records the shares
// in each outcome's Stability. Fits of resamples are made here, never by
// an Executor.
func runStability(an *Analysis, res *Result, opt Options) {
	st := res.Plan.SelectionStability
	if st == nil || opt.NoStability || an.Imputed != nil {
		return
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	for _, or := range res.Outcomes {
		or.Design.SourceScales() // taken once, before the resamples share it
	}
	needs := make([]*resampleNeeds, len(res.Outcomes))
	for oi, or := range res.Outcomes {
		needs[oi] = needsOf(or.Design, resampled(or), or.Outcome.Column)
	}
	passes := make([][]stabilityPass, st.Resamples) // [r][outcome]
	var wg sync.WaitGroup
	var mu sync.Mutex
	next, done := 0, 0
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				mu.Lock()
				r := next
				next++
				mu.Unlock()
				if r >= st.Resamples {
					return
				}
				passes[r] = resamplePasses(an, res, needs, r, st.Seed)
				mu.Lock()
				done++
				if opt.Resampled != nil {
					opt.Resampled(done, st.Resamples)
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	for oi, or := range res.Outcomes {
		ps := make([]stabilityPass, st.Resamples)
		for r := range ps {
			ps[r] = passes[r][oi]
		}
		or.Stability = summarizeStability(an, or, ps, st, needs[oi])
	}
}

// resamplePasses runs resample r of every outcome, then corrects the
// hypotheses' p-values for multiplicity over the outcomes as the run does.
func resamplePasses(an *Analysis, res *Result, needs []*resampleNeeds, r int, seed uint64) []stabilityPass {
	out := make([]stabilityPass, len(res.Outcomes))
	sub := &Result{Plan: res.Plan, Analysis: an}
	for oi, or := range res.Outcomes {
		resample := resampleOutcome
		switch {
		case res.Plan.SelectionStability.Draw == plan.StabilityChosenModel:
			resample = simulatedOutcome
		case imputesResamples(or):
			resample = resampleImputedOutcome
		}
		ror, lacked, err := resample(an, an.Outcomes[oi], or, needs[oi], resampleRNG(seed, oi, r))
		out[oi].lacked = lacked
		if err != "" {
			out[oi].failed = err
			ror = &OutcomeResult{Outcome: or.Outcome}
		}
		sub.Outcomes = append(sub.Outcomes, ror)
	}
	adjustHypotheses(an, sub)
	alpha := stabilityAlpha(an.Level)
	for oi, ror := range sub.Outcomes {
		if out[oi].failed != "" {
			continue
		}
		p := stabilityPass{rejected: map[[2]string]bool{}, lacked: out[oi].lacked}
		if ror.Chosen != nil {
			p.chosen, p.fallback = ror.Chosen.ID, ror.Fallback
		}
		for ri, ro := range ror.Rules {
			for _, v := range ro.Verdicts {
				if !v.Kept {
					p.rejected[[2]string{fmt.Sprint(ri), v.Model}] = true
				}
			}
		}
		for _, h := range an.Inference.Hypotheses {
			state, est := -1, math.NaN()
			for _, hr := range ror.Hypotheses {
				if hr.Line != h.Line || hr.Text != h.Text || p.chosen == "" || hr.Model != p.chosen || !hr.Test.OK {
					continue
				}
				pv := hr.Test.P
				if hr.Adjusted != nil {
					pv = *hr.Adjusted
				}
				state = 0
				if pv < alpha {
					state = 1
				}
				if len(hr.Contrasts) == 1 {
					est = hr.Contrasts[0].Estimate
				}
			}
			p.hyp = append(p.hyp, state)
			p.est = append(p.est, est)
		}
		out[oi] = p
	}
	return out
}

// resampleOutcome draws one resample of the primary analysis's rows and
// runs the decision procedure and the hypotheses on it, with the primary
// analysis's design (its constants frozen there). A non-empty reason says
// the procedure failed entirely (an internal error included).
func resampleOutcome(an *Analysis, rd Reading, primary *OutcomeResult, n *resampleNeeds, rng *rand.Rand) (or *OutcomeResult, lacked [][]string, failed string) {
	defer internalFailure(&or, &failed)
	ds, lacked, failed := drawResample(primary.Data, n, rng)
	if failed != "" {
		return nil, lacked, failed
	}
	or, failed = decideDrawn(an, rd, primary, ds)
	return or, lacked, failed
}

// simulatedOutcome draws one set of outcomes from the primary analysis's
// chosen model at its rows (SimulateChosen) that holds every category of
// the outcome the data hold, as a bootstrap resample must (drawHolding,
// with n's needs: a set lacking one is set aside and another drawn), and
// runs the decision procedure and the hypotheses on it, as
// resampleOutcome does.
func simulatedOutcome(an *Analysis, rd Reading, primary *OutcomeResult, n *resampleNeeds, rng *rand.Rand) (or *OutcomeResult, lacked [][]string, failed string) {
	defer internalFailure(&or, &failed)
	ds, lacked, failed := drawSimulated(primary, n, rng)
	if failed != "" {
		return nil, lacked, failed
	}
	or, failed = decideDrawn(an, rd, primary, ds)
	return or, lacked, failed
}

// drawSimulated draws one set of outcomes from the primary analysis's
// chosen model at its rows (SimulateChosen) that holds everything n needs
// (nil n: the first set), through drawHolding, as drawResample draws a
// resample.
func drawSimulated(primary *OutcomeResult, n *resampleNeeds, rng *rand.Rand) (ds *data.Dataset, lacked [][]string, failed string) {
	_, lacked, failed = n.drawHolding(drawnOutcomes, func() (aDraw, error) {
		var rows []int
		var err error
		ds, rows, err = SimulateChosen(primary, rng)
		if err != nil {
			return aDraw{}, err
		}
		return aDraw{rows: rows, weights: ds.Weights, y: ds.Y}, nil
	})
	if failed != "" {
		return nil, lacked, failed
	}
	return ds, lacked, ""
}

// SimulateChosen draws new outcomes at the rows the primary analysis used
// from the model it chose, with that model's estimates: each row keeps its
// predictors, offset, cluster and sampling weight and gets a category drawn
// from the model's probabilities there (fit.DrawCategory, as every
// simulation of the program); a row of frequency weight w is w units, each
// drawn apart, so that it becomes one row per category drawn, weighted by
// how many of its units drew it (in category order, the rows in the order
// of the data). rows are the rows used that the set's rows are, in order.
func SimulateChosen(primary *OutcomeResult, rng *rand.Rand) (*data.Dataset, []int, error) {
	if primary.Chosen == nil || primary.Chosen.Result == nil {
		return nil, nil, fmt.Errorf("the primary analysis chose no model, so there is no model to draw outcomes from")
	}
	ds := primary.Data
	J := len(ds.Categories)
	P, err := primary.Chosen.Result.Probabilities(primary.FitData.X, primary.FitData.Offset)
	if err != nil {
		return nil, nil, fmt.Errorf("the probabilities of %s at the rows used: %v", primary.Chosen.ID, err)
	}
	freq := ds.Weights != nil && !ds.Sampling
	out := *ds
	out.Y, out.X, out.Lines, out.Weights, out.Offset, out.Cluster = nil, nil, nil, nil, nil, nil
	out.Counts = make([]float64, J)
	out.Incomplete = 0
	var rows []int
	add := func(i, y int, w float64) {
		rows = append(rows, i)
		out.Y = append(out.Y, y)
		out.X = append(out.X, ds.X[i*ds.K:(i+1)*ds.K]...)
		out.Lines = append(out.Lines, ds.Lines[i])
		if ds.Weights != nil {
			out.Weights = append(out.Weights, w)
		}
		if ds.Offset != nil {
			out.Offset = append(out.Offset, ds.Offset[i])
		}
		if ds.Cluster != nil {
			out.Cluster = append(out.Cluster, ds.Cluster[i])
		}
		out.Counts[y] += w
	}
	counts := make([]int, J)
	for i := range ds.N {
		p := P[i*J : (i+1)*J]
		if slices.ContainsFunc(p, func(v float64) bool { return !(v >= 0) }) {
			return nil, nil, fmt.Errorf("%s gives a negative probability at data line %d, so no outcome can be drawn there", primary.Chosen.ID, ds.Lines[i])
		}
		if !freq {
			w := 1.0
			if ds.Weights != nil {
				w = ds.Weights[i]
			}
			add(i, fit.DrawCategory(p, rng.Float64()), w)
			continue
		}
		clear(counts)
		for range int(math.Round(ds.Weights[i])) {
			counts[fit.DrawCategory(p, rng.Float64())]++
		}
		for y, c := range counts {
			if c > 0 {
				add(i, y, float64(c))
			}
		}
	}
	out.N = len(out.Y)
	return &out, rows, nil
}

// decideDrawn runs the decision procedure and the hypotheses on a data
// set drawn from the primary analysis's rows, with its design (the
// constants frozen there). A non-empty reason says the procedure failed
// entirely.
func decideDrawn(an *Analysis, rd Reading, primary *OutcomeResult, ds *data.Dataset) (or *OutcomeResult, failed string) {
	fd, err := frozenData(primary.Design, ds)
	if err != nil {
		return nil, err.Error()
	}
	or = &OutcomeResult{Outcome: primary.Outcome, Data: ds, FitData: fd, Design: primary.Design, Terms: primary.Terms, dataOptions: primary.dataOptions}
	if err := an.CheckDesign(rd, primary.Design, nil, fd); err != nil {
		return nil, err.Error()
	}
	if err := decideOutcome(an, rd, or, Options{Workers: 1}, nil); err != nil {
		return nil, err.Error()
	}
	testHypotheses(an, or)
	return or, ""
}

// internalFailure, deferred by a repetition of the procedure, turns a
// panic into the repetition's failure.
func internalFailure(or **OutcomeResult, failed *string) {
	if e := recover(); e != nil {
		*or, *failed = nil, fmt.Sprintf("internal error: %v (please report it with the command line that caused it)", e)
	}
}

// imputesResamples says whether or's resamples are imputed anew: its
// values were imputed by the program (data.missing: impute), so each
// resample draws the rows as read, the incomplete ones among them, and
// imputes them again (bootstrap, then impute).
func imputesResamples(or *OutcomeResult) bool {
	return or.Imputed != nil && or.Imputed.Chained != nil && or.Observed != nil
}

// resampled is the data set or's resamples draw from: the rows used, or
// the rows as read with the incomplete ones when each resample is imputed
// anew.
func resampled(or *OutcomeResult) *data.Dataset {
	if imputesResamples(or) {
		return or.Observed
	}
	return or.Data
}

// resampleImputedOutcome draws one resample of the rows as read, the
// incomplete ones among them (before frequency weights are expanded into
// rows), imputes it by chained equations with the plan's data.imputation
// settings and a seed drawn from the resample's stream, and runs the
// decision procedure on the pooled fits (decideImputed) with the primary
// analysis's design, then the hypotheses.
func resampleImputedOutcome(an *Analysis, rd Reading, primary *OutcomeResult, n *resampleNeeds, rng *rand.Rand) (or *OutcomeResult, lacked [][]string, failed string) {
	defer internalFailure(&or, &failed)
	ds, lacked, failed := drawResample(primary.Observed, n, rng)
	if failed != "" {
		return nil, lacked, failed
	}
	run, sets, dz, err := imputeChained(an, rd, ds, rng.Uint64(), primary.Design, Options{Workers: 1})
	if err != nil {
		return nil, lacked, err.Error()
	}
	run.obs = completeObs(run.Sets[0], an.Errors.Sampling)
	first := *sets[0]
	or = &OutcomeResult{Outcome: primary.Outcome, Data: &first, Observed: ds, FitData: run.Sets[0], Design: dz, Terms: primary.Terms, dataOptions: primary.dataOptions, Imputed: run}
	if err := decideImputed(an, rd, or, sets, Options{Workers: 1}, false); err != nil {
		return nil, lacked, err.Error()
	}
	testHypotheses(an, or)
	return or, lacked, ""
}

// summarizeStability turns the passes of one outcome into its shares.
func summarizeStability(an *Analysis, or *OutcomeResult, ps []stabilityPass, st *plan.SelectionStability, needs *resampleNeeds) *Stability {
	R := len(ps)
	unit, units := resampleUnit(resampled(or))
	s := &Stability{Imputed: imputesResamples(or), Resamples: R, Seed: st.Seed, Unit: unit, Units: units, Alpha: stabilityAlpha(an.Level), Level: an.Level}
	if st.Draw == plan.StabilityChosenModel {
		s.Draw, s.Unit, s.Units = st.Draw, UnitRows, or.Data.N
	}
	if or.Chosen != nil {
		s.Primary = or.Chosen.ID
	}
	if needs != nil {
		s.MaxDraws = MaxStabilityDraws
		if s.Draw == "" {
			// Simulated outcomes keep every row: no unit is drawn.
			s.AlwaysDrawn = needs.forced
		}
		lacks := map[string]int{}
		var order []string
		for _, p := range ps {
			if len(p.lacked) > 0 {
				s.Redrawn++
			}
			s.SetAside += len(p.lacked)
			for _, l := range p.lacked {
				for _, w := range l {
					if lacks[w] == 0 {
						order = append(order, w)
					}
					lacks[w]++
				}
			}
		}
		// Most often first; ties in the order first met.
		sort.SliceStable(order, func(i, j int) bool { return lacks[order[i]] > lacks[order[j]] })
		for _, w := range order[:min(len(order), MaxStabilityFailures)] {
			s.Lacking = append(s.Lacking, StabilityLack{What: w, Draws: lacks[w]})
		}
	}
	var models []string
	for _, f := range or.Fits {
		if !f.Auxiliary {
			models = append(models, f.ID)
		}
	}
	chosen, fallback := map[string]int{}, map[string]int{}
	none, failed := 0, 0
	for _, p := range ps {
		switch {
		case p.failed != "":
			failed++
			if !slices.Contains(s.Failures, p.failed) && len(s.Failures) < MaxStabilityFailures {
				s.Failures = append(s.Failures, p.failed)
			}
		case p.chosen == "":
			none++
		default:
			chosen[p.chosen]++
			if p.fallback {
				fallback[p.chosen]++
			}
			if !slices.Contains(models, p.chosen) {
				models = append(models, p.chosen) // a fallback outside the grid
			}
		}
	}
	for _, m := range models {
		s.Models = append(s.Models, StabilityModel{Model: m, Chosen: RateOf(chosen[m], R), Primary: m == s.Primary, Fallback: fallback[m]})
	}
	s.None, s.Failed = RateOf(none, R), RateOf(failed, R)
	for ri, ro := range or.Rules {
		sr := StabilityRule{Number: ri + 1, Kind: ro.Rule.Kind, Description: ro.Description}
		for _, m := range models {
			n := 0
			for _, p := range ps {
				if p.rejected[[2]string{fmt.Sprint(ri), m}] {
					n++
				}
			}
			sr.Rejected = append(sr.Rejected, ModelShare{Model: m, Share: RateOf(n, R)})
		}
		s.Rules = append(s.Rules, sr)
	}
	for hi, h := range an.Inference.Hypotheses {
		sh := StabilityHypothesis{Hypothesis: h.Text, Line: h.Line}
		rejected := 0
		var est []float64
		for _, p := range ps {
			if p.failed != "" || hi >= len(p.hyp) || p.hyp[hi] < 0 {
				continue
			}
			sh.Tested++
			if p.hyp[hi] == 1 {
				rejected++
			}
			if !math.IsNaN(p.est[hi]) {
				est = append(est, p.est[hi])
			}
		}
		sh.Rejected = RateOf(rejected, R)
		if len(est) > 0 {
			sh.Estimated = len(est)
			sort.Float64s(est)
			lo := stat.Quantile((1-an.Level)/2, stat.Empirical, est, nil)
			hi := stat.Quantile(1-(1-an.Level)/2, stat.Empirical, est, nil)
			sh.Low, sh.High = &lo, &hi
		}
		s.Hypotheses = append(s.Hypotheses, sh)
	}
	return s
}
