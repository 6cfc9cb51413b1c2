package runner

import (
	"errors"
	"fmt"
	"runtime"
	"slices"
	"strings"
	"sync"
	"time"

	"ordplan/plan"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// Options control a run; none of them changes the results, except that
// NoTermTests leaves some out.
type Options struct {
	Workers  int      // fits run at once (default: all cores)
	Progress Progress // hears of every finished fit (nil: nobody)
	Executor Executor // runs the grid's fits elsewhere (nil: here)
	// NoTermTests leaves out the tests of each term of the chosen model
	// (OutcomeResult.TermTests, one refit per term): a power study reads
	// only the plan's hypotheses of each replicate.
	NoTermTests bool
	// NoSensitivity leaves out the plan's sensitivity analyses (a power
	// study reads only the primary analysis of each replicate).
	NoSensitivity bool
	// Analysis is the name of the sensitivity analysis this run is (""
	// for the primary analysis): its jobs carry it (Job.Analysis).
	Analysis string
	// NoStability leaves out selection_stability's resamples (a power
	// study's replicates, the sensitivity analyses).
	NoStability bool
	// Resampled, when set, hears of every finished resample of
	// selection_stability: done of total.
	Resampled func(done, total int)
}

// Progress hears of the fits of a run as they finish.
type Progress interface {
	// Fitted is called once per finished fit of an outcome's grid, in
	// the order they finish: done of total fits are finished.
	Fitted(outcome, id string, done, total int)
}

// Run executes a validated plan: data, fits, tests, rules.
func Run(p *plan.Plan, opt Options) (*Result, error) {
	if opt.Workers <= 0 {
		opt.Workers = runtime.GOMAXPROCS(0)
	}
	an := ResolvePlan(p)
	// The data file (and the new-rows file, the imputed files) are read
	// once: every reader during the run parses the bytes whose hash the
	// run records.
	dataHash, parts, unpin, err := pinData(an)
	if err != nil {
		return nil, err
	}
	defer unpin()
	res := &Result{Plan: p, Analysis: an, DataParts: parts, Version: Version,
		GoVersion: runtime.Version(), Revision: Revision(), Platform: runtime.GOOS + "/" + runtime.GOARCH}
	if an.Inference.PredictPath != "" {
		h, unpinNew, err := data.Pin(an.Inference.PredictPath)
		if err != nil {
			return nil, fmt.Errorf("%s: inference.predict: %v", an.Source, err)
		}
		defer unpinNew()
		res.NewRowsHash = h
	}
	imputed, unpinImputed, err := pinImputed(an)
	if err != nil {
		return nil, err
	}
	defer unpinImputed()
	res.Imputed = imputed
	res.ImputedCopies = FindImputedCopies(imputed)
	if err := ValidateData(p); err != nil {
		return nil, err
	}
	if p.Report.Timestamp {
		res.Started = time.Now().UTC().Format(time.RFC3339)
	}
	res.Notes = append(res.Notes, an.Errors.Notes()...)
	for i, oc := range p.Outcomes {
		or, err := runOutcome(an, an.Outcomes[i], oc, opt, dataHash)
		if err != nil {
			return nil, err
		}
		if w := an.Outcomes[i].outcomeSelection(); w != "" {
			or.Notes = append(or.Notes, w+".")
		}
		res.Outcomes = append(res.Outcomes, or)
	}
	res.DataHash = dataHash()
	var scopes []plan.ParameterScope
	for _, or := range res.Outcomes {
		scopes = append(scopes, hypothesisScope(or.Outcome.Column, or.Design, or.Data.Categories))
	}
	if err := checkHypothesisNames(p, scopes); err != nil {
		return nil, err
	}
	adjustHypotheses(an, res)
	runStability(an, res, opt)
	res.Sensitivity = runSensitivity(p, opt)
	return res, nil
}

// runOutcome resolves, then does: the outcome's data and design, the
// partial sets, the grid of fits, the tests, the rules, overall fit and
// inference. dataHash gives the data's hash, waiting for it: the data are
// used only once it is taken.
func runOutcome(an *Analysis, r Reading, oc plan.Outcome, opt Options, dataHash func() string) (*OutcomeResult, error) {
	var notes []string
	if an.Imputed != nil || an.Imputes() {
		dataHash() // the imputed path reads the data itself: the hash first
		or, err := runImputedOutcome(an, r, oc, opt)
		if !errors.Is(err, errNothingToImpute) {
			return or, err
		}
		notes = append(notes, "data.missing is impute, but no value of the columns this outcome uses is missing: nothing was imputed, and the data were analysed as they are")
	}
	ld, err := an.Load(r)
	if err != nil {
		return nil, err
	}
	hash := dataHash()
	ds, dz := ld.Data, ld.Design
	or := &OutcomeResult{Outcome: oc, Data: ds, FitData: ld.FitData, Design: dz, Terms: termsOf(dz), dataOptions: r.Options}
	or.Notes = append(append(notes, ds.Notes...), dz.Notes...)
	if w := an.FewClusters(r, ds); w != "" {
		or.Notes = append(or.Notes, w)
	}
	if w := an.StabilityLevels(r, ds); w != "" && !opt.NoStability {
		or.Notes = append(or.Notes, w)
	}
	if err := an.CheckDesign(r, dz, ds, or.FitData); err != nil {
		return nil, err
	}
	remote := &remoteData{outcome: oc.Column, dataFile: an.DataFile, dataHash: hash, dataOptions: r.Options}
	if !dz.Trivial() {
		remote.design = dz.Freeze(r.Design)
	}
	if err := decideOutcome(an, r, or, opt, remote); err != nil {
		return nil, err
	}
	if w := an.FewRowLevels(r, dz, ds, or.Fits); w != "" {
		or.Notes = append(or.Notes, w)
	}

	// 5. Overall fit of the candidates and goodness of fit of the chosen
	// model.
	runFitStats(an, or)

	// 6. What the plan asks beyond the choice: hypotheses, marginal
	// effects, predictions for new rows.
	if err := runInference(an, or); err != nil {
		return nil, err
	}

	// 7. Tests of each term of the chosen model.
	if !opt.NoTermTests {
		runTermTests(an, or, opt)
	}
	return or, nil
}

// decideOutcome is the decision procedure on or's data (Data, FitData,
// Design and Terms set): the partial sets, the grid of fits and the
// auxiliary fits the tests need, the tests and the decision rules, in
// order. remote, when set, lets the run's Executor make the grid's fits
// elsewhere; the resamples of selection_stability (stability.go) take
// this same path with none.
func decideOutcome(an *Analysis, r Reading, or *OutcomeResult, opt Options, remote *remoteData) error {
	ds, oc := or.Data, or.Outcome
	fopt := an.Fit
	settle := an.Errors.Settle(ds, or.FitData, or.Terms)
	links := an.Models.Links
	backward := an.Models.Backward()

	// 1. The partial set of each approach: listed, or selected stepwise
	// (each fit settled as the grid's are: the near-collinearity flag and
	// the plan's standard errors).
	swopt := fopt
	swopt.Settle = settle
	or.FreeSets, or.Stepwise = freeSets(an, or.Terms, fit.DataStepwiseFits(or.FitData, swopt), backward, opt.Workers)

	// 2. The grid of candidate fits and the auxiliary fits the tests need.
	jobs, notes := gridJobs(an, or.Terms, or.FreeSets, backward)
	or.Notes = append(or.Notes, notes...)
	target := gridTarget{label: oc.Column, data: or.FitData, fit: fopt, settle: settle, remote: remote}
	if err := fitGrid(jobs, target, opt); err != nil {
		return err
	}
	or.Fits = jobs
	if w := an.SingularModels(r, ds, jobs, len(ds.Categories), allColumns(or.Terms)); w != "" {
		or.Notes = append(or.Notes, w)
	}

	// 3. Tests of the parallel-lines assumption and nested LR tests.
	for _, ap := range an.Models.Approaches {
		for _, l := range links {
			or.Tests = append(or.Tests, testBlock(an, or, ap, l))
		}
	}

	// 4. The decision rules, in order.
	applyRules(an, or)
	return nil
}

// freeSets returns the partial set of each approach: terms, listed in
// the plan or selected stepwise (each term's columns tested jointly) with
// the fits and tests of sf (one data set's, or pooled over imputed sets).
func freeSets(an *Analysis, terms []fit.Term, sf fit.StepwiseFits, backward bool, workers int) ([]FreeSet, []StepwiseRecord) {
	var out []FreeSet
	var sw []StepwiseRecord
	sel := an.Models.Partial.Select
	if sel == nil {
		for _, a := range an.Models.Approaches {
			out = append(out, FreeSet{Approach: a, Predictors: termsIn(terms, an.Models.Partial.Free), Source: "plan"})
		}
		return out, nil
	}
	link := an.Models.Links[0]
	sw = make([]StepwiseRecord, len(an.Models.Approaches))
	var wg sync.WaitGroup
	sem := make(chan struct{}, workers)
	for i, a := range an.Models.Approaches {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			r := fit.StepwiseWith(sf, fit.Model{Comparison: a, Backward: backward && a == fit.Stage, Link: link}, terms, sel.Alpha, sel.Test)
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

func freeFor(sets []FreeSet, approach fit.Comparison) []string {
	for _, s := range sets {
		if s.Approach == approach {
			return s.Predictors
		}
	}
	return nil
}

// ConstrainedGroups gives the constraint groups, by term, of the
// constrained models of an approach whose partial set is free: the plan's
// groups, each kept to the outcome's terms (a group with none of them
// left out), or one group of the whole partial set when the plan names no
// group that is left or selects the partial set stepwise.
func ConstrainedGroups(m plan.Models, terms []fit.Term, free []string) []Group {
	var groups []Group
	if m.Partial.Select == nil {
		for _, g := range m.Partial.Groups {
			if len(columnsOf(terms, g.Predictors)) > 0 {
				groups = append(groups, Group{Name: g.Name, Predictors: termsIn(terms, g.Predictors)})
			}
		}
	}
	if len(groups) == 0 {
		groups = []Group{{Predictors: free}}
	}
	return groups
}

// gridJobs lists the candidate fits in plan order, then the auxiliary fits.
func gridJobs(an *Analysis, terms []fit.Term, sets []FreeSet, backward bool) ([]*FitEntry, []string) {
	var jobs []*FitEntry
	var notes []string
	have := map[string]bool{}
	add := func(e *FitEntry) {
		if !have[e.ID] {
			have[e.ID] = true
			jobs = append(jobs, e)
		}
	}
	cols := allColumns(terms)
	for _, a := range an.Models.Approaches {
		freeTerms := freeFor(sets, a)
		free := columnsOf(terms, freeTerms)
		bw := backward && a == fit.Stage
		for _, l := range an.Models.Links {
			for _, s := range an.Models.Effects {
				id := cellID(a, bw, s.String(), l)
				if s == fit.StereotypeEffects && a != fit.Adjacent {
					continue
				}
				if (s == fit.PartialEffects || s == fit.ConstrainedEffects) && len(free) == 0 {
					notes = append(notes, fmt.Sprintf("%s not fitted: the partial set of the %s approach is empty, so the model equals %s", id, a, cellID(a, bw, fit.ParallelEffects.String(), l)))
					continue
				}
				if s == fit.PartialEffects && len(freeTerms) == len(terms) {
					notes = append(notes, fmt.Sprintf("%s not fitted: every predictor is in the partial set, so the model equals %s", id, cellID(a, bw, fit.NonparallelEffects.String(), l)))
					continue
				}
				var g []Group
				if s == fit.ConstrainedEffects {
					for _, tg := range ConstrainedGroups(an.Models, terms, freeTerms) {
						g = append(g, Group{Name: tg.Name, Predictors: columnsOf(terms, tg.Predictors)})
					}
				}
				spec, err := EffectsSpec(a, bw, l, s, cols, free, g)
				e := &FitEntry{ID: id, Approach: a, Effects: s, Link: l, Spec: spec}
				if err != nil {
					e.Err = err.Error()
				}
				add(e)
			}
		}
	}
	// Auxiliary fits for the parallel-lines tests the plan asks for and
	// that can be computed (none for a test barred by sampling weights).
	asked := func(k fit.TestKind) bool {
		_, barred := barredTest(an.Errors.Sampling, k, false)
		return slices.Contains(an.Tests.ParallelLines, k) && !barred
	}
	needPer := asked(fit.TestLR)
	needGlobal := needPer || asked(fit.TestWald) || asked(fit.TestScore)
	for _, a := range an.Models.Approaches {
		bw := backward && a == fit.Stage
		for _, l := range an.Models.Links {
			if !needGlobal {
				continue
			}
			for _, s := range []fit.Structure{fit.ParallelEffects, fit.NonparallelEffects} {
				id := cellID(a, bw, s.String(), l)
				if have[id] {
					continue
				}
				spec, _ := EffectsSpec(a, bw, l, s, cols, nil, nil)
				add(&FitEntry{ID: id, Approach: a, Effects: s, Link: l, Spec: spec, Auxiliary: true})
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
				spec := Spec{Approach: a, Backward: bw, Link: l, Predictors: cols, Nonparallel: np}
				add(&FitEntry{ID: cellID(a, bw, "only-"+t.Name+"-parallel", l), Approach: a, Effects: fit.PartialEffects, OnlyParallel: t.Name, Link: l, Spec: spec, Auxiliary: true})
			}
		}
	}
	return jobs, notes
}

// cellID is the id of a fit of the grid: the model's name, with the
// stage direction in the approach.
func cellID(a fit.Comparison, backward bool, effects string, l fit.Link) string {
	return fit.ModelID(fit.Model{Comparison: a, Backward: backward}.ComparisonName(), effects, l)
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

// Cell returns the fit of the grid with the given approach, effect
// structure and link (candidate or auxiliary), or nil.
func (or *OutcomeResult) Cell(a fit.Comparison, s fit.Structure, l fit.Link) *FitEntry {
	for _, f := range or.Fits {
		if f.Approach == a && f.Effects == s && f.Link == l && f.OnlyParallel == "" {
			return f
		}
	}
	return nil
}

// OnlyParallel returns the auxiliary fit in which term is the one parallel
// term, or nil.
func (or *OutcomeResult) OnlyParallel(a fit.Comparison, term string, l fit.Link) *FitEntry {
	for _, f := range or.Fits {
		if f.Approach == a && f.Link == l && f.OnlyParallel == term {
			return f
		}
	}
	return nil
}

// pinData reads the data once (see data.Pin) and gives its hash: the
// file's SHA-256, or for data held as parts the SHA-256 of the parts'
// hex SHA-256s, one per line in order (PartsHash), with each part's hash.
// A single file's hash may still be being taken when pinData returns
// (data.PinEarly), beside the parsing of its bytes: the function waits
// for it.
func pinData(a *Analysis) (func() string, []DataRef, func(), error) {
	if a.DataPaths == nil {
		h, unpin, err := data.PinEarly(a.DataPath)
		if err != nil {
			if a.PlanData != nil {
				return nil, nil, nil, a.PlanData.FileWhere(a.Source, err)
			}
			return nil, nil, nil, fmt.Errorf("%s: data.file: %v", a.Source, err)
		}
		return h, nil, unpin, nil
	}
	refs, unpin, k, err := pinFiles(a.DataFiles, a.DataPaths)
	if err != nil {
		if a.PlanData != nil {
			return nil, nil, nil, a.PlanData.PartWhere(a.Source, k, err)
		}
		return nil, nil, nil, fmt.Errorf("%s: data.parts: %v", a.Source, err)
	}
	hashes := make([]string, len(refs))
	for i, r := range refs {
		hashes[i] = r.SHA256
	}
	h := PartsHash(hashes)
	return func() string { return h }, refs, unpin, nil
}

// pinFiles pins files (named files, read at paths) for the run and
// returns their references, or the first error naming its file, and the
// file's index (nothing is left pinned then).
func pinFiles(files, paths []string) ([]DataRef, func(), int, error) {
	var refs []DataRef
	var unpins []func()
	release := func() {
		for _, u := range unpins {
			u()
		}
	}
	for i, path := range paths {
		h, unpin, err := data.Pin(path)
		if err != nil {
			release()
			var de *data.Error
			if errors.As(err, &de) {
				// Named as the plan names the file, once.
				e := *de
				e.File = files[i]
				return nil, nil, i, &e
			}
			return nil, nil, i, fmt.Errorf("%s: %v", files[i], err)
		}
		unpins = append(unpins, unpin)
		refs = append(refs, DataRef{File: files[i], SHA256: h})
	}
	return refs, release, -1, nil
}

// PartsHash is the hash of data held as parts: the hex SHA-256 of the
// parts' hex SHA-256s, each followed by a line end, in order (so that
// `sha256sum a.csv b.csv | cut -c1-64 | sha256sum` gives it).
func PartsHash(hashes []string) string {
	var b strings.Builder
	for _, h := range hashes {
		b.WriteString(h + "\n")
	}
	return data.HashBytes([]byte(b.String()))
}
