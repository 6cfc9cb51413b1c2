package runner

import (
	"ordplan/plan"
	"ordplan/plan/lock"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// Result is everything a plan run produced, in plan order.
type Result struct {
	Plan     *plan.Plan
	DataHash string // hex SHA-256 of the data file (of the bytes the run parsed); of the parts' hashes for data.parts
	// DataParts are the parts of data held as parts, with their hashes.
	DataParts []DataRef
	// NewRowsHash is the hex SHA-256 of the plan's new-rows file
	// (inference.predict), "" when there is none.
	NewRowsHash string
	// Imputed names the imputed data files of the run with their hashes.
	Imputed []DataRef
	// columns: DataColumns, made when first asked.
	columns  []OutcomeColumns
	Version  string
	Outcomes []*OutcomeResult
	Notes    []string // run-level remarks (covariance, weights), in plain text
	// ImputedCopies are the imputed sets holding the same bytes as an
	// earlier set (FindImputedCopies).
	ImputedCopies []ImputedCopy
	// Multiplicity is the family of hypothesis tests whose p-values the
	// run adjusts (nil: none adjusted).
	Multiplicity *MultiplicityFamily
	Started      string // UTC start time, only when the plan asks for timestamps

	GoVersion string // the Go release the program was built with
	Revision  string // the source revision of the build (Revision; "": not stamped)
	Platform  string // operating system/architecture
	Command   string // the command line, when the ordplan command ran the plan

	// Registration is the plan compared with its lock (nil: not compared).
	Registration *lock.Status
	// EarlierRegistered are the earlier runs of the registered plan,
	// unchanged, that the output folder holds (EarlierRegisteredRuns):
	// when this run departs from it, results of the registered plan that
	// existed before the deviations were run; when it matches it, those
	// on other data (an earlier look at the study's data).
	EarlierRegistered []EarlierRun
	// UnderEarlierLocks are the earlier runs that the output folder holds
	// made under another lock of the plan than its lock now
	// (EarlierLockRuns): results that existed before it was frozen anew.
	UnderEarlierLocks []EarlierLockRun
	// Simulated is set when the data were simulated (ordplan rehearse).
	Simulated *Simulation
	// Analysis is the plan resolved: how the data were read, the fit
	// options and the covariance policy (set by Run, which resolves once).
	Analysis *Analysis `json:"-"`
	// Sensitivity are the plan's sensitivity analyses, run, in its order.
	Sensitivity []*SensitivityResult
}

// OutcomeResult holds the fits, tests and decisions of one outcome.
type OutcomeResult struct {
	Outcome  plan.Outcome
	Data     *data.Dataset
	FitData  *fit.Data
	Design   *design.Design   // how the terms became FitData's columns
	Terms    []fit.Term       // the outcome's terms with their columns
	FreeSets []FreeSet        // the partial set of each approach
	Stepwise []StepwiseRecord // when the partial set is selected
	Fits     []*FitEntry      // candidates first (grid order), then auxiliary fits
	Tests    []*TestBlock     // per approach and link
	Rules    []*RuleOutcome
	Chosen   *FitEntry
	Choice   string   // why the chosen model was chosen, or why none was
	Fallback bool     // every candidate was rejected; Chosen is the plan's fallback
	Notes    []string // models not fitted and why

	Nulls   []*NullRecord   // thresholds-only fit of each approach and link
	Overall []OverallRecord // each usable candidate against its thresholds-only model
	Lipsitz *fit.Lipsitz    // goodness of fit of the chosen model, by groups of its score
	// PatternSplit: the Pulkstenis-Robinson tests of the chosen model
	// (nil when not run: no chosen model).
	PatternSplit *PatternSplitRecord
	// GOFPooling: on imputed data, how the goodness-of-fit tests were
	// pooled over the sets (nil otherwise).
	GOFPooling *GOFPooling

	Hypotheses []HypothesisResult // the plan's hypotheses, per model
	// Stability is selection_stability's bootstrap of the decision
	// procedure (nil: not asked).
	Stability *Stability
	// TermTests: each term of the chosen model tested (Wald and
	// likelihood ratio); nil without a usable chosen model.
	TermTests []TermTest

	dataOptions data.Options   // how Data was read (rules read further columns the same way)
	Marginal    []MarginalSet  // marginal effects of the chosen model
	LevelPairs  []LevelPairSet // pairs of levels of categorical predictors (inference.level_pairs)
	// ProfileOutside says why the plan's profile lies outside the
	// population the model was fitted to (nil: inside, or no profile;
	// profileOutside).
	ProfileOutside []string
	NewRows        *NewRows // predictions for the plan's new rows

	// Imputed is set when the outcome was analysed on multiply imputed
	// data: Data is then imputed set 1 with the original file's table of
	// missing values, FitData its fit input, and every fit is pooled over
	// the sets.
	Imputed *ImputedRun
	// Observed is, on imputed data, the original file as read with its
	// incomplete rows kept (a missing outcome -1 in Y, a missing predictor
	// NaN in X): the report's counts and descriptives are of its observed
	// values, never of one imputed set. Nil otherwise.
	Observed *data.Dataset `json:"-"`
}

// AsRead is the data as read from the plan's data file: on imputed data
// the original file (Observed: its rows read, used and dropped, whatever
// the imputed sets hold: a stacked file's other sets, frequency weights
// expanded into one row per unit), else Data.
func (or *OutcomeResult) AsRead() *data.Dataset {
	if or.Observed != nil {
		return or.Observed
	}
	return or.Data
}

// FreeSet is the set of terms allowed to vary in partial and
// constrained models of one approach, and where it came from.
type FreeSet struct {
	Approach   fit.Comparison
	Predictors []string
	Source     string // "plan" or "stepwise"
}

// StepwiseRecord is the stepwise selection of one approach.
type StepwiseRecord struct {
	Approach fit.Comparison
	Link     fit.Link
	Result   *fit.StepwiseResult
}

// FitEntry is one fitted model.
type FitEntry struct {
	ID        string // approach/effects/link (fit.ModelID), or approach/only-X-parallel/link
	Approach  fit.Comparison
	Effects   fit.Structure
	Link      fit.Link
	Auxiliary bool // fitted for tests only, never a candidate
	// OnlyParallel names the one parallel predictor of an auxiliary fit in
	// which every other predictor is nonparallel (per-predictor LR tests).
	OnlyParallel string
	Spec         Spec
	Result       *fit.Result
	Err          string // the fit could not be attempted (bad input for this model)
	Verdict      string // kept, rejected or chosen (candidates only)
	Rejected     string // the rule that rejected it, with its numbers
	// RejectedRule is the number of the rule that rejected it, 1-based
	// in plan order as the decision log numbers the rules (0: no rule did).
	RejectedRule int
	// Pooled holds Rubin's rules for this fit on imputed data (nil
	// otherwise): Result then has the pooled estimates and total covariance.
	Pooled *impute.Pooled `json:"-"`
}

// OK reports whether the fit has usable estimates and the covariance the
// plan asks for: a fit whose step after fitting failed (Err with a Result:
// a sandwich or jackknife covariance that could not be computed) is not
// usable, so that no test or interval reads the covariance it kept.
func (f *FitEntry) OK() bool { return f != nil && f.Result != nil && f.Err == "" && f.Result.OK() }

// Problem says why a fit that is not OK has no usable estimates: not
// fitted (its error), its status and message (no finite maximum, not
// converged, ...), or the covariance step that failed.
func (f *FitEntry) Problem() string {
	switch {
	case f.Result == nil:
		return "not fitted: " + f.Err
	case !f.Result.OK() && f.Result.Message != "":
		return string(f.Result.Status) + ": " + f.Result.Message
	case !f.Result.OK() || f.Err == "":
		return string(f.Result.Status)
	}
	return f.Err
}

// likelihoodUsable: the entry's log-likelihood can enter criteria and
// likelihood ratios (fit.Result.LikelihoodUsable).
func (f *FitEntry) likelihoodUsable() bool {
	return f != nil && f.Result != nil && f.Result.LikelihoodUsable()
}

// TestBlock holds the parallel-lines tests and nested likelihood-ratio
// tests of one approach and link.
type TestBlock struct {
	Approach    fit.Comparison
	Link        fit.Link
	Global      []fit.Test // lr, score, wald, brant, wolfe_gould (those asked for)
	PerVariable []VarTests
	Nested      []NestedTest
}

// VarTests are the per-variable parallel-lines tests of one predictor.
type VarTests struct {
	Predictor string     `json:"predictor"`
	Tests     []fit.Test `json:"tests"`
}

// NestedTest is a likelihood-ratio test between two fitted effect
// structures.
type NestedTest struct {
	Restricted string   `json:"restricted"`
	Full       string   `json:"full"`
	Test       fit.Test `json:"test"`
}

// RuleOutcome is what one decision rule did to every candidate.
type RuleOutcome struct {
	Rule        plan.Rule
	Description string
	Verdicts    []Verdict
}

// Verdict is one rule's decision on one model.
type Verdict struct {
	Model  string `json:"model"`
	Kept   bool   `json:"kept"`
	Reason string `json:"reason"`
	// Numbers are the numbers the verdict used, by name (the same as in
	// Reason, unrounded), e.g. "p against cumulative/nonparallel/logit".
	Numbers map[string]float64 `json:"numbers,omitempty"`
}
