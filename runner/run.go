package runner

import (
	"fmt"
	"io"
	"runtime"
	"slices"
	"sync"
	"time"

	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// Options control a run; none of them changes the results.
type Options struct {
	Workers  int       // fits run at once (default: all cores)
	Progress io.Writer // progress lines (nil: none)
	Executor Executor  // runs the grid's fits elsewhere (nil: here)
}

// Run executes a validated plan: data, fits, tests, rules.
func Run(p *plan.Plan, opt Options) (*Result, error) {
	if opt.Workers <= 0 {
		opt.Workers = runtime.GOMAXPROCS(0)
	}
	if err := supported(p); err != nil {
		return nil, err
	}
	// The data file (and the new-rows file) are read once: every reader
	// during the run parses the bytes whose hash the run records.
	dataHash, unpin, err := data.Pin(p.Data.Path)
	if err != nil {
		return nil, fmt.Errorf("%s: data.file: %v", p.Path, err)
	}
	defer unpin()
	res := &Result{Plan: p, DataHash: dataHash, Version: Version,
		GoVersion: runtime.Version(), Platform: runtime.GOOS + "/" + runtime.GOARCH}
	if p.Inference.PredictPath != "" {
		h, unpinNew, err := data.Pin(p.Inference.PredictPath)
		if err != nil {
			return nil, fmt.Errorf("%s: inference.predict: %v", p.Path, err)
		}
		defer unpinNew()
		res.NewRowsHash = h
	}
	if err := ValidateData(p); err != nil {
		return nil, err
	}
	if p.Report.Timestamp {
		res.Started = time.Now().UTC().Format(time.RFC3339)
	}
	res.Notes = append(res.Notes, fmt.Sprintf("Standard errors from the %s.", covarianceName(covarianceOf(p))))
	if probabilityWeights(p) {
		res.Notes = append(res.Notes, "The weights are probability (sampling) weights: the fits maximize a pseudo-likelihood, standard errors are sandwich estimates, likelihood-ratio, score and Brant tests are not valid (the plan's test rules use Wald tests, and its choice uses TIC), and AIC/BIC are descriptive only.")
	}
	for _, oc := range p.Outcomes {
		or, err := runOutcome(p, oc, opt, res.DataHash)
		if err != nil {
			return nil, err
		}
		res.Outcomes = append(res.Outcomes, or)
	}
	adjustHypotheses(p, res)
	return res, nil
}

// supported refuses plan settings this version cannot honour, instead of
// silently ignoring them.
func supported(p *plan.Plan) error {
	switch p.Covariance {
	case "", "oim", "eim", "robust", "robust_hc0", "cluster":
	default:
		return fmt.Errorf("%s: covariance: unknown type %q (want oim, eim, robust or cluster)", p.Path, p.Covariance)
	}
	if p.Covariance == "cluster" && p.Data.Cluster == "" {
		return fmt.Errorf("%s: covariance: cluster needs data.cluster", p.Path)
	}
	return nil
}

func covarianceName(c string) string {
	switch c {
	case "eim":
		return "expected information (Fisher scoring form)"
	case "robust":
		return "sandwich estimator A^-1 B A^-1 (A the observed information, B the outer product of the row scores), times N/(N-P) (HC1)"
	case "robust_hc0":
		return "sandwich estimator A^-1 B A^-1 (A the observed information, B the outer product of the row scores), without a small-sample factor (HC0)"
	case "cluster":
		return "cluster-robust sandwich estimator (scores summed within clusters), times G/(G-1) (N-1)/(N-P) with G clusters"
	}
	return "observed information (inverse of minus the Hessian at the maximum)"
}

// probabilityWeights reports whether the plan's weights are sampling
// weights: the likelihood is then a pseudo-likelihood.
func probabilityWeights(p *plan.Plan) bool {
	return p.Data.Weights != "" && p.Data.WeightKind == "probability"
}

// covarianceOf is the covariance a plan's fits use: probability weights
// imply the sandwich.
func covarianceOf(p *plan.Plan) string {
	if probabilityWeights(p) && p.Covariance != "cluster" && p.Covariance != "robust_hc0" {
		return "robust"
	}
	return p.Covariance
}

func runOutcome(p *plan.Plan, oc plan.Outcome, opt Options, dataHash string) (*OutcomeResult, error) {
	ds, dz, fd, dopt, err := loadDesign(p, oc)
	if err != nil {
		return nil, err
	}
	or := &OutcomeResult{Outcome: oc, Data: ds, FitData: fd, Design: dz, Terms: termsOf(dz), dataOptions: dopt}
	or.Notes = append(or.Notes, dz.Notes...)
	if err := fit.CheckDesign(or.FitData); err != nil {
		return nil, fmt.Errorf("%s: outcome %q: %v", p.Data.File, oc.Column, err)
	}
	fopt := fit.Options{Covariance: p.Covariance, Workers: 1}
	if fopt.Covariance != "eim" {
		fopt.Covariance = "oim"
	}
	links := p.Models.Links
	backward := p.Models.Direction == "backward"

	// 1. The partial set of each approach: listed, or selected stepwise
	// (with the plan's standard errors).
	swopt := fopt
	if sw := sandwichFor(p, ds, or.FitData); sw != nil {
		swopt.Sandwich = sw
	}
	or.FreeSets, or.Stepwise = freeSets(p, or.Terms, or.FitData, backward, swopt, opt.Workers)

	// 2. The grid of candidate fits and the auxiliary fits the tests need.
	jobs, notes := gridJobs(p, or.Terms, or.FreeSets, backward)
	or.Notes = append(or.Notes, notes...)
	if opt.Executor != nil {
		ctx := &ruleContext{outcome: oc.Column, dataFile: p.Data.File, dataHash: dataHash, dataOptions: dopt, fitOptions: fopt, sandwich: sandwichFor(p, ds, or.FitData)}
		if !dz.Trivial() {
			spec := p.DesignSpec(oc)
			ctx.design = &spec
		}
		if err := remoteJobs(opt.Executor, jobs, ctx); err != nil {
			return nil, err
		}
	} else {
		runJobs(jobs, or.FitData, fopt, opt, oc.Column, sandwichFor(p, ds, or.FitData))
	}
	or.Fits = jobs

	// 3. Tests of the parallel-lines assumption and nested LR tests.
	for _, a := range p.Models.Approaches {
		for _, l := range links {
			or.Tests = append(or.Tests, testBlock(p, or, a, l, fopt))
		}
	}

	// 4. The decision rules, in order.
	applyRules(p, or)

	// 5. Overall fit of the candidates and goodness of fit of the chosen
	// model.
	runFitStats(p, or, fopt)

	// 6. What the plan asks beyond the choice: hypotheses, marginal
	// effects, predictions for new rows.
	if err := runInference(p, or); err != nil {
		return nil, err
	}
	return or, nil
}

// freeSets returns the partial set of each approach: terms, listed in
// the plan or selected stepwise (each term's columns tested jointly).
func freeSets(p *plan.Plan, terms []fit.Term, d *fit.Data, backward bool, fopt fit.Options, workers int) ([]FreeSet, []StepwiseRecord) {
	var out []FreeSet
	var sw []StepwiseRecord
	sel := p.Models.Partial.Select
	if sel == nil {
		for _, a := range p.Models.Approaches {
			out = append(out, FreeSet{Approach: a, Predictors: termsIn(terms, p.Models.Partial.Free), Source: "plan"})
		}
		return out, nil
	}
	link := p.Models.Links[0]
	sw = make([]StepwiseRecord, len(p.Models.Approaches))
	var wg sync.WaitGroup
	sem := make(chan struct{}, workers)
	for i, a := range p.Models.Approaches {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			c, _ := fit.ParseComparison(a)
			l, _ := fit.ParseLink(link)
			r := fit.StepwiseTerms(d, fit.Model{Comparison: c, Backward: backward && c == fit.Stage, Link: l}, terms, sel.Alpha, sel.Test, fopt)
			sw[i] = StepwiseRecord{Approach: a, Link: link, Result: r}
		}()
	}
	wg.Wait()
	for _, s := range sw {
		fs := FreeSet{Approach: s.Approach, Source: "stepwise"}
		if s.Result.OK {
			fs.Predictors = s.Result.FinalNonparallel
		}
		out = append(out, fs)
	}
	return out, sw
}

func freeFor(sets []FreeSet, approach string) []string {
	for _, s := range sets {
		if s.Approach == approach {
			return s.Predictors
		}
	}
	return nil
}

// gridJobs lists the candidate fits in plan order, then the auxiliary fits.
func gridJobs(p *plan.Plan, terms []fit.Term, sets []FreeSet, backward bool) ([]*FitEntry, []string) {
	var jobs []*FitEntry
	var notes []string
	have := map[string]bool{}
	add := func(e *FitEntry) {
		if !have[e.ID] {
			have[e.ID] = true
			jobs = append(jobs, e)
		}
	}
	var groups []Group
	for _, g := range p.Models.Partial.Groups {
		if cols := columnsOf(terms, g.Predictors); len(cols) > 0 {
			groups = append(groups, Group{Name: g.Name, Predictors: cols})
		}
	}
	cols := allColumns(terms)
	for _, a := range p.Models.Approaches {
		freeTerms := freeFor(sets, a)
		free := columnsOf(terms, freeTerms)
		for _, l := range p.Models.Links {
			for _, lv := range p.Models.Levels {
				id := a + "/" + lv + "/" + l
				if lv == LevelStereotype && a != "adjacent" {
					continue
				}
				if (lv == LevelPartial || lv == LevelConstrained) && len(free) == 0 {
					notes = append(notes, fmt.Sprintf("%s not fitted: the partial set of the %s approach is empty, so the model equals %s/parallel/%s", id, a, a, l))
					continue
				}
				if lv == LevelPartial && len(freeTerms) == len(terms) {
					notes = append(notes, fmt.Sprintf("%s not fitted: every predictor is in the partial set, so the model equals %s/nonparallel/%s", id, a, l))
					continue
				}
				g := groups
				if lv == LevelConstrained && (len(g) == 0 || p.Models.Partial.Select != nil) {
					g = []Group{{Predictors: free}}
				}
				spec, err := LevelSpec(a, backward && a == "stage", l, lv, cols, free, g)
				e := &FitEntry{ID: id, Approach: a, Level: lv, Link: l, Spec: spec}
				if err != nil {
					e.Err = err.Error()
				}
				add(e)
			}
		}
	}
	// Auxiliary fits for the parallel-lines tests.
	needPer := slices.Contains(p.Tests.ParallelLines, "lr")
	needGlobal := needPer || slices.Contains(p.Tests.ParallelLines, "wald") || slices.Contains(p.Tests.ParallelLines, "score")
	for _, a := range p.Models.Approaches {
		for _, l := range p.Models.Links {
			if !needGlobal {
				continue
			}
			for _, lv := range []string{LevelParallel, LevelNonparallel} {
				id := a + "/" + lv + "/" + l
				if have[id] {
					continue
				}
				spec, _ := LevelSpec(a, backward && a == "stage", l, lv, cols, nil, nil)
				add(&FitEntry{ID: id, Approach: a, Level: lv, Link: l, Spec: spec, Auxiliary: true})
			}
			if !needPer || len(terms) < 2 {
				continue
			}
			for _, t := range terms {
				var np []string
				for _, q := range terms {
					if q.Name != t.Name {
						np = append(np, q.Columns...)
					}
				}
				spec := Spec{Approach: a, Backward: backward && a == "stage", Link: l, Predictors: cols, Nonparallel: np}
				add(&FitEntry{ID: auxID(a, t.Name, l), Approach: a, Level: "only-" + t.Name + "-parallel", Link: l, Spec: spec, Auxiliary: true})
			}
		}
	}
	return jobs, notes
}

func auxID(approach, pred, link string) string {
	return approach + "/only-" + pred + "-parallel/" + link
}

// runJobs fits every entry, several at once; results land in their entry,
// so the order of completion does not matter.
func runJobs(jobs []*FitEntry, d *fit.Data, fopt fit.Options, opt Options, outcome string, sandwich func(*fit.Result) error) {
	var wg sync.WaitGroup
	sem := make(chan struct{}, opt.Workers)
	var mu sync.Mutex
	done := 0
	for _, e := range jobs {
		if e.Err != "" {
			continue
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			m, err := e.Spec.Model()
			if err == nil {
				e.Result, err = fit.Fit(d, m, fopt)
			}
			if err == nil && sandwich != nil && e.Result.OK() {
				err = sandwich(e.Result)
			}
			if err != nil {
				e.Err = err.Error()
			}
			if opt.Progress != nil {
				mu.Lock()
				done++
				status := "error"
				if e.Result != nil {
					status = string(e.Result.Status)
				}
				fmt.Fprintf(opt.Progress, "\r[%d/%d] %s: %s %-40s", done, len(jobs), outcome, e.ID, status)
				if done == len(jobs) {
					fmt.Fprintln(opt.Progress)
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
}

// sandwichFor returns the step that replaces a fit's covariance by the
// sandwich, or nil when the plan uses model-based errors.
func sandwichFor(p *plan.Plan, ds *data.Dataset, d *fit.Data) func(*fit.Result) error {
	cov := covarianceOf(p)
	if cov != "robust" && cov != "robust_hc0" && cov != "cluster" {
		return nil
	}
	var clusters []string
	if cov == "cluster" {
		clusters = ds.Cluster
	}
	prob := probabilityWeights(p)
	return func(r *fit.Result) error {
		sw := fit.Sandwich
		if cov == "robust_hc0" {
			sw = fit.SandwichHC0
		}
		V, info, err := sw(d, r, clusters, prob)
		if err != nil {
			return fmt.Errorf("%s: sandwich covariance: %w", r.Name, err)
		}
		r.UseCovariance(V, info.Type)
		return nil
	}
}

// Find returns the fit with the given id.
func (or *OutcomeResult) Find(id string) *FitEntry {
	for _, f := range or.Fits {
		if f.ID == id {
			return f
		}
	}
	return nil
}
