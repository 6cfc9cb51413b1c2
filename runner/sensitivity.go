package runner

import (
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"

	"ordplan/plan"
	"ordplan/plan/lock"
	"ordplan/runner/fit"
)

// SensitivityResult is one sensitivity analysis of the plan (plan.Sensitivity),
// run: its plan through Run, as a plan of its own is run, on the data the
// primary analysis read.
type SensitivityResult struct {
	Sensitivity plan.Sensitivity
	Result      *Result // nil when it could not be run
	Err         string  // why it could not be run ("" when it ran)
}

// runSensitivity runs each sensitivity analysis of p (none under
// opt.NoSensitivity) after the primary analysis, in the plan's order, on
// the data p reads, with the run's options but no tests of each term and
// progress lines named by the analysis. An analysis that cannot be run is
// recorded with the reason: the primary analysis stands without it.
func runSensitivity(p *plan.Plan, opt Options) []*SensitivityResult {
	if opt.NoSensitivity {
		return nil
	}
	var out []*SensitivityResult
	for _, s := range p.Sensitivity {
		sopt := opt
		sopt.NoTermTests, sopt.NoSensitivity, sopt.NoStability, sopt.Analysis = true, true, true, s.Name
		if opt.Progress != nil {
			sopt.Progress = namedProgress{opt.Progress, s.Name}
		}
		sr := &SensitivityResult{Sensitivity: s}
		res, err := Run(s.OnData(p), sopt)
		if pe, ok := err.(*plan.Error); ok {
			// Named where the analysis changes the key; the record and
			// the warning name the analysis.
			if key, ok := s.ChangeKey(pe.Key); ok {
				e := *pe
				e.Key, err = key, &e
			}
		}
		if err != nil {
			sr.Err = folderFree(err.Error(), p)
		} else {
			sr.Result = res
		}
		out = append(out, sr)
	}
	return out
}

// folderFree is a message with the data file and the plan named as the
// plan names them, not by the paths they were read at: the outputs do not
// depend on the folder the command ran in.
func folderFree(msg string, p *plan.Plan) string {
	for i, path := range p.Data.Paths() {
		if f := p.Data.Files()[i]; path != f {
			msg = strings.ReplaceAll(msg, path, f)
		}
	}
	if b := filepath.Base(p.Path); p.Path != b {
		msg = strings.ReplaceAll(msg, p.Path, b)
	}
	return msg
}

// namedProgress hears of a sensitivity analysis's fits: the outcome is
// named "ANALYSIS: OUTCOME".
type namedProgress struct {
	Progress
	name string
}

func (n namedProgress) Fitted(outcome, id string, done, total int) {
	n.Progress.Fitted(AnalysisOutcome(n.name, outcome), id, done, total)
}

// Outcome gives the analysis's result for an outcome column, or nil.
func (sr *SensitivityResult) Outcome(column string) *OutcomeResult {
	if sr.Result == nil {
		return nil
	}
	for _, or := range sr.Result.Outcomes {
		if or.Outcome.Column == column {
			return or
		}
	}
	return nil
}

// KeyEstimate is one effect parameter of a fit (not a boundary's tau)
// with its interval at the plan's confidence level, as the table of the
// chosen model's estimates gives it (fit.Result.ParamInference), and the
// distribution the interval refers to: the normal, or t on DF degrees of
// freedom (G-1 under cluster-robust errors from G clusters, the
// Barnard-Rubin degrees of freedom pooled over imputed sets).
type KeyEstimate struct {
	Parameter string  `json:"parameter"`
	Estimate  float64 `json:"estimate"`
	StdError  float64 `json:"std_error"`
	Lower     float64 `json:"lower"`
	Upper     float64 `json:"upper"`
	// Reference is "normal" or "t" (fit.Inference.Reference).
	Reference string `json:"reference"`
	// DF are the degrees of freedom of t (nil for the normal: infinite).
	DF *float64 `json:"df,omitempty"`
}

// RefDF is e's degrees of freedom, +Inf for the normal.
func (e KeyEstimate) RefDF() float64 {
	if e.DF == nil {
		return math.Inf(1)
	}
	return *e.DF
}

// KeyEstimates are the effect parameters of res, in its order, with
// their intervals at level.
func KeyEstimates(res *fit.Result, level float64) []KeyEstimate {
	out := []KeyEstimate{}
	for i, n := range res.ParamNames {
		if strings.HasPrefix(n, "tau[") {
			continue
		}
		inf := res.ParamInference(i, level)
		e := KeyEstimate{Parameter: n, Estimate: res.Estimates[i], StdError: res.StdErrors[i], Lower: inf.Low, Upper: inf.High, Reference: inf.Reference()}
		if !math.IsInf(inf.DF, 1) {
			df := inf.DF
			e.DF = &df
		}
		out = append(out, e)
	}
	return out
}

// SensitivityModel is the primary analysis's chosen model of an outcome
// fitted under a sensitivity analysis: its estimates, or why there are
// none.
type SensitivityModel struct {
	Model     string        `json:"model"`
	Estimates []KeyEstimate `json:"estimates"`
	// NotFitted says why the model has no estimates under the analysis
	// ("" when it has).
	NotFitted string `json:"not_fitted,omitempty"`
	// Verdict is what the analysis's rules made of it (chosen, kept,
	// rejected: ...).
	Verdict string `json:"verdict,omitempty"`
}

// PrimaryModelUnder gives the primary analysis's chosen model (id)
// fitted under a sensitivity analysis's result for the outcome (sor).
func PrimaryModelUnder(id string, sor *OutcomeResult, level float64) SensitivityModel {
	m := SensitivityModel{Model: id, Estimates: []KeyEstimate{}}
	var f *FitEntry
	if sor != nil {
		f = sor.Find(id)
	}
	switch {
	case sor == nil:
		m.NotFitted = "the sensitivity analysis could not be run"
	case f == nil || f.Auxiliary:
		m.NotFitted = "not in the grid of this sensitivity analysis"
	case f.Result == nil:
		m.NotFitted = "no fit: " + f.Err
	case !f.OK():
		// A fit without usable estimates (no finite maximum, not
		// converged, a robust covariance that could not be computed) has
		// no estimates to set beside the primary analysis's.
		m.NotFitted = "no usable estimates: " + f.Problem()
		m.Verdict = verdictText(f)
	default:
		m.Estimates = KeyEstimates(f.Result, level)
		m.Verdict = verdictText(f)
	}
	return m
}

// SensitivityRecord is a sensitivity analysis in decisions.json.
type SensitivityRecord struct {
	Name    string   `json:"name"`
	Why     string   `json:"why"`
	Changes []string `json:"changes"`
	// Error says why it could not be run (absent when it ran).
	Error    string                     `json:"error,omitempty"`
	Outcomes []SensitivityOutcomeRecord `json:"outcomes"`
	// SinceFrozen lists the changes from the plan's lock that touch this
	// analysis (added or changed after the plan was frozen, with the
	// reasons stated; absent when it is as registered or there is no lock).
	SinceFrozen []lock.Explained `json:"since_frozen,omitempty"`
}

// SensitivityOutcomeRecord is one outcome under a sensitivity analysis:
// the rows used, the model its rules chose, whether that is the primary
// analysis's choice, and the primary's chosen model fitted under it.
type SensitivityOutcomeRecord struct {
	Outcome       string  `json:"outcome"`
	RowsUsed      int     `json:"rows_used"`
	Chosen        *string `json:"chosen"`
	Choice        string  `json:"choice"`
	Fallback      bool    `json:"fallback,omitempty"`
	SameAsPrimary bool    `json:"same_as_primary"`
	// PrimaryModel is the primary analysis's chosen model under this
	// analysis (absent when the primary analysis chose none).
	PrimaryModel *SensitivityModel `json:"primary_model,omitempty"`
}

// sensitivityRecords are the sensitivity analyses of a run for
// decisions.json, in the plan's order.
func sensitivityRecords(r *Result) []SensitivityRecord {
	var out []SensitivityRecord
	level := r.Plan.Report.ConfidenceLevel
	for i, sr := range r.Sensitivity {
		s := sr.Sensitivity
		rec := SensitivityRecord{Name: s.Name, Why: s.Why, Changes: s.Changes, Error: sr.Err, Outcomes: []SensitivityOutcomeRecord{}, SinceFrozen: r.Registration.SensitivityChanges(i)}
		for _, or := range r.Outcomes {
			sor := sr.Outcome(or.Outcome.Column)
			if sor == nil {
				continue
			}
			o := SensitivityOutcomeRecord{Outcome: or.Outcome.Column, RowsUsed: sor.AsRead().N, Choice: sor.Choice, Fallback: sor.Fallback}
			if sor.Chosen != nil {
				id := sor.Chosen.ID
				o.Chosen = &id
				o.SameAsPrimary = or.Chosen != nil && or.Chosen.ID == id
			}
			if or.Chosen != nil {
				m := PrimaryModelUnder(or.Chosen.ID, sor, level)
				o.PrimaryModel = &m
			}
			rec.Outcomes = append(rec.Outcomes, o)
		}
		out = append(out, rec)
	}
	return out
}

// SensitivityRunRecord is a sensitivity analysis in run.json: its name,
// the keys it changes, and how the program imputed its data when it did.
type SensitivityRunRecord struct {
	Name       string           `json:"name"`
	Changes    []string         `json:"changes"`
	Imputation []*ChainedRecord `json:"imputation,omitempty"`
	Error      string           `json:"error,omitempty"`
	// SinceFrozen is as in SensitivityRecord.
	SinceFrozen []lock.Explained `json:"since_frozen,omitempty"`
	// DataColumns are the columns the analysis read, as the run's own
	// data_columns (Result.DataColumns of the analysis's run), so that a
	// rerun can say what changed in columns or rows only it reads (a
	// cluster column, rows another subset keeps).
	DataColumns []OutcomeColumns `json:"data_columns,omitempty"`
}

func sensitivityRunRecords(r *Result) []SensitivityRunRecord {
	var out []SensitivityRunRecord
	for i, sr := range r.Sensitivity {
		rec := SensitivityRunRecord{Name: sr.Sensitivity.Name, Changes: sr.Sensitivity.Changes, Error: sr.Err, SinceFrozen: r.Registration.SensitivityChanges(i)}
		if sr.Result != nil {
			rec.Imputation = imputationRecords(sr.Result)
			rec.DataColumns = sr.Result.DataColumns()
		}
		out = append(out, rec)
	}
	return out
}

// SensitivityWarnings are the lines ordplan run prints on standard error
// for the sensitivity analyses: those that could not be run, and each
// warning of an analysis that ran (SensitivityResult.Warnings), named by
// the analysis, its key and plan line (Sensitivity.Title), as check names it.
func SensitivityWarnings(r *Result) []string {
	var out []string
	for _, sr := range r.Sensitivity {
		if sr.Err != "" {
			out = append(out, fmt.Sprintf("%s could not be run: %s", sr.Sensitivity.Title(), sr.Err))
		}
		for _, w := range sr.Warnings(r) {
			out = append(out, sr.Sensitivity.Title()+": "+w)
		}
	}
	return out
}

// runWarnings are the warnings of a run that ordplan run prints once the
// data are read, as it words them: rules or a stepwise selection that
// read statistics ignoring the clusters (ClusterWarnings), two-category
// outcomes (BinaryWarnings, those the data found), categorical
// predictors held at their reference in pairs of levels
// (PairsProfileWarnings), outcomes whose rows a subset chooses by their
// own value (OutcomeSubsetWarnings), too few clusters and what follows from them
// (FewClustersWarnings), imputed values no data link to a level
// (ImputationWarnings).
func runWarnings(res *Result) []string {
	found := make([]int, len(res.Plan.Outcomes))
	for i, or := range res.Outcomes {
		if i < len(found) && or.Data != nil {
			found[i] = len(or.Data.Categories)
		}
	}
	return slices.Concat(ClusterWarnings(res.Plan), BinaryWarnings(res.Plan, nil), BinaryWarnings(res.Plan, found), PairsProfileWarnings(res.Plan), OutcomeSubsetWarnings(res.Plan), FewClustersWarnings(res), ImputationWarnings(res))
}

// Warnings are the warnings of a sensitivity analysis that ran (none when
// it did not) that the primary analysis (primary) does not have as well:
// too few clusters for its clustered errors, singular covariances, rules
// that ignore its clusters, ... (runWarnings), in its order.
func (sr *SensitivityResult) Warnings(primary *Result) []string {
	if sr.Result == nil {
		return nil
	}
	var had []string
	if primary.Plan != nil {
		had = runWarnings(primary)
	}
	var out []string
	for _, w := range runWarnings(sr.Result) {
		if !slices.Contains(had, w) && !slices.Contains(out, w) {
			out = append(out, w)
		}
	}
	return out
}

// ErrorsOnlyKeys are the keys of a sensitivity analysis that change only
// how the standard errors are computed (plan.SensitivityKeys): the
// covariance, the clusters and the few-cluster correction. The fits
// maximise the same likelihood on the same rows whatever they are (the
// information a fit's own errors come from, observed or expected,
// aside).
var ErrorsOnlyKeys = []string{"covariance", "data.cluster", "few_clusters"}

// ErrorsOnly says whether, for one outcome, a sensitivity analysis's
// estimates are the primary analysis's by construction: it changes only
// ErrorsOnlyKeys, its fits use the same information as the primary's
// (observed or expected, which the condition of a fit and its
// identification read) and it uses the same rows (a cluster column with
// missing values may drop some). When it holds, readers lists the
// decisions of the analysis that read the covariance, and so may still
// differ from the primary's: a Wald-test rule, a stepwise selection by
// Wald tests, the rejection of a model whose robust covariance cannot be
// computed; with none, the choice too is the primary's by construction.
func ErrorsOnly(primary *Result, sr *SensitivityResult, column string) (ok bool, readers []string) {
	if sr.Result == nil || primary.Analysis == nil || sr.Result.Analysis == nil {
		return false, nil
	}
	for _, c := range sr.Sensitivity.Changes {
		if !slices.Contains(ErrorsOnlyKeys, c) {
			return false, nil
		}
	}
	pa, sa := primary.Analysis, sr.Result.Analysis
	if pa.Fit.Covariance != sa.Fit.Covariance {
		return false, nil
	}
	var por, sor *OutcomeResult
	for _, or := range primary.Outcomes {
		if or.Outcome.Column == column {
			por = or
		}
	}
	sor = sr.Outcome(column)
	if por == nil || sor == nil || por.AsRead() == nil || sor.AsRead() == nil || por.AsRead().N != sor.AsRead().N {
		return false, nil
	}
	// Decisions that read the covariance, under either analysis (the
	// rules and the selection are the primary's in every analysis).
	for _, r := range sa.Rules {
		if r.Kind == plan.RuleRejectIfTestRejects && r.Test == fit.TestWald {
			readers = append(readers, fmt.Sprintf("the Wald-test rule at line %d", r.Line))
		}
	}
	if sel := sa.Models.Partial.Select; sel != nil && sel.Test == fit.TestWald {
		readers = append(readers, "the stepwise selection of the partial set by Wald tests")
	}
	if sa.Errors.Covariance.IsSandwich() || pa.Errors.Covariance.IsSandwich() {
		readers = append(readers, "the rejection of a model whose robust covariance cannot be computed")
	}
	return true, readers
}
