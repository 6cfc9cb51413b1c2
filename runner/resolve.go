package runner

import (
	"errors"
	"fmt"
	"maps"
	"slices"
	"strconv"
	"strings"

	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
	"ordplan/runner/impute/chained"

	"ordplan/internal/words"
)

// Analysis is what running a plan, or `ordplan fit`, needs, resolved once
// from the plan (ResolvePlan) or from the flags (ResolveFit): how to read
// each outcome's data and build its design, the fit options, and the
// covariance policy with its sandwich step. Run, FitOne, CheckData and the
// partitioned fit resolve, then do: they read this value, not the plan.
type Analysis struct {
	// Source names the analysis in messages: the plan file, or for the
	// flags of `ordplan fit` the data file.
	Source   string
	Plan     bool   // resolved from a plan (messages then name plan keys)
	DataFile string // the data file as the plan or the flag names it (for parts: PartsName)
	DataPath string // where the data file is read
	// DataPaths are the files of data held as parts (nil: DataPath), and
	// DataFiles the parts as the plan names them.
	DataPaths, DataFiles []string
	// PlanData are a plan's data (nil: not from a plan), whose PartWhere
	// names a part's entry of data.parts in messages, and FileWhere
	// data.file.
	PlanData *plan.Data
	// Imputed names imputed versions of the data made elsewhere (nil:
	// none); Imputation says how the program imputes the data itself
	// (data.missing: impute; nil otherwise).
	Imputed    *plan.Imputed
	Imputation *plan.Imputation
	// Declared are the numeric columns' range or values the data
	// dictionary declares: when the program imputes (Imputation), the
	// imputed values are counted against them; new rows to predict outside
	// them are flagged (flagNewRows).
	Declared map[string]*chained.Bounds
	Outcomes []Reading
	// Fit are the options of every fit: model-based errors (observed or
	// expected information) and the workers of one fit.
	Fit    fit.Options
	Errors CovariancePolicy

	// What a plan asks beyond fitting (zero for the flags of `ordplan
	// fit`): the grid of models, the parallel-lines tests, the rules in
	// order, the inference section (its new rows read like the data), the
	// confidence level of intervals.
	Models    plan.Models
	Tests     plan.Tests
	Rules     []plan.Rule
	Inference plan.Inference
	// NewRowsDialect is how the new rows of Inference are written: the
	// plan's data's dialect, also when the data read are simulated.
	NewRowsDialect data.Dialect
	Level          float64
	// PanelsBy is report.panels_by: the column whose values (levels, or
	// 0 and 1) give the report's predictions a panel each ("" for none).
	PanelsBy string
	// Stability is the plan's selection_stability (nil: none asked, or the
	// flags of ordplan fit), for the warnings that foresee its resamples
	// (StabilityLevels).
	Stability *plan.SelectionStability
}

// Reading says how to read the data of one outcome and build its design.
type Reading struct {
	Outcome string
	// Key names the outcome in messages ("outcomes: y" in a plan,
	// `outcome "y"` for flags); CategoriesKey is where its categories are
	// declared ("categories", "--categories").
	Key, CategoriesKey string
	Options            data.Options
	Design             design.Spec
	// ColumnKeys names the plan key behind a column the reader may refuse
	// (categorical predictors, subset conditions); nil for flags.
	ColumnKeys map[string]string
	// levelsAt is where the plan declares each categorical column's
	// levels; nil for flags.
	levelsAt map[string]*plan.Error
}

// CovariancePolicy says which standard errors the fits report. Sampling
// weights make the likelihood a pseudo-likelihood and imply a sandwich
// estimate (HC1) unless another sandwich is asked for.
type CovariancePolicy struct {
	Covariance fit.Covariance // what the fits report
	Sampling   bool           // the weights are sampling weights
	// Correction is the few-cluster correction of clustered errors (plan
	// key few_clusters): the delete-one-cluster jackknife with t and F
	// references on G-1 degrees of freedom, or none.
	Correction fit.ClusterCorrection
}

// covariancePolicy resolves the covariance asked for under the weights.
func covariancePolicy(asked fit.Covariance, sampling bool, correction fit.ClusterCorrection) CovariancePolicy {
	if sampling && !asked.IsSandwich() {
		asked = fit.Sandwich
	}
	return CovariancePolicy{Covariance: asked, Sampling: sampling, Correction: correction}
}

// Jackknife reports whether the fits' errors are the delete-one-cluster
// jackknife (clustered errors with few_clusters: jackknife).
func (c CovariancePolicy) Jackknife() bool {
	return c.Covariance == fit.Clustered && c.Correction == fit.Jackknife
}

// Phrase names the standard errors in running prose (a methods paragraph).
// Under clustered errors it names their references with the clusters:
// cluster is the cluster column as the text shows it, g the clusters of
// the rows used (0: not known, the phrase then says G).
func (c CovariancePolicy) Phrase(cluster string, g int) string {
	if c.Jackknife() {
		return "delete-one-cluster jackknife, " + clusterReferencesPhrase(cluster, g)
	}
	if c.Covariance == fit.Clustered {
		return c.Covariance.Phrase() + ", " + clusterReferencesPhrase(cluster, g)
	}
	return c.Covariance.Phrase()
}

// clusterReferencesPhrase names, in running prose, the references of
// every cluster-robust covariance (fit.Result.RefDF, waldTest), with the
// cluster column and its number of clusters G (g; 0 when not known).
func clusterReferencesPhrase(cluster string, g int) string {
	if g <= 0 {
		return fmt.Sprintf("its single estimates referred to t on G-1 degrees of freedom and its joint Wald tests of q restrictions as W (G-q)/((G-1) q) to F(q, G-q) (G the clusters of %s)", cluster)
	}
	return fmt.Sprintf("its single estimates referred to t on G-1 = %d degrees of freedom and its joint Wald tests of q restrictions as W (G-q)/((G-1) q) to F(q, G-q) (G = %d, the clusters of %s)", g-1, g, cluster)
}

// Describe says in one sentence how the standard errors are computed, and
// under clustered errors which references the inference takes.
func (c CovariancePolicy) Describe() string {
	if c.Jackknife() {
		return fit.JackknifeDescribe
	}
	if c.Covariance == fit.Clustered {
		return c.Covariance.Describe() + "; single estimates, intervals and p-values refer to t on G-1 degrees of freedom, " + fit.ClusterJointReference
	}
	return c.Covariance.Describe()
}

// fitOptions are the options of the fits under the policy: a sandwich is
// computed after the fit (Sandwich), from observed-information fits.
func (c CovariancePolicy) fitOptions(workers int) fit.Options {
	o := fit.Options{Covariance: fit.Observed, Workers: workers, Sampling: c.Sampling}
	if c.Covariance == fit.Expected {
		o.Covariance = fit.Expected
	}
	return o
}

// SamplingCriteriaNote is what the report says beside a table or chart of
// AIC and BIC under sampling weights.
const SamplingCriteriaNote = "The weights are sampling weights: the log-likelihoods are of a pseudo-likelihood, so AIC and BIC, here and in the chart, are descriptive only and not criteria for choosing a model; TIC (Takeuchi's criterion, -2 log-likelihood + 2 tr(A^-1 B), its penalty made of the sandwich covariance's two pieces with the weights: A the weighted information, B the outer products of the rows' scores times their squared weights) is the criterion a rule may use."

// Notes are the run-level remarks the policy brings to the report.
func (c CovariancePolicy) Notes() []string {
	out := []string{fmt.Sprintf("Standard errors from the %s.", c.Describe())}
	if c.Jackknife() {
		out = append(out, JackknifeWhy)
	}
	if c.Sampling {
		out = append(out, "The weights are sampling weights, rescaled to sum to the rows used (their scale is arbitrary): the fits maximize a pseudo-likelihood, standard errors are sandwich estimates, AIC/BIC are descriptive only, and "+SamplingTestsText()+" (the plan's test rules use Wald tests, and its choice uses TIC).")
	}
	return out
}

// JackknifeWhy is the run note that says why the delete-one-cluster
// jackknife is used and what its references do.
const JackknifeWhy = "The plan asks for the few-cluster correction (few_clusters: jackknife): with few clusters the cluster-robust sandwich is biased downward, so that its tests reject a true hypothesis too often even on the references it takes (t on G-1 degrees of freedom for a single estimate, F(q, G-q) for a joint Wald test of q restrictions, G the clusters of the rows used); the delete-one-cluster jackknife is larger and errs less, and on the same references its rejection rates come near the nominal level (docs/models.md gives the rates measured). The likelihood-ratio, score, Brant and Wolfe-Gould tests and the information criteria are not corrected."

// Sandwich returns the step that replaces a usable fit's covariance by the
// sandwich estimate on the data it was fitted to (or, under the
// few-cluster correction, by the delete-one-cluster jackknife, whose
// refits take the options of the grid's fits), or nil when the policy
// uses model-based errors: the one place that decides a fit's covariance
// after its fit.
func (c CovariancePolicy) Sandwich(ds *data.Dataset, d *fit.Data) func(*fit.Result) error {
	if !c.Covariance.IsSandwich() {
		return nil
	}
	var clusters []string
	if c.Covariance == fit.Clustered {
		clusters = ds.Cluster
	}
	cov, sampling := c.Covariance, c.Sampling
	if c.Jackknife() {
		opt := c.fitOptions(1)
		return func(r *fit.Result) error {
			V, info, err := fit.ClusterJackknife(d, r, clusters, opt)
			if err != nil {
				return fmt.Errorf("%s: jackknife covariance: %w", r.Name, err)
			}
			r.UseCovariance(V, info)
			return nil
		}
	}
	return func(r *fit.Result) error {
		V, info, err := fit.SandwichEstimate(d, r, cov, clusters, sampling)
		if err != nil {
			return fmt.Errorf("%s: sandwich covariance: %w", r.Name, err)
		}
		r.UseCovariance(V, info)
		return nil
	}
}

// Settle is the step a usable fit of an outcome takes once fitted, in
// every path that fits a plan's grid or the model of `ordplan fit`: the
// check for near-collinearity of the outcome's terms on the model-based
// covariance (fit.Result.CheckCollinearity), then the policy's sandwich,
// if any (Sandwich).
func (c CovariancePolicy) Settle(ds *data.Dataset, d *fit.Data, terms []fit.Term) func(*fit.Result) error {
	sw := c.Sandwich(ds, d)
	return func(r *fit.Result) error {
		r.CheckCollinearity(terms)
		if sw == nil {
			return nil
		}
		return sw(r)
	}
}

// declaredBounds are the ranges and values the data dictionary declares
// for numeric columns (nil when it declares none).
func declaredBounds(dict []plan.Entry) map[string]*chained.Bounds {
	var out map[string]*chained.Bounds
	for _, e := range dict {
		if e.Range == nil && e.Values == nil {
			continue
		}
		b := &chained.Bounds{Key: e.Key, Range: e.Range}
		for _, v := range e.Values {
			if x, err := strconv.ParseFloat(v, 64); err == nil {
				b.Values = append(b.Values, x)
			}
		}
		if out == nil {
			out = map[string]*chained.Bounds{}
		}
		out[e.Column] = b
	}
	return out
}

// ResolvePlan resolves a validated plan.
func ResolvePlan(p *plan.Plan) *Analysis {
	a := &Analysis{Source: p.Path, Plan: true, DataFile: p.Data.Name(), DataPath: p.Data.Path,
		Errors: covariancePolicy(p.Covariance, p.Data.Sampling(), p.FewClusters),
		Models: p.Models, Tests: p.Tests, Rules: p.Rules, Inference: p.Inference, NewRowsDialect: p.Data.NewRowsDialect(), Level: p.Report.ConfidenceLevel,
		PanelsBy: p.Report.PanelsBy, Stability: p.SelectionStability, PlanData: &p.Data}
	if p.Data.Parts != nil {
		a.DataPaths, a.DataFiles = p.Data.PartPaths, p.Data.PartFiles
	}
	a.Imputed = p.Data.Imputed
	a.Declared = declaredBounds(p.Dictionary)
	if p.Data.Imputes() {
		a.Imputation = p.Data.Imputation
	}
	a.Fit = a.Errors.fitOptions(1) // the grid runs its fits in parallel
	a.Fit.KeepStarts = p.Models.RunEveryStart
	for i, oc := range p.Outcomes {
		spec := p.DesignSpec(oc)
		dopt := data.Options{
			Outcome: oc.Column, Categories: oc.Categories,
			Weights: p.Data.Weights, Sampling: p.Data.Sampling(), Offset: p.Data.Offset, Cluster: p.Data.Cluster,
			Refuse: p.Data.Missing == "refuse", MissingTokens: p.Data.MissingValues,
			Keep: p.Subset, ColumnMissing: columnMissing(p), Dialect: p.Data.Dialect(),
		}
		r := Reading{Outcome: oc.Column, Key: "outcomes: " + oc.Column, CategoriesKey: "categories",
			Options: readSources(dopt, spec), Design: spec}
		r.Options.Entries = predictorEntries(p.Path, spec)
		// A value of the outcome that is not a category (or, without
		// categories, not an integer code) is fixed in its categories.
		r.setKey(oc.Column, fmt.Sprintf("outcomes[%d].categories", i))
		for _, col := range readColumns(r.Options) {
			if c := p.CategoricalOf(col); c != nil {
				r.setKey(col, c.Key)
				if r.levelsAt == nil {
					r.levelsAt = map[string]*plan.Error{}
				}
				r.levelsAt[col] = &plan.Error{File: p.Path, Line: c.LevelsLine, Col: c.LevelsCol, Key: c.Key + ".levels"}
			}
		}
		for _, k := range p.Subset {
			if _, ok := r.ColumnKeys[k.Column]; !ok {
				r.setKey(k.Column, k.Key)
			}
		}
		a.Outcomes = append(a.Outcomes, r)
	}
	return a
}

// predictorEntries are the entries of the plan (file) that read each
// column of spec's terms, an interaction's entry the columns of its
// parts, each with its place (data.Options.Entries).
func predictorEntries(file string, spec design.Spec) map[string][]data.Entry {
	byName := map[string]design.TermSpec{}
	for _, t := range spec.Terms {
		byName[t.Name] = t
	}
	var columns func(t design.TermSpec, depth int) []string
	columns = func(t design.TermSpec, depth int) []string {
		if t.Source != "" || depth > len(spec.Terms) {
			return []string{t.Source}
		}
		var out []string
		for _, n := range t.Interact {
			out = append(out, columns(byName[n], depth+1)...)
		}
		return out
	}
	out := map[string][]data.Entry{}
	for _, t := range spec.Terms {
		if t.Key == "" {
			continue
		}
		where := ""
		if t.Line > 0 {
			where = fmt.Sprintf("%s:%d:%d", file, t.Line, t.Col)
		}
		e := data.Entry{Key: t.Key, Where: where}
		for _, c := range columns(t, 0) {
			if c != "" && !slices.Contains(out[c], e) {
				out[c] = append(out[c], e)
			}
		}
	}
	return out
}

// Imputes reports whether the program imputes the missing values itself
// (data.missing: impute).
func (a *Analysis) Imputes() bool { return a.Imputation != nil }

// Weighted reports whether the rows carry weights (frequency or sampling).
func (a *Analysis) Weighted() bool {
	return len(a.Outcomes) > 0 && a.Outcomes[0].Options.Weights != ""
}

// readColumns lists the columns data options read, subset columns
// included.
func readColumns(o data.Options) []string {
	out := append([]string{o.Outcome}, o.Predictors...)
	for _, c := range []string{o.Weights, o.Offset, o.Cluster} {
		if c != "" {
			out = append(out, c)
		}
	}
	for _, k := range o.Keep {
		out = append(out, k.Column)
	}
	return out
}

func (r *Reading) setKey(column, key string) {
	if r.ColumnKeys == nil {
		r.ColumnKeys = map[string]string{}
	}
	r.ColumnKeys[column] = key
}

// ResolveFit resolves the flags of `ordplan fit`: one outcome, the model's
// names checked before any reading.
func ResolveFit(s SingleFit) (*Analysis, error) {
	// Terms stand for their columns, which are known once the design is
	// built; the names are checked now.
	if _, err := s.Model(); err != nil {
		return nil, err
	}
	if s.Covariance == fit.Clustered && s.Cluster == "" {
		return nil, errors.New("clustered covariance needs a cluster column (--cluster COL)")
	}
	if s.Sampling && s.Weights == "" {
		return nil, errors.New("sampling weights need a weights column (--weights COL)")
	}
	spec := s.designSpec()
	if err := s.markerClash(spec); err != nil {
		return nil, err
	}
	dopt := data.Options{Outcome: s.Outcome, Categories: s.Categories,
		Weights: s.Weights, Sampling: s.Sampling, Offset: s.Offset, Cluster: s.Cluster, Refuse: s.Refuse, Dialect: s.Dialect,
		ColumnMissing: s.ColumnMissing}
	a := &Analysis{Source: s.DataName(), DataFile: s.DataName(), DataPath: s.DataFile,
		DataPaths: s.Parts, DataFiles: s.Parts, Errors: covariancePolicy(s.Covariance, s.Sampling, s.Correction)}
	a.Fit = a.Errors.fitOptions(s.Workers)
	a.Outcomes = []Reading{{Outcome: s.Outcome, Key: fmt.Sprintf("outcome %q", s.Outcome), CategoriesKey: "--categories",
		Options: readSources(dopt, spec), Design: spec}}
	read := readColumns(a.Outcomes[0].Options)
	for _, col := range slices.Sorted(maps.Keys(s.ColumnMissing)) {
		if !slices.Contains(read, col) {
			return nil, fmt.Errorf("--missing-codes: column %q is not a column this fit reads (%s): its codes would mark nothing", col, strings.Join(read, ", "))
		}
	}
	return a, nil
}

// markerClash refuses a category of --categories or a level of a
// categorical predictor that is a missing-value marker of ordplan fit
// (data.MarkerClash): no cell would ever be read as it.
func (s SingleFit) markerClash(spec design.Spec) error {
	keys := func(col string) data.MarkerKeys {
		return data.MarkerKeys{Own: "--missing-codes " + col + "=" + strings.Join(s.ColumnMissing[col], "/")}
	}
	for _, c := range s.Categories {
		if why := data.MarkerClash(c, nil, s.ColumnMissing[s.Outcome], keys(s.Outcome)); why != "" {
			return fmt.Errorf("--categories: category %q of column %q %s", c, s.Outcome, why)
		}
	}
	for _, src := range spec.Sources {
		if src.Cat == nil {
			continue
		}
		for _, l := range src.Cat.Levels {
			if why := data.MarkerClash(l, nil, s.ColumnMissing[src.Name], keys(src.Name)); why != "" {
				return fmt.Errorf("--predictors: level %q of column %q %s", l, src.Name, why)
			}
		}
	}
	return nil
}

// readSources adds the raw columns a design reads to the data options,
// categorical ones with their levels, and writes the header row of a
// sheet one way (0 and 1 both mean the first row).
func readSources(dopt data.Options, spec design.Spec) data.Options {
	dopt.Dialect.HeaderRow = max(dopt.Dialect.HeaderRow, 1)
	for _, s := range spec.Sources {
		dopt.Predictors = append(dopt.Predictors, s.Name)
		if s.Cat != nil {
			if dopt.PredictorLevels == nil {
				dopt.PredictorLevels = map[string][]string{}
			}
			dopt.PredictorLevels[s.Name] = s.Cat.Levels
		}
	}
	return dopt
}

// Loaded is one outcome's data as read, its design and the fit input.
type Loaded struct {
	Data    *data.Dataset
	Design  *design.Design
	FitData *fit.Data
}

// Load reads an outcome's data (from the analysis's data file) and builds
// its design, every data-determined constant frozen. A declared category
// that no row used has is refused here, for every command alike.
func (a *Analysis) Load(r Reading) (*Loaded, error) {
	ds, err := data.LoadFiles(a.Paths(), r.Options)
	if err != nil {
		if !a.Plan {
			return nil, err
		}
		return nil, fmt.Errorf("%s (plan %s, outcome %q%s)", err, a.Source, r.Outcome, r.keyOf(err))
	}
	if err := a.Observed(r, ds); err != nil {
		return nil, err
	}
	if err := a.Clusters(r, ds); err != nil {
		return nil, err
	}
	dz, d, err := buildDesign(r.Design, ds)
	if err != nil {
		return nil, a.designRefusal(r, ds, err)
	}
	if err := a.checkPanels(r, ds, dz); err != nil {
		return nil, err
	}
	return &Loaded{Data: ds, Design: dz, FitData: d}, nil
}

// designRefusal is the refusal of the design built on an outcome's rows
// ds (err), as a plan (at its key: Reading.designError) or ordplan fit
// (after the data file) names it, a refusal of a level saying why no
// row used has it (levelsAfterLoss).
func (a *Analysis) designRefusal(r Reading, ds *data.Dataset, err error) error {
	err = levelsAfterLoss(err, ds, func(col, level string) string {
		var keys func([]data.DropCount) []string
		if a.Plan {
			keys = r.lossKeys
		}
		return data.LevelDrops(a.Paths(), r.Options, []data.LevelRef{{Column: col, Level: level}}, keys)
	})
	if !a.Plan {
		return fmt.Errorf("%s: %v", a.DataFile, err)
	}
	return r.designError(a, err)
}

// levelsAfterLoss is err, a refusal of a categorical column's levels
// against the rows used (a declared level or the reference that no row
// has, one level alone: design.Error.Levels), ending, when more rows were
// dropped than kept, with why so few remain (Dataset.FewRowsSentence), as
// the other refusals counting the rows used do, or else, for a level
// whose rows were all dropped (for the subset, missing values or a weight
// of 0), with how many and for what (lost: data.LevelDrops, the data read
// again only then); and then its advice (If these are the rows
// meant, ...), which follows the explanation; any other err as it is.
func levelsAfterLoss(err error, ds *data.Dataset, lost func(col, level string) string) error {
	var de *design.Error
	if !errors.As(err, &de) || !de.Levels {
		return err
	}
	few := ds.FewRowsSentence()
	if few == "" && de.Level != "" && ds.RowsDropped > 0 {
		few = lost(de.Column, de.Level)
	}
	if few == "" {
		return err
	}
	e := *de
	e.Msg += ". " + few
	if e.Fix != "" {
		e.Msg += ". If these are the rows meant, " + e.Fix
		e.Fix = ""
	}
	return &e
}

// checkPanels refuses a numeric column of report.panels_by that holds a
// value other than 0 and 1 in the data as read (ds; on imputed data the
// observed values): the report draws one panel of predictions for each
// level of a categorical column, or for 0 and for 1, and a panel at a
// value of a numeric column chosen by ordplan would be a choice the plan
// did not make. A column the outcome's terms do not read gets no panels
// (another outcome's predictors may read it); the plan's check refuses a
// column no term reads.
func (a *Analysis) checkPanels(r Reading, ds *data.Dataset, dz *design.Design) error {
	s := dz.Source(a.PanelsBy)
	if a.PanelsBy == "" || s < 0 || dz.Sources[s].Cat != nil {
		return nil
	}
	j := slices.Index(ds.Predictors, a.PanelsBy)
	if j < 0 {
		return nil
	}
	_, _, i := columnSpan(ds, j)
	if i < 0 {
		return nil
	}
	where := ds.File
	if i < len(ds.Lines) {
		where = ds.Where(ds.Lines[i])
	}
	return fmt.Errorf("%s: report.panels_by: column %q holds %s (%s), but a numeric column named by panels_by must hold only 0 and 1 (a panel of predictions at each); declare it under categorical for a panel per value, or leave panels_by out (outcome %q)",
		a.Source, a.PanelsBy, numfmt.Num(ds.X[i*ds.K+j]), where, r.Outcome)
}

// Observed refuses data in which a declared category of the outcome has no
// row: the one check and wording of an unobserved category. Rows kept for
// imputation (data.missing: impute) may miss the outcome: the category is
// then said to be never observed among the rows whose outcome is
// observed, those that miss it counted apart.
func (a *Analysis) Observed(r Reading, ds *data.Dataset) error {
	return a.observedIn(r, ds, "")
}

// observedIn is Observed on rows named by in (" of imputed set 2,
// imp2.csv": an imputed set of data.imputed; "": the rows used).
func (a *Analysis) observedIn(r Reading, ds *data.Dataset, in string) error {
	if len(ds.Unobserved) == 0 {
		return nil
	}
	rows := fmt.Sprintf("the %d rows used%s", ds.N, in)
	if miss := ds.N - observedOutcomes(ds); miss > 0 {
		rows = fmt.Sprintf("the %d rows used whose %s is observed (the other %d of the %d rows used miss it, to be imputed)", ds.N-miss, ds.Outcome, miss, ds.N)
	}
	if conds := r.outcomeConditions(); len(conds) > 0 {
		rows += ", which " + strings.Join(conds, " and ") + " chooses by the outcome's own value"
	}
	if why := ds.FewRowsCause(); why != "" {
		return fmt.Errorf("%s: %s: category %q is declared but never observed in %s: %s. If these are the rows meant, remove it from %s or merge it with a neighbour",
			a.Source, r.Key, ds.Unobserved[0], rows, why, r.CategoriesKey)
	}
	if in == "" && ds.RowsDropped > 0 {
		// Its rows all dropped, fewer than those kept: say for what, as
		// for a declared level of a predictor (designRefusal).
		var keys func([]data.DropCount) []string
		if a.Plan {
			keys = r.lossKeys
		}
		if why := data.LevelDrops(a.Paths(), r.Options, []data.LevelRef{{Column: ds.Outcome, Level: ds.Unobserved[0]}}, keys); why != "" {
			return fmt.Errorf("%s: %s: category %q is declared but never observed in %s. %s. If these are the rows meant, remove it from %s or merge it with a neighbour",
				a.Source, r.Key, ds.Unobserved[0], rows, why, r.CategoriesKey)
		}
	}
	return fmt.Errorf("%s: %s: category %q is declared but never observed in %s; remove it from %s or merge it with a neighbour",
		a.Source, r.Key, ds.Unobserved[0], rows, r.CategoriesKey)
}

// observedOutcomes counts the rows of ds whose outcome is observed (a row
// kept for imputation may miss it: Y < 0).
func observedOutcomes(ds *data.Dataset) int {
	n := 0
	for _, y := range ds.Y {
		if y >= 0 {
			n++
		}
	}
	return n
}

// Clusters refuses data with fewer than two clusters under clustered
// errors, before any fit (each fit would fail alike): the one check and
// wording.
func (a *Analysis) Clusters(r Reading, ds *data.Dataset) error {
	if a.Errors.Covariance != fit.Clustered || len(ds.Cluster) == 0 {
		return nil
	}
	for _, c := range ds.Cluster[1:] {
		if c != ds.Cluster[0] {
			return nil
		}
	}
	return fmt.Errorf("%s: %s: column %q holds one cluster id (%q) in the %d rows used: cluster-robust errors need at least 2 clusters, and about %d to be trusted; with one cluster use the sandwich for independent rows",
		a.Source, a.clusterKey(), r.Options.Cluster, ds.Cluster[0], ds.N, fit.FewClusters)
}

// clusterKey names the cluster column's setting: the plan key or the flag.
func (a *Analysis) clusterKey() string {
	if a.Plan {
		return "data.cluster"
	}
	return "--cluster"
}

// correctionKey names the few-cluster correction's setting: the plan key
// or the flag, with its word.
func (a *Analysis) correctionKey() string {
	if a.Plan {
		return "few_clusters: " + a.Errors.Correction.String()
	}
	return "--few-clusters " + a.Errors.Correction.String()
}

// ClusterCount is the number of distinct cluster ids of the rows used (0
// without a cluster column).
func ClusterCount(ds *data.Dataset) int {
	seen := map[string]bool{}
	for _, c := range ds.Cluster {
		seen[c] = true
	}
	return len(seen)
}

// FewClusters is the warning of clustered errors on data with fewer than
// fit.FewClusters clusters (at least 2: one is refused, Clusters), or "":
// the one wording, which check, run (the outcome's notes, decisions.json's
// and the report's) and ordplan fit give.
//
// It ends with the warning of cluster ids that differ only in letter case
// (clusterCase), when there are such.
func (a *Analysis) FewClusters(r Reading, ds *data.Dataset) string {
	if a.Errors.Covariance != fit.Clustered || len(ds.Cluster) == 0 {
		return ""
	}
	var out []string
	for _, w := range []string{a.fewClusters(r, ds), a.clusterCase(r, ds), oneClusterLevels(r, ds)} {
		if w != "" {
			out = append(out, w)
		}
	}
	return strings.Join(out, "; also ")
}

// oneClusterLevels warns of the levels of categorical predictors coded
// against a reference (each level its own 0/1 column) whose rows all lie
// in one cluster: a cluster's own fixed effect, or a level met in one
// cluster. The score of such a column sums to 0 over its rows at the
// maximum, so its sum in every cluster is 0 and its cluster-robust
// standard error has nothing to rest on (it came out near 0, t above 20,
// for sites as fixed effects with errors clustered by site). It names up
// to three such levels and counts the others, or returns "".
func oneClusterLevels(r Reading, ds *data.Dataset) string {
	found, _ := levelsInOneCluster(r, ds, false)
	if len(found) == 0 {
		return ""
	}
	each := " each"
	if len(found) == 1 {
		each = ""
	}
	return fmt.Sprintf("the rows of %s lie in one cluster%s (a cluster's own fixed effect, or a level met in one cluster): the score of such a level's column sums to 0 over its rows at the maximum, so its sum in each cluster is 0 and the cluster-robust standard errors, tests and intervals of its effects have nothing to rest on: the outputs show them as not available (n/a), with the reason; read its estimates only, or give it errors that do not cluster by this column",
		words.Some(found, 3), each)
}

// levelsInOneCluster finds the levels of the categorical predictors of r
// whose rows in ds all lie in one cluster, each named "site = s1 (cluster
// "s1")", and the distinct clusters that hold them (in the order found).
// Without all, only the levels that have a 0/1 column of their own
// (treatment coding, not the reference: those whose effects the
// cluster-robust errors cannot estimate); with all, every level of every
// coding (those a resample of whole clusters loses with their cluster).
func levelsInOneCluster(r Reading, ds *data.Dataset, all bool) (found, clusters []string) {
	for _, src := range r.Design.Sources {
		if src.Cat == nil || (!all && src.Cat.Coding != "" && src.Cat.Coding != design.Treatment) {
			continue
		}
		j := slices.Index(ds.Predictors, src.Name)
		if j < 0 {
			continue
		}
		ref := 0
		if src.Cat.Reference != "" {
			ref = max(slices.Index(src.Cat.Levels, src.Cat.Reference), 0)
		}
		in := make([]string, len(src.Cat.Levels)) // the one cluster of a level's rows so far
		many := make([]bool, len(src.Cat.Levels))
		for i := 0; i < ds.N; i++ {
			l := int(ds.X[i*ds.K+j])
			if l < 0 || l >= len(in) || many[l] {
				continue
			}
			switch c := ds.Cluster[i]; {
			case in[l] == "":
				in[l] = c
			case in[l] != c:
				many[l] = true
			}
		}
		for l, c := range in {
			if (all || l != ref) && c != "" && !many[l] {
				found = append(found, fmt.Sprintf("%s = %s (cluster %s)", src.Name, src.Cat.Levels[l], strconv.Quote(c)))
				if !slices.Contains(clusters, c) {
					clusters = append(clusters, c)
				}
			}
		}
	}
	return found, clusters
}

// clusterCase warns of cluster ids of the rows used that differ only in
// letter case ("K35" and "k35"): they are counted as different clusters,
// and they may be one written two ways; it names the first pair and
// counts the others, or returns "".
func (a *Analysis) clusterCase(r Reading, ds *data.Dataset) string {
	ids := map[string]bool{}
	for _, c := range ds.Cluster {
		ids[c] = true
	}
	byFold := map[string][]string{}
	for _, c := range slices.Sorted(maps.Keys(ids)) {
		k := strings.ToLower(c)
		byFold[k] = append(byFold[k], c)
	}
	var groups [][]string
	for _, k := range slices.Sorted(maps.Keys(byFold)) {
		if len(byFold[k]) > 1 {
			groups = append(groups, byFold[k])
		}
	}
	if len(groups) == 0 {
		return ""
	}
	var first []string
	for _, c := range groups[0] {
		first = append(first, strconv.Quote(c))
	}
	more := ""
	if len(groups) > 1 {
		more = fmt.Sprintf(", and %d more such sets of ids", len(groups)-1)
	}
	return fmt.Sprintf("%s: column %q holds cluster ids that differ only in letter case (%s%s): each is counted as a cluster of its own; if they name one cluster, write its id alike in every row",
		a.clusterKey(), r.Options.Cluster, strings.Join(first, " and "), more)
}

// fewClusters is FewClusters' warning of too few clusters, or "".
func (a *Analysis) fewClusters(r Reading, ds *data.Dataset) string {
	g := ClusterCount(ds)
	if g < 2 || g >= fit.FewClusters {
		return ""
	}
	col := r.Options.Cluster
	pooled := ""
	if a.Imputes() || a.Imputed != nil {
		pooled = fmt.Sprintf("; on imputed data G-1 = %d is the complete-data degrees of freedom of Rubin's rules, and the pooled estimates and tests refer to t and F on the fewer degrees of freedom of Barnard and Rubin computed from it (the tables give them)", g-1)
	}
	if a.Errors.Jackknife() {
		return fmt.Sprintf("%s: column %q holds %d clusters in the %d rows used, fewer than %d: as asked (%s), standard errors are the delete-one-cluster jackknife (each model refitted %d times, once without each cluster), single estimates and intervals refer to t on G-1 = %d degrees of freedom and joint Wald tests of q restrictions to F(q, %d-q), which keep the rejection rates of true hypotheses nearer their level than the cluster-robust sandwich; a joint Wald test of more than %d restrictions is not computed (the covariance has rank at most G-1)%s",
			a.clusterKey(), col, g, ds.N, fit.FewClusters, a.correctionKey(), g, g-1, g, g-1, pooled)
	}
	return fmt.Sprintf("%s: column %q holds %d clusters in the %d rows used, fewer than %d: cluster-robust standard errors tend to be too small, so their tests may reject a true hypothesis too often even on the references they take (t on G-1 = %d degrees of freedom, F(q, %d-q) for q restrictions), and a joint Wald test of more than G-1 = %d restrictions is not computed (the covariance has rank at most G-1, G the clusters). Where the clusters are a few fixed units, a model with %s as a categorical predictor (one effect per cluster; not for a predictor constant within clusters) and observed or sandwich errors is the safer analysis; otherwise read the clustered p-values and intervals as too small%s",
		a.clusterKey(), col, g, ds.N, fit.FewClusters, g-1, g, g-1, col, pooled)
}

// CheckDesign checks an outcome's fit input before any model is fitted
// (categories, weights, constant or collinear predictors), built on ds
// (nil for a resample, whose primary data were checked).
func (a *Analysis) CheckDesign(r Reading, dz *design.Design, ds *data.Dataset, d *fit.Data) error {
	if err := fit.CheckDesign(d); err != nil {
		return a.designError(r, dz, ds.FewRowsSentence(), err, "")
	}
	if ds != nil {
		if err := a.someCandidateFits(dz, d); err != nil {
			return a.designError(r, dz, ds.FewRowsSentence(), err, "")
		}
	}
	return a.checkGridLevels(r, dz)
}

// someCandidateFits refuses a plan none of whose candidate models can be
// fitted because each has more parameters than observations
// (fit.TooFewObservations, the refusal each fit would make), naming the
// candidate with the fewest; nil when one can. Such a run has nothing to
// choose from, as when a term is constant for every model, so it is
// refused before any fit rather than reported with every candidate not
// fitted. sets are the data the candidates are fitted on: one, or the
// imputed sets, on each of which a candidate is fitted and pooled, so a
// candidate refused on one set is not fitted; the parameters and, but
// for imputed frequency weights, the observations do not depend on the
// values imputed, so this is known before any fit on imputed data too.
//
// The partial and constrained models of a partial set selected stepwise
// are known only after the selection's fits (gridModels leaves them
// out), but each has at least the parameters of the parallel model of
// its approach and link (one slope per column, plus J-2 for each column
// of the partial set or each constraint group): when that parallel
// model is refused they are too. When it is not, it is not decided here:
// a selection keeping some columns gives partial models of at least J-2
// more parameters, but one keeping none gives no partial model at all
// (it would equal the parallel one, not a candidate unless listed), so
// whether a candidate can be fitted, and why not, depends on the set the
// selection's fits keep, and the candidates are judged one by one after
// them, each not fitted saying why (exit 3 when none is left).
func (a *Analysis) someCandidateFits(dz *design.Design, sets ...*fit.Data) error {
	type candidate struct {
		m     fit.Model
		bound bool // the parallel model bounding stepwise partial or constrained ones
	}
	var cands []candidate
	terms := termsOf(dz)
	for _, e := range gridModels(a, terms) {
		if e.Auxiliary || e.Err != "" {
			continue
		}
		if m, err := e.Spec.Model(); err == nil {
			cands = append(cands, candidate{m: m})
		}
	}
	if a.Models.Partial.Select != nil && slices.ContainsFunc(a.Models.Effects, func(s fit.Structure) bool {
		return s == fit.PartialEffects || s == fit.ConstrainedEffects
	}) {
		cols := allColumns(terms)
		for _, ap := range a.Models.Approaches {
			bw := a.Models.Backward() && ap == fit.Stage
			for _, l := range a.Models.Links {
				spec, err := EffectsSpec(ap, bw, l, fit.ParallelEffects, cols, nil, nil)
				if err != nil {
					return nil // not known before the fits
				}
				m, err := spec.Model()
				if err != nil {
					return nil
				}
				cands = append(cands, candidate{m: m, bound: true})
			}
		}
	}
	var fewest error
	least := -1
	for _, c := range cands {
		var refused error
		var on []int // the imputed sets refusing it
		for k, d := range sets {
			if err := fit.TooFewObservations(d, c.m, a.Fit.Sampling); err != nil {
				if refused == nil {
					refused = err
				}
				on = append(on, k+1)
			}
		}
		if refused == nil {
			return nil
		}
		P, err := fit.NumParams(c.m, sets[0].J, sets[0].Predictors)
		if err != nil || least >= 0 && P >= least {
			continue
		}
		if len(on) < len(sets) {
			refused = fmt.Errorf("%w, in imputed set %d", refused, on[0])
		}
		if c.bound {
			refused = fmt.Errorf("the partial and constrained models, their partial set selected stepwise, have at least the parameters of the parallel model of their approach and link, and %w", refused)
		} else {
			refused = fmt.Errorf("the one with the fewest: %w", refused)
		}
		least, fewest = P, refused
	}
	if fewest == nil {
		return nil
	}
	return fmt.Errorf("no candidate model can be fitted, each having more parameters than observations (%w)", fewest)
}

// checkGridLevels refuses a level that a closeness rule's grid lists and
// that no row used has (its column dropped: unobserved: drop), so that a
// run stops before fitting rather than leave the rule unjudged. The plan's
// check has refused levels that are not declared or that the subset
// leaves out.
func (a *Analysis) checkGridLevels(r Reading, dz *design.Design) error {
	var errs plan.Errors
	for _, rule := range a.Rules {
		for _, ax := range rule.Grid {
			s := dz.Source(ax.Predictor)
			if s < 0 || dz.Sources[s].Cat == nil || ax.Levels == nil {
				continue
			}
			kept, _ := dz.Coded(s)
			for _, l := range ax.Levels {
				if kept != nil && !slices.Contains(kept, l) {
					errs = append(errs, &plan.Error{File: a.Source, Line: ax.Line, Col: ax.Col, Key: ax.Key,
						Msg: fmt.Sprintf("level %q of %s occurs in no row used (data %s, outcome %q; its column was dropped: unobserved: drop), so the models have no effect of it to compare; list the levels the rows used have (%s), or give %s: %s",
							l, ax.Predictor, a.DataFile, r.Outcome, strings.Join(kept, ", "), ax.Predictor, plan.GridAllLevels)})
				}
			}
		}
	}
	if len(errs) > 0 {
		return errs
	}
	return nil
}

// designError is a plan's design error err on the outcome's data, named
// where the plan says what it is about: a problem of a categorical
// column's declared levels at those levels (categorical.COLUMN.levels, a
// *plan.Error, which a sensitivity analysis that changes them names at
// its change: plan.Sensitivity.InChange), any other at its term.
func (r Reading) designError(a *Analysis, err error) error {
	var de *design.Error
	if errors.As(err, &de) && de.Levels && r.levelsAt[de.Column] != nil {
		e, at := *de, *r.levelsAt[de.Column]
		e.Key = ""
		at.Msg = fmt.Sprintf("%v (data %s, outcome %q)", &e, a.DataFile, r.Outcome)
		return &at
	}
	return fmt.Errorf("%s%s: %v (data %s, outcome %q)", a.Source, r.termPlace(err), err, a.DataFile, r.Outcome)
}

// termPlace is ":LINE:COL" of the plan's term a design error is about, or
// "" when the error names none (or the term was not read from a file).
func (r Reading) termPlace(err error) string {
	var de *design.Error
	if !errors.As(err, &de) || de.Key == "" {
		return ""
	}
	for _, t := range r.Design.Terms {
		if t.Key == de.Key && t.Line > 0 {
			return fmt.Sprintf(":%d:%d", t.Line, t.Col)
		}
	}
	return ""
}

// keyOf names the plan key behind a data error on a categorical column or
// a subset column; for a refusal that says why so few rows remain
// (data.Error.Dropped), the keys behind the rows dropped (lossKeys), the
// cause, rather than the column's.
func (r Reading) keyOf(err error) string {
	var de *data.Error
	if !errors.As(err, &de) {
		return ""
	}
	if keys := r.lossKeys(de.Dropped); len(keys) > 0 {
		if len(keys) == 1 {
			return ", plan key " + keys[0]
		}
		return ", plan keys " + words.AndList(keys)
	}
	if de.Key != "" {
		return ", plan key " + de.Key
	}
	if de.Column == "" {
		return ""
	}
	if k, ok := r.ColumnKeys[de.Column]; ok {
		return ", plan key " + k
	}
	return ""
}

// lossKeys are the plan keys behind rows dropped (dc): the subset's
// conditions on the columns that dropped rows, data.missing for rows
// dropped for a missing value, data.weights for rows of weight 0; in that
// order, each once.
func (r Reading) lossKeys(dc []data.DropCount) []string {
	var keys []string
	add := func(k string) {
		if k != "" && !slices.Contains(keys, k) {
			keys = append(keys, k)
		}
	}
	for _, c := range dc {
		if c.Rows > 0 && c.Subset {
			for _, k := range r.Options.Keep {
				if k.DropColumn() == c.Column {
					add(k.Key)
				}
			}
		}
	}
	for _, c := range dc {
		if c.Rows > 0 && !c.Subset && !c.ZeroWeight(r.Options.Weights) {
			add("data.missing")
		}
	}
	for _, c := range dc {
		if c.Rows > 0 && c.ZeroWeight(r.Options.Weights) {
			add("data.weights")
		}
	}
	return keys
}

// Partitioned checks that the analysis can fit model m over partitions
// held by workers: sums over partitions give the observed information of
// frequency-weighted rows, the design must need no constant of the whole
// data, and the model no search from several starts (fit.OverParts).
func (a *Analysis) Partitioned(m fit.Model) error {
	r := a.Outcomes[0]
	if err := fit.OverParts(m); err != nil {
		return err
	}
	switch {
	case a.Errors.Sampling || r.Options.Cluster != "":
		return errors.New("a fit over parts held by workers takes frequency weights only and no clusters: sampling weights and clusters need sandwich errors, which need every row's score in one place")
	case a.Errors.Covariance != fit.Observed:
		return fmt.Errorf("a fit over parts held by workers gives observed-information standard errors only, not %s", a.Errors.Covariance)
	case !plainColumns(r.Design):
		return errors.New("a fit over parts held by workers reads numeric columns as they are: categorical columns, transformations and interactions need the whole data in one place (their constants come from all rows)")
	}
	return nil
}

// Paths are the files the data are read from: the parts, or the file.
func (a *Analysis) Paths() []string {
	if a.DataPaths != nil {
		return a.DataPaths
	}
	return []string{a.DataPath}
}
