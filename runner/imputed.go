package runner

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// ImputedRun records how an outcome was analysed on multiply imputed data.
type ImputedRun struct {
	M      int      // number of imputed sets
	Source string   // "stacked", "files" or "chained" (imputed by the program)
	Files  []string // the file(s) as the plan names them
	Column string   // imputation-number column (stacked)
	Rows   int      // rows used in each set
	// Sets are the imputed sets' fit inputs, in imputation order, Data
	// their rows as read, and Fits the grid fitted on each (by set, then
	// in the order of OutcomeResult.Fits).
	Sets []*fit.Data     `json:"-"`
	Data []*data.Dataset `json:"-"`
	Fits [][]*FitEntry   `json:"-"`
	// Chained says how the program imputed the sets (Source "chained").
	Chained *ChainedRecord `json:"-"`
	// observed is the original data with its incomplete rows kept (a
	// missing outcome -1, a missing predictor NaN): OutcomeResult.Observed.
	observed *data.Dataset
	// brant is the Brant construction of every set, made once.
	brant *pooledBrant
	// obs is the number of observations of the complete-data degrees of
	// freedom (completeObs).
	obs float64
	// sources say how a job reads each set elsewhere, and design is the
	// design frozen on set 1 (nil when trivial), which the jobs carry.
	sources []setSource
	design  *design.Frozen
	// names say where each set is read, for messages ("imp.csv (imp =
	// 2)", or the set's file).
	names []string
	// membership explains rows that differ between the sets, or between
	// the sets and the data file, by a subset condition on a column the
	// sets impute (subsetMembership); nil when there is nothing to read.
	membership func(orig *data.Dataset) error
	// completed writes the completed sets for the outputs
	// (data.imputation.write_sets; nil otherwise).
	completed func() ([]byte, error)
}

// setSource is an imputed set as a data file a job can name: its name
// (for messages and the format), its bytes, and how to read it.
type setSource struct {
	name    string
	bytes   func() ([]byte, error)
	options data.Options
}

// fileBytes gives the pinned bytes of a data file.
func fileBytes(path string) func() ([]byte, error) {
	return func() ([]byte, error) { return data.ReadFile(path) }
}

// sameClusters says why every imputed set must hold the data file's
// cluster ids (data.cluster): the one wording of imputedSets and
// matchObserved.
const sameClusters = "cluster ids are not imputed, and Rubin's rules need the same clusters in every imputed set (under clustered errors the complete-data degrees of freedom are the clusters less one)"

// imputedSets reads the imputed sets of an outcome, checks that they are
// complete and have the same rows and columns, and builds their designs
// with the constants (centring, knots) frozen on the first set.
func imputedSets(a *Analysis, r Reading) (*ImputedRun, []*data.Dataset, *design.Design, error) {
	im, src := a.Imputed, a.Source
	spec, dopt := r.Design, r.Options
	dopt.Refuse = false
	run := &ImputedRun{}
	var sets []*data.Dataset
	var names, paths []string
	if im.Files != nil {
		run.Source, run.Files = "files", im.Files
		var first []string
		for k, path := range im.Paths {
			h, err := data.HeaderDialect(path, dopt.Dialect)
			if err != nil {
				return nil, nil, nil, fmt.Errorf("%s: data.imputed.files[%d]: %v", src, k, err)
			}
			if k == 0 {
				first = h
			} else if !slices.Equal(h, first) {
				return nil, nil, nil, fmt.Errorf("%s: data.imputed.files: %s has the columns %s but %s has %s; imputed sets must have the same columns", src, im.Files[k], strings.Join(h, ", "), im.Files[0], strings.Join(first, ", "))
			}
			ds, err := data.Load(path, dopt)
			if err != nil {
				return nil, nil, nil, fmt.Errorf("%s (plan %s, data.imputed.files[%d], outcome %q)", err, src, k, r.Outcome)
			}
			sets = append(sets, ds)
			names, paths = append(names, im.Files[k]), append(paths, path)
			run.sources = append(run.sources, setSource{name: im.Files[k], bytes: fileBytes(path), options: dopt})
		}
	} else {
		run.Source, run.Files, run.Column = "stacked", []string{im.File}, im.Column
		m, err := imputationNumbers(src, r.Outcome, im, dopt.Dialect)
		if err != nil {
			return nil, nil, nil, err
		}
		for k := 1; k <= m; k++ {
			o := dopt
			o.Keep = append(slices.Clone(dopt.Keep), data.Condition{Column: im.Column, Op: "==", Number: float64(k), Key: "data.imputed.column"})
			ds, err := data.Load(im.Path, o)
			if err != nil {
				return nil, nil, nil, fmt.Errorf("%s (plan %s, data.imputed, imputed set %d, outcome %q)", err, src, k, r.Outcome)
			}
			sets = append(sets, ds)
			names, paths = append(names, fmt.Sprintf("%s (%s = %d)", im.File, im.Column, k)), append(paths, im.Path)
			run.sources = append(run.sources, setSource{name: im.File, bytes: fileBytes(im.Path), options: o})
		}
	}
	run.M = len(sets)
	run.membership = func(orig *data.Dataset) error {
		return subsetMembership(a, r, run.sources, paths, sets, orig)
	}
	for k, ds := range sets {
		var miss []string
		var drops []data.DropCount
		for _, dc := range ds.Dropped {
			if !dc.Subset {
				miss = append(miss, fmt.Sprintf("%s: %d", dc.Column, dc.Rows))
				drops = append(drops, dc)
			}
		}
		if len(miss) > 0 {
			return nil, nil, nil, fmt.Errorf("%s: data.imputed: imputed set %d, %s, has rows with %s (%s); every imputed set must be complete in the columns the plan uses", src, k+1, names[k], data.DropReasons(drops, r.Options.Weights), strings.Join(miss, ", "))
		}
		if err := a.observedIn(r, ds, fmt.Sprintf(" of imputed set %d, %s", k+1, names[k])); err != nil {
			return nil, nil, nil, err
		}
		if ds.N != sets[0].N {
			if err := run.membership(nil); err != nil {
				return nil, nil, nil, err
			}
			return nil, nil, nil, fmt.Errorf("%s: data.imputed: imputed set %d, %s, has %d rows but set 1, %s, has %d; imputed sets must hold the same rows", src, k+1, names[k], ds.N, names[0], sets[0].N)
		}
		if !slices.Equal(ds.Cluster, sets[0].Cluster) {
			i := 0 // the first row whose cluster differs (the sets have as many rows)
			for ds.Cluster[i] == sets[0].Cluster[i] {
				i++
			}
			return nil, nil, nil, fmt.Errorf("%s: data.imputed: imputed set %d, %s, line %d: the cluster column %q (data.cluster) is %s where imputed set 1, %s, line %d, has %s; %s", src, k+1, names[k], ds.Lines[i], r.Options.Cluster, strconv.Quote(ds.Cluster[i]), names[0], sets[0].Lines[i], strconv.Quote(sets[0].Cluster[i]), sameClusters+": make the imputed sets again keeping the data file's cluster ids")
		}
		if !slices.Equal(ds.Categories, sets[0].Categories) {
			return nil, nil, nil, fmt.Errorf("%s: data.imputed: imputed set %d, %s, has the outcome categories %s but set 1 has %s; declare the outcome's categories in the plan", src, k+1, names[k], strings.Join(ds.Categories, ", "), strings.Join(sets[0].Categories, ", "))
		}
	}
	run.Rows = sets[0].N
	run.Data, run.names = sets, names
	dz, fds, err := designSets(spec, sets)
	if err != nil {
		return nil, nil, nil, fmt.Errorf("%s: %v (outcome %q)", src, err, r.Outcome)
	}
	run.Sets = fds
	return run, sets, dz, nil
}

// designSets builds the design on the first imputed set, freezing its
// constants (centring, knots), and the fit inputs of every set with it.
func designSets(spec design.Spec, sets []*data.Dataset) (*design.Design, []*fit.Data, error) {
	dz, d0, err := buildDesign(spec, sets[0])
	if err != nil {
		return nil, nil, fmt.Errorf("%w (imputed set 1)", err)
	}
	out := []*fit.Data{d0}
	for k, ds := range sets[1:] {
		d, err := frozenData(dz, ds)
		if err != nil {
			return nil, nil, fmt.Errorf("imputed set %d, %v", k+2, err)
		}
		out = append(out, d)
	}
	return dz, out, nil
}

// imputationNumbers reads the imputation-number column of a stacked file
// and returns the number of imputed sets: the numbers must be whole, 0
// (the original data, not analysed) or 1..m without gaps, m >= 2, and
// every set must have as many rows as set 1 (stackedSets). A problem of
// the numbers is a problem of the data: its message ends, as every data
// message of a plan's run, with the plan and the outcome read (src, the
// plan file; outcome).
func imputationNumbers(src, outcome string, im *plan.Imputed, dl data.Dialect) (int, error) {
	rows := map[int]int{}
	err := data.ColumnCells(im.Path, dl, im.Column, func(line int, cell string) error {
		k, err := strconv.Atoi(cell)
		if err != nil || k < 0 {
			return fmt.Errorf("%s:%d: column %s: imputation number %q is not a whole number 0 or more (0 marks the original data)", im.File, line, im.Column, cell)
		}
		rows[k]++
		return nil
	})
	var de *data.Error
	switch {
	case errors.As(err, &de) && de.Line == 0 && de.Column == im.Column:
		return 0, fmt.Errorf("%s: data.imputed.column: column %q is not in %s", src, im.Column, im.File)
	case errors.As(err, &de):
		return 0, fmt.Errorf("%s: data.imputed.file: %v", src, err)
	}
	m := 0
	if err == nil {
		m, err = stackedSets(im, rows)
	}
	if err != nil {
		return 0, fmt.Errorf("%s (plan %s, outcome %q, plan key data.imputed.column)", err, src, outcome)
	}
	return m, nil
}

// stackedSets is the number of imputed sets of a stacked file from the
// count of rows of each imputation number (rows), or why the numbers are
// wrong.
func stackedSets(im *plan.Imputed, rows map[int]int) (int, error) {
	var nums []int
	for k := range rows {
		if k > 0 {
			nums = append(nums, k)
		}
	}
	slices.Sort(nums)
	m := len(nums)
	switch {
	case m == 0:
		return 0, fmt.Errorf("%s: column %s holds no imputed set (no imputation number 1 or more)", im.File, im.Column)
	case m == 1:
		return 0, fmt.Errorf("%s: column %s holds one imputed set only (imputation number %d); pooling needs at least two imputed sets", im.File, im.Column, nums[0])
	}
	for i, k := range nums {
		if k != i+1 {
			return 0, fmt.Errorf("%s: column %s: imputation numbers must run 1, 2, ..., m without gaps; %d has no rows but %d has", im.File, im.Column, i+1, k)
		}
	}
	for _, k := range nums[1:] {
		if rows[k] != rows[1] {
			return 0, fmt.Errorf("%s: column %s: imputed set %d has %d rows but set 1 has %d; imputed sets must hold the same rows", im.File, im.Column, k, rows[k], rows[1])
		}
	}
	return m, nil
}

// poolJobs fits every job on every imputed set and replaces each job's
// result by the pooled one (Rubin's rules; log-likelihood, AIC and BIC are
// the means over the sets). Each set's fit takes the step of
// CovariancePolicy.Settle (the near-collinearity check of terms, then the
// sandwich); the pooled fit flags a term any set flags (poolCollinear).
// It returns the per-set fits, by set then job.
// With an Executor the fits of every set are its jobs, all in one batch:
// each set is handed over as a data file and the jobs carry the design
// frozen on set 1.
func poolJobs(a *Analysis, sets []*data.Dataset, terms []fit.Term, jobs []*FitEntry, run *ImputedRun, opt Options, outcome string) ([][]*FitEntry, error) {
	perSet := make([][]*FitEntry, run.M)
	grids := make([]gridPart, run.M)
	for k, d := range run.Sets {
		cp := make([]*FitEntry, len(jobs))
		for i, e := range jobs {
			c := *e
			cp[i] = &c
		}
		perSet[k] = cp
		grids[k] = gridPart{entries: cp, target: gridTarget{label: fmt.Sprintf("%s, imputed set %d/%d", outcome, k+1, run.M), data: d,
			fit: a.Fit, settle: a.Errors.Settle(sets[k], d, terms)}}
	}
	if err := run.remote(opt.Executor, grids, outcome); err != nil {
		return nil, err
	}
	if err := fitGrids(grids, opt); err != nil {
		return nil, err
	}
	for i, e := range jobs {
		if e.Err != "" {
			continue
		}
		sets := make([]impute.Set, run.M)
		var bad *FitEntry
		badSet := 0
		for k := range perSet {
			f := perSet[k][i]
			if !f.OK() {
				bad, badSet = f, k+1
				break
			}
			sets[k] = impute.Set{Est: f.Result.Estimates, Cov: f.Result.CovarianceAsComputed()}
		}
		if bad != nil {
			if bad.Result != nil {
				r := *bad.Result
				r.Message = fmt.Sprintf("in imputed set %d: %s", badSet, r.Message)
				// One set's maximum (a flat one's) is not the pooled fit's.
				r.LogLik, r.AIC, r.BIC = math.NaN(), math.NaN(), math.NaN()
				e.Result = &r
			} else {
				e.Err = fmt.Sprintf("in imputed set %d: %s", badSet, bad.Err)
			}
			continue
		}
		rs := make([]*fit.Result, run.M)
		for k := range perSet {
			rs[k] = perSet[k][i].Result
		}
		r, pl, err := poolResults(rs, run.obs, run.Sets)
		if err != nil {
			e.Err = err.Error()
			continue
		}
		e.Result, e.Pooled = r, pl
	}
	return perSet, nil
}

// remote makes every set's grid redoable by the executor ex (nil: none):
// the set's data go to the executor, which must take data (DataHolder).
func (run *ImputedRun) remote(ex Executor, grids []gridPart, outcome string) error {
	if ex == nil {
		return nil
	}
	holder, ok := ex.(DataHolder)
	if !ok || len(run.sources) != len(grids) {
		return fmt.Errorf("outcome %q: the executor cannot take the imputed sets' data", outcome)
	}
	for k, src := range run.sources {
		b, err := src.bytes()
		if err != nil {
			return fmt.Errorf("outcome %q, imputed set %d: %v", outcome, k+1, err)
		}
		h, err := holder.HoldData(src.name, b)
		if err != nil {
			return fmt.Errorf("outcome %q, imputed set %d: %v", outcome, k+1, err)
		}
		grids[k].target.remote = &remoteData{outcome: outcome, set: fmt.Sprintf("imputed set %d/%d", k+1, run.M),
			dataFile: src.name, dataHash: h, dataOptions: src.options, design: run.design}
	}
	return nil
}

// poolResults pools the usable fits of one model on every imputed set:
// the estimates and covariance by Rubin's rules, the log-likelihood, AIC
// and BIC as means over the sets, and the derived tables (cutpoints,
// effects, phi) as means too. The rows with a negative predicted category
// probability, and with them the status, are those of the pooled
// estimates on the rows of each set (data[k]; poolNegatives). The rest is
// set 1's.
func poolResults(rs []*fit.Result, obs float64, data []*fit.Data) (*fit.Result, *impute.Pooled, error) {
	sets := make([]impute.Set, len(rs))
	for k, r := range rs {
		sets[k] = impute.Set{Est: r.Estimates, Cov: r.CovarianceAsComputed()}
	}
	first := rs[0]
	for k, r := range rs {
		if r.RefDF != first.RefDF || r.Clusters != first.Clusters {
			return nil, nil, fmt.Errorf("imputed set %d has a covariance from %d clusters but set 1 from %d: the sets must share their clusters", k+1, r.Clusters, first.Clusters)
		}
	}
	pl, err := impute.Pool(sets, completeDF(obs, first.NParams, first))
	if err != nil {
		return nil, nil, err
	}
	r := *first
	r.Estimates, r.Cov, r.StdErrors, r.DF = pl.Estimate, pl.Total, pl.SE, pl.DF
	r.PoolNotEstimable(rs)
	if r.NotEstimable != nil {
		// The pooling's own figures of a parameter the cluster-robust
		// covariance cannot estimate are not given either (the matrices
		// stay as computed for the tests that do not load on it; the
		// tables of the pooling read PooledVariances).
		for j := range r.StdErrors {
			if math.IsNaN(r.StdErrors[j]) {
				pl.SE[j], pl.RIV[j], pl.Lambda[j], pl.FMI[j] = math.NaN(), math.NaN(), math.NaN(), math.NaN()
			}
		}
	}
	m := float64(len(rs))
	r.LogLik, r.AIC, r.BIC = 0, 0, 0
	for _, rk := range rs {
		r.LogLik += rk.LogLik / m
		r.AIC += rk.AIC / m
		r.BIC += rk.BIC / m
	}
	r.Cutpoints = meanRows([][]float64{first.Cutpoints}, rs, func(x *fit.Result) [][]float64 { return [][]float64{x.Cutpoints} })[0]
	r.Effects = meanRows(first.Effects, rs, func(x *fit.Result) [][]float64 { return x.Effects })
	r.Phi = meanRows(first.Phi, rs, func(x *fit.Result) [][]float64 { return x.Phi })
	if err := poolNegatives(&r, data); err != nil {
		return nil, nil, err
	}
	r.Collinear = poolCollinear(rs)
	r.CheckScale()
	return &r, pl, nil
}

// poolCollinear is the near-collinearity of a pooled fit: a term is
// flagged when any imputed set's fit flags it, with the largest variance
// inflation over those sets and the sets (numbered from 1) that flag it,
// in the order first met (set 1's terms first).
func poolCollinear(rs []*fit.Result) []fit.Inflation {
	var out []fit.Inflation
	at := map[string]int{}
	for k, r := range rs {
		for _, v := range r.Collinear {
			i, ok := at[v.Term]
			if !ok {
				i = len(out)
				at[v.Term] = i
				out = append(out, fit.Inflation{Term: v.Term, Parameters: v.Parameters})
			}
			out[i].Factor = math.Max(out[i].Factor, v.Factor)
			out[i].Sets = append(out[i].Sets, k+1)
		}
	}
	if len(rs) < 2 {
		for i := range out {
			out[i].Sets = nil
		}
	}
	return out
}

// poolNegatives sets the pooled fit r's count of rows with a negative
// predicted category probability, its smallest fitted probability and its
// status from the pooled estimates on the rows of each imputed set: the
// count is that of the set with the most such rows (named in the
// message), the smallest probability the smallest over the sets. Set 1's
// own count, which r carries until here, describes set 1's estimates.
func poolNegatives(r *fit.Result, data []*fit.Data) error {
	if len(data) == 0 {
		return nil
	}
	wasNegative := r.Status == fit.StatusNegativeProbs
	r.NegativeRows, r.MinFittedProb = 0, math.Inf(1)
	worst := 0
	for k, d := range data {
		neg, minP, err := fit.PartitionDiagnostics(d, r.Model, r.Estimates)
		if err != nil {
			return err
		}
		r.MinFittedProb = math.Min(r.MinFittedProb, minP)
		if neg > r.NegativeRows || k == 0 {
			r.NegativeRows, r.NRows, worst = neg, d.N(), k
		}
	}
	switch {
	case r.NegativeRows > 0:
		r.Status = fit.StatusNegativeProbs
		r.Message = fmt.Sprintf("%d of %d rows have a negative predicted category probability (crossing cumulative probabilities) under the pooled estimates, in imputed set %d (the set with the most such rows)", r.NegativeRows, r.NRows, worst+1)
	case wasNegative:
		r.Status, r.Message = fit.StatusOK, ""
	}
	return nil
}

// meanRows averages a derived table (cutpoints, effects, phi) over the sets.
func meanRows(shape [][]float64, rs []*fit.Result, get func(*fit.Result) [][]float64) [][]float64 {
	out := make([][]float64, len(shape))
	for a, row := range shape {
		out[a] = make([]float64, len(row))
	}
	for _, r := range rs {
		v := get(r)
		for a := range out {
			for b := range out[a] {
				out[a][b] += v[a][b] / float64(len(rs))
			}
		}
	}
	return out
}

// pooledTestBlock is testBlock on imputed data: likelihood-ratio tests
// pooled by D3, Wald and Brant tests by D1, score and Wolfe-Gould tests by
// D2 (pooledtests.go); the tests that cannot be computed (sampling
// weights, Brant outside the cumulative logit model) are barred as on one
// data set (barredTest).
func pooledTestBlock(an *Analysis, or *OutcomeResult, perSet [][]*FitEntry, approach fit.Comparison, link fit.Link) *TestBlock {
	fopt := an.Fit
	sw := an.Errors.Sampling
	lr := func(r, f *FitEntry) fit.Test { return pooledLR(or, perSet, r, f) }
	if tb := oneBoundaryTests(an, or, approach, link); tb != nil {
		tb.Nested = or.nestedTests(approach, link, nestedLR(sw, lr))
		return tb
	}
	tb := &TestBlock{Approach: approach, Link: link}
	cell := func(s fit.Structure) *FitEntry { return or.Cell(approach, s, link) }
	par, np := cell(fit.ParallelEffects), cell(fit.NonparallelEffects)
	score := func(cols []string) fit.Test {
		if par == nil {
			return missingTest(fit.TestScore, "the parallel model was not fitted")
		}
		spec := par.Spec
		spec.Nonparallel = cols
		m, err := spec.Model()
		if err != nil {
			return missingTest(fit.TestScore, err.Error())
		}
		return pooledScore(or, par, m)
	}
	cumLogit := approach == fit.Cumulative && link == fit.Logit
	for _, kind := range an.Tests.ParallelLines {
		if t, barred := barredTest(sw, kind, cumLogit); barred {
			tb.Global = append(tb.Global, t)
			continue
		}
		switch kind {
		case fit.TestLR:
			tb.Global = append(tb.Global, lr(par, np))
		case fit.TestWald:
			tb.Global = append(tb.Global, pooledEqualSlopes(np, allColumns(or.Terms)))
		case fit.TestScore:
			tb.Global = append(tb.Global, score(allColumns(or.Terms)))
		case fit.TestBrant:
			tb.Global = append(tb.Global, or.pooledBrant(fopt).test(allColumns(or.Terms)))
		case fit.TestWolfeGould:
			tb.Global = append(tb.Global, pooledWolfeGould(or, fopt))
		}
	}
	for _, term := range or.Terms {
		vt := VarTests{Predictor: term.Name}
		for _, kind := range an.Tests.ParallelLines {
			if _, barred := barredTest(sw, kind, cumLogit); barred {
				continue
			}
			switch kind {
			case fit.TestBrant:
				vt.Tests = append(vt.Tests, or.pooledBrant(fopt).test(term.Columns))
			case fit.TestScore:
				vt.Tests = append(vt.Tests, score(term.Columns))
			case fit.TestWald:
				vt.Tests = append(vt.Tests, pooledEqualSlopes(np, term.Columns))
			case fit.TestLR:
				vt.Tests = append(vt.Tests, lr(or.termRestricted(approach, term, link), np))
			}
		}
		if len(vt.Tests) > 0 {
			tb.PerVariable = append(tb.PerVariable, vt)
		}
	}
	tb.Nested = or.nestedTests(approach, link, nestedLR(sw, lr))
	return tb
}

// pooledTIC is TIC on imputed data: each set's fit with that set's rows,
// the value and the penalty averaged over the sets, as AIC and BIC are.
func pooledTIC(or *OutcomeResult, f *FitEntry, sampling bool) (value, penalty float64, err error) {
	run := or.Imputed
	i := slices.Index(or.Fits, f)
	if i < 0 || len(run.Fits) != len(run.Sets) {
		return 0, 0, fmt.Errorf("%s was not fitted on every imputed set", f.ID)
	}
	for k, d := range run.Sets {
		v, pen, err := fit.TIC(d, run.Fits[k][i].Result, sampling)
		if err != nil {
			return 0, 0, fmt.Errorf("imputed set %d: %w", k+1, err)
		}
		value += v / float64(len(run.Sets))
		penalty += pen / float64(len(run.Sets))
	}
	return value, penalty, nil
}

// pooledLR is the D3 test of restricted within full: the likelihood-ratio
// statistics of each set at the set's own estimates and at the pooled ones.
func pooledLR(or *OutcomeResult, perSet [][]*FitEntry, r, f *FitEntry) fit.Test {
	if r == nil || f == nil {
		return missingTest(fit.TestLR, "a model was not fitted")
	}
	ri, fi := slices.Index(or.Fits, r), slices.Index(or.Fits, f)
	if !r.OK() || !f.OK() || r.Pooled == nil || f.Pooled == nil {
		return missingTest(fit.TestLR, "a model has no usable fit in every imputed set")
	}
	rs, fs := make([]*fit.Result, len(perSet)), make([]*fit.Result, len(perSet))
	for s := range perSet {
		rs[s], fs[s] = perSet[s][ri].Result, perSet[s][fi].Result
	}
	return pooledLROf(or.Imputed.Sets, or.Imputed.Sets, r.Result, f.Result, rs, fs, 0)
}

// setLR is the likelihood-ratio statistic of r within f on imputed set s
// (0-based), or why it has none: clearly negative (fit.LRStatistic), which
// D3 would otherwise pool as if it were a statistic.
func setLR(s int, r, f *fit.Result) (float64, string) {
	x, ok := fit.LRStatistic(r.LogLik, f.LogLik)
	if !ok {
		return x, fmt.Sprintf("in imputed set %d %s", s+1, fit.NegativeLR(x, r.LogLik, f.LogLik, r.Name, f.Name))
	}
	return x, ""
}

// negativeTest is a pooled likelihood-ratio test of r within f with no
// p-value for a statistic below zero (fit.Test.Negative), why saying
// which.
func negativeTest(why string, r, f *fit.Result) fit.Test {
	t := missingTest(fit.TestLR, why)
	t.Negative, t.P = true, math.NaN()
	t.LLRestricted, t.LLFull = r.LogLik, f.LogLik
	return t
}

// negativeAtPooled says why D3 has no p-value when the likelihood-ratio
// statistics at the pooled estimates (at) average clearly below zero
// (beyond tol, the largest tolerance of the sets' own statistics): the
// pooled estimates of the larger model fit the sets worse than the
// smaller model's, and an F statistic below zero would read as p = 1.
// "" when they do not.
func negativeAtPooled(at []float64, tol float64, larger, smaller string) string {
	mean := 0.0
	for _, x := range at {
		mean += x / float64(len(at))
	}
	if mean >= -tol {
		return ""
	}
	return fmt.Sprintf("the likelihood-ratio statistics at the pooled estimates average %s, below zero by more than the fits' convergence tolerance allows (%.2g): the %s model's pooled estimates fit the imputed sets worse than the %s model's; no p-value",
		strconv.FormatFloat(mean, 'g', 6, 64), tol, larger, smaller)
}

// pooledLROf is the D3 test of the pooled fit r within the pooled fit f,
// with their fits rs and fs on each of the imputed sets: f's input on
// set k is sets[k], r's rsets[k] (the same, or the same rows without
// columns r has not); referred to df numerator degrees of freedom
// (impute.FTest.Referred; 0: its own, the difference in parameters).
func pooledLROf(sets, rsets []*fit.Data, r, f *fit.Result, rs, fs []*fit.Result, df int) fit.Test {
	k := f.NParams - r.NParams
	if k <= 0 {
		return missingTest(fit.TestLR, fmt.Sprintf("%s does not have more parameters than %s", f.Name, r.Name))
	}
	own, at := make([]float64, len(sets)), make([]float64, len(sets))
	tol := 0.0
	for s, d := range sets {
		var why string
		if own[s], why = setLR(s, rs[s], fs[s]); why != "" {
			return negativeTest(why, r, f)
		}
		tol = max(tol, fit.LRTolerance(rs[s].LogLik, fs[s].LogLik))
		lf, err := fit.PartitionSums(d, f.Model, f.Estimates, 0)
		if err != nil || lf.Bad {
			return missingTest(fit.TestLR, fmt.Sprintf("the full model cannot be evaluated at its pooled estimates in imputed set %d", s+1))
		}
		lr, err := fit.PartitionSums(rsets[s], r.Model, r.Estimates, 0)
		if err != nil || lr.Bad {
			return missingTest(fit.TestLR, fmt.Sprintf("the restricted model cannot be evaluated at its pooled estimates in imputed set %d", s+1))
		}
		at[s] = 2 * (lf.LogLik - lr.LogLik)
	}
	if why := negativeAtPooled(at, tol, "larger", "smaller"); why != "" {
		return negativeTest(why, r, f)
	}
	t, err := impute.D3(own, at, k)
	if err != nil {
		return missingTest(fit.TestLR, err.Error())
	}
	return fTest(fit.TestLR, t.Referred(df), r.LogLik, f.LogLik)
}

// pooledEqualSlopes is the D1 test that the named columns' slopes are
// equal at every boundary in the pooled nonparallel model.
func pooledEqualSlopes(np *FitEntry, cols []string) fit.Test {
	if !np.OK() || np.Pooled == nil {
		return missingTest(fit.TestWald, "the nonparallel model has no usable fit in every imputed set")
	}
	return pooledEqualSlopesOf(np.Result, np.Pooled, cols)
}

// pooledEqualSlopesOf is the D1 test that the named columns' slopes are
// equal at every boundary in the pooled fit res with Rubin's rules pl.
func pooledEqualSlopesOf(res *fit.Result, pl *impute.Pooled, cols []string) fit.Test {
	P := len(res.Estimates)
	var rows [][]float64
	for _, c := range cols {
		first := slices.Index(res.ParamNames, c+"[1]")
		if first < 0 {
			return missingTest(fit.TestWald, c+" is not a nonparallel predictor of "+res.Name)
		}
		for m := 0; m+1 < res.J-1; m++ {
			row := make([]float64, P)
			row[first+m], row[first+m+1] = 1, -1
			rows = append(rows, row)
		}
	}
	return pooledWald(res, pl, rows, nil)
}

// pooledWald is the D1 test of rows theta = c0 (nil: zeros) in the pooled
// fit res with Rubin's rules pl, refused as a Wald test of one data set is
// when the pooled covariance of the restrictions does not have full rank
// or, under cluster-robust errors, when there are more restrictions than
// the clusters less one (fit.Result.WaldDefined).
func pooledWald(res *fit.Result, pl *impute.Pooled, rows [][]float64, c0 []float64) fit.Test {
	return pooledWaldOn(res, pl, rows, c0, len(rows))
}

// pooledWaldOn is pooledWald referred to df numerator degrees of freedom
// (impute.FTest.Referred; len(rows): its own).
func pooledWaldOn(res *fit.Result, pl *impute.Pooled, rows [][]float64, c0 []float64, df int) fit.Test {
	if err := res.WaldDefined(rows); err != nil {
		return missingTest(fit.TestWald, err.Error())
	}
	var C []float64
	for _, row := range rows {
		C = append(C, row...)
	}
	t, err := impute.D1(pl, C, c0)
	if err != nil {
		return missingTest(fit.TestWald, err.Error())
	}
	return fTest(fit.TestWald, t.Referred(df), math.NaN(), math.NaN())
}

// fTest records a pooled F test in the test record: F the statistic,
// Reference its distribution F(DF, DF2), and Chi2 DF x F (what a reader
// of the record that takes it for a chi-square would compare).
func fTest(kind fit.TestKind, t impute.FTest, llr, llf float64) fit.Test {
	out := fit.Test{Name: kind.String(), OK: true, Chi2: t.F * float64(t.DF1), DF: t.DF1, P: t.P, Pooled: t.Method, DF2: t.DF2, Warning: t.Warnings, F: t.F}
	if !math.IsNaN(llr) {
		out.LLRestricted, out.LLFull = llr, llf
	}
	if math.IsInf(out.DF2, 1) {
		out.DF2 = 0 // infinite: the F statistic is a chi-square over DF
	}
	out.Reference = "F(" + strconv.Itoa(out.DF) + ", " + pooledDF2(out) + ")"
	return out
}

// pooledDF2 writes a pooled test's denominator degrees of freedom to one
// decimal, "inf" when infinite.
func pooledDF2(t fit.Test) string {
	if t.DF2 > 0 {
		return numfmt.Fixed(t.DF2, 1)
	}
	return "inf"
}

// FStatistic writes a test pooled over imputed sets as its F statistic on
// both degrees of freedom, "F(2, 15.2) = 2.107", the one form of a pooled
// test's statistic in sentences and tables.
func FStatistic(t fit.Test) string {
	return fmt.Sprintf("F(%d, %s) = %s", t.DF, pooledDF2(t), numfmt.Stat(t.Chi2/float64(t.DF)))
}

// runImputedOutcome analyses one outcome on multiply imputed data: the
// grid is fitted on every imputed set and pooled, the tests are pooled
// (D3, D1), and the rules run on the pooled fits.
func runImputedOutcome(an *Analysis, r Reading, oc plan.Outcome, opt Options) (*OutcomeResult, error) {
	run, sets, dz, ds, err := an.imputedOutcome(r, opt)
	if err != nil {
		return nil, err
	}
	or := &OutcomeResult{Outcome: oc, Data: ds, Observed: run.observed, FitData: run.Sets[0], Design: dz, Terms: termsOf(dz), dataOptions: r.Options, Imputed: run}
	or.Notes = append(append(or.Notes, ds.Notes...), dz.Notes...)
	if w := an.FewClusters(r, ds); w != "" {
		or.Notes = append(or.Notes, w)
	}
	if w := an.StabilityLevels(r, ds); w != "" && !opt.NoStability {
		or.Notes = append(or.Notes, w)
	}
	if run.Chained != nil {
		for _, n := range run.Chained.Notes {
			or.Notes = append(or.Notes, "Imputation: "+n)
		}
	}
	if err := decideImputed(an, r, or, sets, opt, true); err != nil {
		return nil, err
	}
	if w := an.FewRowLevels(r, dz, or.levelRows(), or.Fits); w != "" {
		or.Notes = append(or.Notes, w)
	}
	runPooledFitStats(an, or)
	runPooledGoodnessOfFit(an, or)
	if !opt.NoTermTests {
		runPooledTermTests(an, or, opt)
	}
	for _, h := range an.Inference.Hypotheses {
		or.Hypotheses = append(or.Hypotheses, hypothesisTests(h, or, an.Level)...)
	}
	if err := runPooledInference(an, or); err != nil {
		return nil, err
	}
	or.Notes = append(or.Notes, imputedNotes(run.M, an.Errors.Sampling)...)
	if an.Errors.Covariance == fit.Clustered {
		or.Notes = append(or.Notes, ImputedClusterNote)
	}
	return or, nil
}

// imputedOutcome reads outcome r's imputed sets as run analyses them,
// and refuses what run refuses before any fit: the sets imputed by the
// program (data.missing: impute; chainedSets) or read from data.imputed
// (imputedSets, checked against the data file's observed values:
// matchObserved), their design frozen on the first set, the first set's
// rows with their clusters (ds, Analysis.Clusters), and the numeric
// column of report.panels_by on the data as read (checkPanels). run and
// check take it alike, so check judges the rows run fits, not the data
// file's complete rows.
func (an *Analysis) imputedOutcome(r Reading, opt Options) (run *ImputedRun, sets []*data.Dataset, dz *design.Design, ds *data.Dataset, err error) {
	if an.Imputes() {
		// The sets keep the original data's missing-value table.
		run, sets, dz, err = chainedSets(an, r, opt)
	} else {
		run, sets, dz, err = imputedSets(an, r)
	}
	if err != nil {
		return nil, nil, nil, nil, err
	}
	if !dz.Trivial() {
		run.design = dz.Freeze(r.Design)
	}
	run.obs = completeObs(run.Sets[0], an.Errors.Sampling)
	first := *sets[0]
	ds = &first
	if err := an.Clusters(r, ds); err != nil {
		return nil, nil, nil, nil, err
	}
	if !an.Imputes() {
		// The original file: its missing values and observed values are
		// described in the report.
		dopt := r.Options
		dopt.Refuse, dopt.KeepIncomplete = false, true
		orig, err := data.LoadFiles(an.Paths(), dopt)
		if err != nil {
			return nil, nil, nil, nil, fmt.Errorf("%s (plan %s, outcome %q%s)", err, an.Source, r.Outcome, r.keyOf(err))
		}
		if err := run.matchObserved(an.Source, orig, an.DataFile, dopt.Cluster, dopt.PredictorLevels); err != nil {
			return nil, nil, nil, nil, err
		}
		ds.Missing, run.observed = orig.Missing, orig
	}
	if run.observed != nil && an.DataFile != "" {
		// The original data as the plan names it (the report names it),
		// not as the path from where the command runs.
		o := *run.observed
		o.File = an.DataFile
		run.observed = &o
	}
	asRead := ds
	if run.observed != nil {
		asRead = run.observed
	}
	if err := an.checkPanels(r, asRead, dz); err != nil {
		return nil, nil, nil, nil, err
	}
	return run, sets, dz, ds, nil
}

// decideImputed is the decision procedure on imputed sets (or.Imputed,
// sets their data): the partial sets (stepwise on pooled fits), the grid
// fitted on every set and pooled, the pooled tests and the rules, in
// order. The resamples of selection_stability on data the program
// imputes take this same path (primary false); the primary sets are
// first refused when no candidate can be fitted on them
// (someCandidateFits), as the data of a run without imputation are
// (CheckDesign), and a resample's are not.
func decideImputed(an *Analysis, r Reading, or *OutcomeResult, sets []*data.Dataset, opt Options, primary bool) error {
	run, dz, ds := or.Imputed, or.Design, or.Data
	first := ds
	if !primary {
		first = nil
	}
	if err := an.checkImputedDesign(r, dz, first, run.Sets); err != nil {
		return err
	}
	backward := an.Models.Backward()
	or.FreeSets, or.Stepwise = freeSets(an, or.Terms, pooledStepwise(an, or), backward, opt.Workers)
	jobs, notes := gridJobs(an, or.Terms, or.FreeSets, backward)
	or.Notes = append(or.Notes, notes...)
	perSet, err := poolJobs(an, sets, or.Terms, jobs, run, opt, or.Outcome.Column)
	if err != nil {
		return err
	}
	or.Fits = jobs
	run.Fits = perSet
	if w := an.SingularModels(r, ds, jobs, len(ds.Categories), allColumns(or.Terms)); w != "" {
		or.Notes = append(or.Notes, w)
	}
	for _, a := range an.Models.Approaches {
		for _, l := range an.Models.Links {
			or.Tests = append(or.Tests, pooledTestBlock(an, or, perSet, a, l))
		}
	}
	applyRules(an, or)
	return nil
}

// checkImputedDesign checks the fit input of imputed sets (fits, their
// data; ds the first set's rows) before any model is fitted, as
// CheckDesign checks one data set's: a constant or collinear term in a
// set, no candidate that can be fitted on every set (someCandidateFits;
// not for a resample, ds nil), a grid level no row used has. run and
// check take it alike.
func (an *Analysis) checkImputedDesign(r Reading, dz *design.Design, ds *data.Dataset, fits []*fit.Data) error {
	for k, d := range fits {
		if err := fit.CheckDesign(d); err != nil {
			if _, _, ok := r.collinearTerms(err, dz, an.Source, nil); ok {
				return an.designError(r, dz, "", err, fmt.Sprintf("imputed set %d", k+1))
			}
			return fmt.Errorf("%s: outcome %q, imputed set %d: %v", an.Source, r.Outcome, k+1, err)
		}
	}
	if ds != nil {
		if err := an.someCandidateFits(dz, fits...); err != nil {
			return an.designError(r, dz, ds.FewRowsSentence(), err, "")
		}
	}
	return an.checkGridLevels(r, dz)
}

// ImputedClusterNote says which references the clustered errors take on
// imputed data: those of a cluster-robust covariance of one data set
// (fit.Result.waldTest) as the complete-data analysis that Rubin's rules
// adjust (completeDF, impute.D1).
const ImputedClusterNote = "With clustered errors on imputed data, the complete-data analysis whose references Rubin's rules adjust is the cluster-robust one: the Barnard-Rubin degrees of freedom of the pooled estimates, intervals, hypotheses of one restriction, marginal effects, level pairs and predictions are those for G-1 complete-data degrees of freedom (G the clusters, the same in every imputed set), and a pooled Wald test (D1) of q restrictions is multiplied by (G-q)/(G-1) and referred to F(q, v), v the small-sample denominator for G-q complete-data degrees of freedom, as F(q, G-q) on one data set. Likelihood-ratio tests (D3) take every observation as independent, as on one data set. With few clusters the pooled tests inherit the cluster-robust covariance's tendency to reject a true hypothesis too often"

// imputedNotes are the notes of an outcome analysed on m imputed sets.
// Under sampling weights no likelihood-based statistic is a test, so
// nothing is said to be pooled by D3 or D2 and the criteria are
// descriptive.
func imputedNotes(m int, sampling bool) []string {
	if sampling {
		return []string{fmt.Sprintf("Analysed on %d imputed data sets, pooled by Rubin's rules; log-likelihoods, AIC and BIC are means over the sets (descriptive only: under sampling weights the log-likelihood is a pseudo-likelihood); the plan's hypotheses are pooled Wald tests (D1); marginal effects and predictions are computed on each set and pooled by Rubin's rules", m),
			"Tests on imputed data under sampling weights: " + SamplingPoolingText() + "; LL0 and the pseudo-R2 measures are means over the sets"}
	}
	return []string{fmt.Sprintf("Analysed on %d imputed data sets, pooled by Rubin's rules; log-likelihoods, AIC and BIC are means over the sets, and rules on AIC or BIC compare those means; the plan's hypotheses are pooled Wald tests (D1); marginal effects and predictions are computed on each set and pooled by Rubin's rules", m),
		"Overall fit on imputed data: the likelihood-ratio test against the thresholds-only model is pooled by D3, and LL0 and the pseudo-R2 measures are means over the sets; the goodness-of-fit tests of the chosen model (Lipsitz, Pulkstenis-Robinson) are computed on each set and pooled by D2, which is approximate"}
}

// TestStatistic writes a test's statistic for a sentence: "chi2(2) =
// 3.210", for a test pooled over imputed sets "F(2, 31.4) = 1.605
// (pooled, D3)", for a Wald test on a cluster-robust covariance "F(2, 8) =
// 1.427 (Wald 3.210 times (G-q)/((G-1) q), G = 10 clusters)".
func TestStatistic(t fit.Test) string {
	if t.FRef {
		return t.FRefStatistic()
	}
	if t.Pooled == "" {
		return fmt.Sprintf("chi2(%d) = %s", t.DF, numfmt.Stat(t.Chi2))
	}
	return FStatistic(t) + " (pooled, " + t.Pooled + ")"
}

// pinImputed pins the imputed data files for the run (every reader parses
// the bytes whose hashes run.json records) and returns their references.
func pinImputed(a *Analysis) ([]DataRef, func(), error) {
	im := a.Imputed
	if im == nil {
		return nil, func() {}, nil
	}
	files, paths, key := im.Files, im.Paths, "data.imputed.files"
	if files == nil {
		files, paths, key = []string{im.File}, []string{im.Path}, "data.imputed.file"
	}
	refs, release, _, err := pinFiles(files, paths)
	if err != nil {
		return nil, func() {}, fmt.Errorf("%s: %s: %v", a.Source, key, err)
	}
	return refs, release, nil
}

// ImputedCopy is an imputed file (data.imputed.files) holding the same
// bytes as an earlier set: sets drawn apart coincide only where few
// values are missing, and a set copied twice understates the variance
// between the sets.
type ImputedCopy struct {
	Earlier, Set int // 1-based numbers of the sets
	EarlierFile  string
	File         string
	SHA256       string
}

// FindImputedCopies finds the imputed files (their references with hashes
// as run.json records them) that hold the same bytes as an earlier set:
// one for each such set, naming the earlier one.
func FindImputedCopies(refs []DataRef) []ImputedCopy {
	var out []ImputedCopy
	for j, r := range refs {
		if i := slices.IndexFunc(refs[:j], func(e DataRef) bool { return e.SHA256 == r.SHA256 }); i >= 0 {
			out = append(out, ImputedCopy{Earlier: i + 1, Set: j + 1, EarlierFile: refs[i].File, File: r.File, SHA256: r.SHA256})
		}
	}
	return out
}

// Note says what c means, the files' names written by name (as they are
// in plain text; escaped for the report).
func (c ImputedCopy) Note(name func(string) string) string {
	return fmt.Sprintf("Imputed sets %d and %d (%s and %s) hold the same bytes (sha256 %s): sets drawn apart coincide only where few values are missing; if one is a copy of the other, the variance between the imputed sets, and with it every pooled interval and test, is understated: give each set its own draws", c.Earlier, c.Set, name(c.EarlierFile), name(c.File), c.SHA256)
}

// ImputedCopies are the warnings, in plain text, of the imputed files
// that hold the same bytes as an earlier set (FindImputedCopies).
func ImputedCopies(refs []DataRef) []string {
	return words.Each(FindImputedCopies(refs), func(c ImputedCopy) string { return c.Note(PlainText) })
}

// PlainText writes a name as it is: the words of stderr and
// decisions.json (the report escapes names for Markdown instead).
func PlainText(s string) string { return s }

// pooledLinear is the D1 test of a linear hypothesis in a pooled fit.
// pooledContrasts estimates each restriction of hy on the pooled fit by
// Rubin's rules, with t intervals on the Barnard-Rubin degrees of freedom.
func pooledContrasts(f *FitEntry, hy *fit.Hypothesis, level float64) []fit.Contrast {
	out := make([]fit.Contrast, len(hy.R))
	for i, row := range hy.R {
		s := f.Pooled.Linear(row, hy.C[i])
		q := fit.TQuantile(0.5+level/2, s.DF)
		out[i] = fit.Contrast{Text: fit.ContrastText(row, hy.C[i], f.Result.ParamNames), Estimate: s.Estimate, SE: s.SE,
			Low: s.Estimate - q*s.SE, High: s.Estimate + q*s.SE}
		if !math.IsInf(s.DF, 1) {
			df := s.DF
			out[i].DF = &df
		}
	}
	return out
}

func pooledLinear(f *FitEntry, hy *fit.Hypothesis) fit.Test {
	return pooledWald(f.Result, f.Pooled, hy.R, hy.C)
}

// matchObserved checks that every imputed set was made from the original
// data orig (its incomplete rows kept): the same rows, in order, and in
// each row every value orig observes (the outcome and the raw columns
// the terms read) the same in the set, and the same cluster id
// (clusterColumn; every row orig keeps has one, as clusters are never
// imputed), numbers within 1e-9 relative (the
// digits another program may write). Imputed sets made from another
// version of the data file (rows added since, a value corrected) would
// otherwise be analysed while the report describes the file.
func (run *ImputedRun) matchObserved(src string, orig *data.Dataset, file, clusterColumn string, levels map[string][]string) error {
	value := func(col string, v float64) string {
		if lv, ok := levels[col]; ok && v >= 0 && v == math.Trunc(v) && int(v) < len(lv) {
			return strconv.Quote(lv[int(v)])
		}
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	redo := "an imputed set must keep every observed value of the data file: make the imputed sets again from " + file + ", or point data.file at the data they were made from"
	for k, ds := range run.Data {
		if ds.N != orig.N && run.membership != nil {
			if err := run.membership(orig); err != nil {
				return err
			}
		}
		if ds.N != orig.N {
			return fmt.Errorf("%s: data.imputed: imputed set %d, %s, has %d rows but the data file %s has %d (each after the plan's subset); imputed sets hold the rows of the data they were made from: make them again from %s, or point data.file at the data they were made from", src, k+1, run.names[k], ds.N, file, orig.N, file)
		}
		if !slices.Equal(ds.Predictors, orig.Predictors) || ds.K != orig.K {
			return fmt.Errorf("%s: data.imputed: imputed set %d, %s, reads the columns %s but the data file %s reads %s", src, k+1, run.names[k], strings.Join(ds.Predictors, ", "), file, strings.Join(orig.Predictors, ", "))
		}
		for i := 0; i < orig.N; i++ {
			where := func(col, got, want string) error {
				return fmt.Errorf("%s: data.imputed: imputed set %d, %s, line %d: column %q is %s where the data file %s, line %d, has the observed value %s; %s", src, k+1, run.names[k], ds.Lines[i], col, got, file, orig.Lines[i], want, redo)
			}
			if y := orig.Y[i]; y >= 0 && ds.Y[i] != y {
				return where(orig.Outcome, strconv.Quote(ds.Categories[ds.Y[i]]), strconv.Quote(orig.Categories[y]))
			}
			if orig.Cluster != nil && ds.Cluster[i] != orig.Cluster[i] {
				return fmt.Errorf("%s: data.imputed: imputed set %d, %s, line %d: the cluster column %q (data.cluster) is %s where the data file %s, line %d, has %s; %s: %s", src, k+1, run.names[k], ds.Lines[i], clusterColumn, strconv.Quote(ds.Cluster[i]), file, orig.Lines[i], strconv.Quote(orig.Cluster[i]), sameClusters, redo)
			}
			for j := 0; j < orig.K; j++ {
				v, w := orig.X[i*orig.K+j], ds.X[i*orig.K+j]
				if !math.IsNaN(v) && !(math.Abs(w-v) <= 1e-9*math.Max(1, math.Abs(v))) {
					return where(orig.Predictors[j], value(orig.Predictors[j], w), value(orig.Predictors[j], v))
				}
			}
		}
	}
	return nil
}

// subsetMembership explains imputed sets (data.imputed) that keep other
// rows under the plan's subset than each other, or than the data file,
// because a subset condition reads a column the sets impute: a row whose
// value the data file misses is inside the subset in a set that imputes
// it above the limit and outside in another. Pooling needs the same rows
// in every set, and the data file cannot say whether such a row belongs
// (D30), so the subset must be applied to observed values before
// imputing, as data.missing: impute does (D32). It names the condition,
// its column and the first row that differs, with its line in the sets
// and in the data file. orig is the data file read under the subset
// (nil: compare the sets only); nil is returned when the rows differ
// otherwise, for the caller's own message.
func subsetMembership(a *Analysis, r Reading, sources []setSource, paths []string, sets []*data.Dataset, orig *data.Dataset) error {
	keep := r.Options.Keep
	if len(keep) == 0 {
		return nil
	}
	// Every row of each set, the subset not applied.
	all := make([][]int, len(sets))
	for k := range sets {
		o := sources[k].options
		o.Keep = o.Keep[len(keep):] // the stacked file's imputation number
		ds, err := data.Load(paths[k], o)
		if err != nil || k > 0 && ds.N != len(all[0]) {
			return nil
		}
		all[k] = ds.Lines
	}
	inside := func(k, j int) bool {
		_, ok := slices.BinarySearch(sets[k].Lines, all[k][j])
		return ok
	}
	// The data file's rows, the subset not applied (its lines, and
	// whether each is kept under the subset).
	var origLines []int
	{
		o := r.Options
		o.Refuse, o.KeepIncomplete, o.Keep = false, true, nil
		d, err := data.LoadFiles(a.Paths(), o)
		if err == nil && d.N == len(all[0]) {
			origLines = d.Lines
		}
	}
	first, other, differ := -1, 0, 0
	for j := range all[0] {
		k := 1
		for k < len(sets) && inside(k, j) == inside(0, j) {
			k++
		}
		origDiffers := false
		if k == len(sets) && orig != nil && origLines != nil {
			_, kept := slices.BinarySearch(orig.Lines, origLines[j])
			origDiffers = kept != inside(0, j)
		}
		if k == len(sets) && !origDiffers {
			continue
		}
		if differ++; first < 0 {
			first, other = j, k
		}
	}
	if first < 0 {
		return nil
	}
	j := first
	cellAt := func(path string, d data.Dialect, column string, line int) string {
		var cell string
		found := errors.New("found")
		_ = data.ColumnCells(path, d, column, func(l int, c string) error {
			if l == line {
				cell = c
				return found
			}
			return nil
		})
		return cell
	}
	dialect := r.Options.Dialect
	// The condition whose column the sets (or the set and the data file)
	// hold differently at that row.
	cond := keep[0]
	var setCell, otherCell, origCell string
	for _, c := range keep {
		setCell = cellAt(paths[0], dialect, c.Column, all[0][j])
		if other < len(sets) {
			otherCell = cellAt(paths[other], dialect, c.Column, all[other][j])
		}
		if origLines != nil {
			origCell = cellAt(a.Paths()[0], dialect, c.Column, origLines[j])
		}
		if other < len(sets) && setCell != otherCell || other == len(sets) && setCell != origCell {
			cond = c
			break
		}
	}
	side := func(in bool) string {
		if in {
			return "inside the subset"
		}
		return "outside the subset"
	}
	where := func(k int) string {
		return fmt.Sprintf("%s line %d", sources[k].name, all[k][j])
	}
	var what string
	if other < len(sets) {
		what = fmt.Sprintf("the row at %s in imputed set 1 has %s %s there, %s, and at %s in imputed set %d it has %s, %s",
			where(0), cond.Column, strconv.Quote(setCell), side(inside(0, j)), where(other), other+1, strconv.Quote(otherCell), side(inside(other, j)))
	} else {
		what = fmt.Sprintf("the row at %s in every imputed set has %s %s there, %s", where(0), cond.Column, strconv.Quote(setCell), side(inside(0, j)))
	}
	if origLines != nil {
		what += fmt.Sprintf("; the data file %s, line %d, has %s there", a.DataFile, origLines[j], strconv.Quote(origCell))
		if other == len(sets) {
			what += ": a missing value leaves the row's membership of the subset unknown, and the data file's rows under the subset leave it out"
		}
	}
	more := ""
	if differ > 1 {
		more = fmt.Sprintf(" (%d rows in all differ so)", differ)
	}
	key := cond.Key
	if key == "" {
		key = "subset"
	}
	return fmt.Errorf("%s: data.imputed: the subset condition %s (%s) reads column %q, which the imputed sets fill in: %s%s. A subset on an imputed column would analyse different people in different sets (and others than the data file's rows under the subset), which pooling cannot combine. Apply the subset to observed values before imputing: leave out the rows outside it, and those whose %s is missing, and make the imputed sets again from the rows that remain (as data.missing: impute does, dropping rows whose membership of the subset is unknown), or subset on a column observed in every row",
		a.Source, cond.String(), key, cond.Column, what, more, cond.Column)
}

// PooledVariances are the within-set, between-set and total variances of
// parameter j of a pooled fit, NaN for a parameter whose pooled standard
// error is not given (fit.NotEstimable under cluster-robust errors).
func PooledVariances(pl *impute.Pooled, j int) (within, between, total float64) {
	if math.IsNaN(pl.SE[j]) {
		return math.NaN(), math.NaN(), math.NaN()
	}
	k := j*pl.P + j
	return pl.Within[k], pl.Between[k], pl.Total[k]
}

// PooledDF is the Barnard-Rubin degrees of freedom of parameter j of a
// pooled fit, NaN for a parameter whose pooled standard error is not given
// (as PooledVariances); the fit's own DF keep the number, which the
// references of combinations that do not load on such parameters read.
func PooledDF(pl *impute.Pooled, j int) float64 {
	if math.IsNaN(pl.SE[j]) {
		return math.NaN()
	}
	return pl.DF[j]
}
