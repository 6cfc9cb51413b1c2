package plan

import (
	"encoding/json"
	"fmt"
	"strings"

	"ordplan/runner/data"
	"ordplan/runner/fit"
	"ordplan/runner/impute/chained"
)

// Key describes one key of a plan: what it holds, its default and allowed
// words, and a sentence. Spec, the tree of every key, is the one
// description of the plan's keys: the decoder takes the keys each mapping
// allows from it (keysAt), `ordplan help plan` prints it (KeyHelp) and
// `ordplan schema` turns it into a JSON Schema (Schema). To add a key, add
// it here and read it in the decoder; help and schema follow.
type Key struct {
	Name     string
	Kind     Kind
	Doc      string   // one sentence
	Default  string   // as text, "" when none
	Words    []string // allowed words (KindWord, KindWords)
	Required bool
	Keys     []*Key // KindMapping: its keys; KindMap: one key describing every value
	Item     *Key   // KindList: its items
	// Variants: KindRules: the rule kinds, each a key whose value is true
	// or a mapping of its options (Keys).
	Variants []*Key
	Min, Max *float64 // numbers: bounds (exclusive for KindProbability)
	// MinOpen: Min itself is refused (a number above Min; above).
	MinOpen bool
}

// Kind is what a key holds.
type Kind int

// The kinds of values.
const (
	KindText        Kind = iota // a text
	KindName                    // a column or other name
	KindInteger                 // a whole number
	KindNumber                  // a number
	KindProbability             // a number strictly between 0 and 1
	KindBoolean                 // true or false
	KindWord                    // one of Words
	KindWords                   // a list of Words
	KindNames                   // a list of names
	KindNumbers                 // a list of numbers
	KindMapping                 // a mapping with the keys Keys
	KindMap                     // a mapping of name: value (the value described by Keys[0])
	KindList                    // a list of Item
	KindRules                   // the list of rules
	KindAny                     // a value checked by the decoder only (terms, conditions)
)

var kindText = map[Kind]string{
	KindText: "text", KindName: "name", KindInteger: "whole number", KindNumber: "number",
	KindProbability: "number in (0, 1)", KindBoolean: "true or false", KindWord: "word", KindWords: "list of words",
	KindNames: "list of names", KindNumbers: "list of numbers", KindMapping: "mapping", KindMap: "mapping of name: value",
	KindList: "list", KindRules: "list of rules", KindAny: "see the description",
}

func k(name string, kind Kind, doc string) *Key { return &Key{Name: name, Kind: kind, Doc: doc} }

func (x *Key) req() *Key                  { x.Required = true; return x }
func (x *Key) dflt(s string) *Key         { x.Default = s; return x }
func (x *Key) words(ws []string) *Key     { x.Words = ws; return x }
func (x *Key) keys(ks ...*Key) *Key       { x.Keys = ks; return x }
func (x *Key) item(it *Key) *Key          { x.Item = it; return x }
func (x *Key) variants(v ...*Key) *Key    { x.Variants = v; return x }
func (x *Key) atLeast(v float64) *Key     { x.Min = &v; return x }
func (x *Key) above(v float64) *Key       { x.Min, x.MinOpen = &v, true; return x }
func (x *Key) range_(lo, hi float64) *Key { x.Min, x.Max = &lo, &hi; return x }

func mkey(name, doc string, ks ...*Key) *Key { return k(name, KindMapping, doc).keys(ks...) }

// Spec is every key of a plan.
var Spec = withSensitivity(mkey("", "An analysis plan.",
	k("version", KindInteger, "The plan format; must be 1.").req(),
	k("title", KindText, "The title of the analysis, shown in the report."),
	k("seed", KindInteger, "Seed of everything drawn at random (random starts of constrained fits).").dflt("1"),
	mkey("data", "Where the observations are and how to read them.",
		k("file", KindText, "The data file, relative to the plan's folder: CSV text, an .xlsx workbook (*.xlsx) or a flat Parquet file (*.parquet). Required unless parts is given."),
		k("parts", KindNames, "Or the data as several files (parts) with the same columns, read as one data set in the order listed: file names or patterns (parts/*.parquet; a pattern's files in name order), relative to the plan's folder. run.json and decisions.json record each part's SHA-256, and as the data's SHA-256 the SHA-256 of the parts' hex SHA-256s, one per line. With ordplan run --queue, a fit of plain columns without constrained terms is summed over the workers part by part; the others are fitted by the coordinator, and its log says why."),
		k("missing", KindWord, "Rows with a missing value: drop them (counted in the report), refuse to run, or impute the outcome and the columns the terms read by chained equations (data.imputation) and pool the analyses of the imputed sets by Rubin's rules.").words(missingWords).dflt("drop"),
		k("missing_values", KindNames, "Cell texts that mean a missing value; one that is a number (-99) also marks the same number written otherwise (-99.0) in a column read as numbers.").dflt(missingDefault()),
		k("delimiter", KindWord, "The character between the fields of the CSV file: comma, semicolon or tab (ordplan check suggests one when the header looks different). The file must be UTF-8 text. The new rows of inference.predict are read with the same delimiter and decimal mark. CSV files only: a plan whose data are workbooks or Parquet files gets a warning, the key setting at most the delimiter of CSV new rows.").words(data.DelimiterWords).dflt("comma"),
		k("decimal", KindWord, "The decimal mark of the file's numbers: point (1.5) or comma (1,5; usually with delimiter: semicolon). Numbers carry no thousands separators. A workbook's or Parquet file's number cells are numbers whatever the mark; under comma its text cells are read with a decimal comma and its numbers are written with one where they are compared with declared levels (levels: [\"2,5\"] for the number 2.5).").words(data.DecimalWords).dflt("point"),
		k("sheet", KindText, "For an .xlsx workbook (a data file named *.xlsx): the worksheet to read, hidden or not (default: the one visible sheet with cells filled; a hidden sheet is read only when named, and a workbook with several visible sheets with cells needs this key); also the sheet of a workbook of new rows (inference.predict).").dflt("the one visible sheet with cells filled"),
		k("header_row", KindInteger, "For an .xlsx workbook: the sheet row holding the column names; rows above it (a title) are skipped, empty rows are ignored.").dflt("1").atLeast(1),
		k("weights", KindName, "A column of case weights."),
		k("weight_kind", KindWord, "What the weights are: frequency weights (repeated rows) or sampling weights (a pseudo-likelihood with sandwich errors).").words(weightKindWords).dflt("frequency"),
		k("offset", KindName, "A column of known terms added to x'b in every equation: L_m = tau[m] - x'b - offset, so a positive offset moves the outcome towards higher categories, as a positive slope does (with two categories, the offset of a logistic regression of the upper category)."),
		k("cluster", KindName, "A column of cluster ids, for covariance: clustered."),
		mkey("imputed", "Multiply imputed versions of the data (file then holds the original data, whose missing values the report describes): one stacked file with an imputation-number column, or one file per imputed set. Every model is fitted on each set and pooled by Rubin's rules.",
			k("file", KindText, "The stacked file of imputed sets, relative to the plan's folder."),
			k("column", KindName, "Its imputation-number column: 1..m without gaps; rows numbered 0 (the original data) are skipped."),
			k("files", KindNames, "Or one file per imputed set (at least two), with the same columns and rows."),
		),
		mkey("imputation", "With missing: impute, how the program imputes: chained equations over each outcome and the raw columns its terms read (transformations, splines and interactions are computed afterwards from the imputed columns).",
			k("sets", KindInteger, "The number of imputed sets (at least 2).").dflt("20").atLeast(2),
			k("iterations", KindInteger, "Cycles through the incomplete columns before a set is taken (at least 1).").dflt("10").atLeast(1),
			k("seed", KindInteger, "Seed of the imputations (each set has its own stream from it).").dflt("the plan's seed"),
			k("column_models", KindMap, "The imputation model of a column, when not its default: mean_matching (predictive mean matching, numeric default), normal_draw (numeric), logistic (two levels, default), multinomial (unordered levels, default), ordinal (cumulative logit, ordered levels and outcomes, default).").keys(k("", KindWord, "The model.").words(chained.PlanWords())),
			k("convergence_table", KindBoolean, "Show in the report the mean and SD of each column's imputed values after every iteration.").dflt("false"),
			k("write_sets", KindBoolean, "Write the completed data sets the fits used among the outputs, one CSV per outcome (imputed-sets-OUTCOME.csv: a column imputed_set numbering the sets 1..m, the row's data_line in the data file, then the outcome and the columns its terms read, categories and levels as the data write them, numbers to the digits that read back exactly), so that a reviewer can check the imputations or analyse the sets elsewhere. Off by default: the file holds every row once per set (at most 5000000 rows in all). Not part of the registered (frozen) form, since it changes no result.").dflt("false"),
		),
	).req(),
	k("outcomes", KindList, "The ordinal outcomes, each analysed on its own.").req().item(mkey("", "One outcome.",
		k("column", KindName, "The outcome column.").req(),
		k("categories", KindNames, "The outcome's categories in order, lowest first (default: the integer codes of the data, sorted)."),
		k("label", KindText, "The outcome's name in the report (default: the column)."),
		k("predictors", KindAny, "The outcome's own predictor terms, written like the top-level predictors (default: those)."),
	)),
	k("subset", KindList, "Conditions a row must meet to be used; the others are dropped and counted.").item(mkey("", "One condition: a column and one comparison.",
		append([]*Key{k("column", KindName, "The column compared.").req()}, subsetKeys()...)...)),
	k("categorical", KindMap, "Columns read as categories of a predictor, each with its levels.").keys(mkey("", "One categorical column.",
		k("levels", KindNames, "The column's levels, in order.").req(),
		k("reference", KindName, "The reference level (default: the first)."),
		k("coding", KindWord, "How the levels become columns.").words(codingWords).dflt(codingWords[0]),
		k("ordered", KindBoolean, "The levels are ordered.").dflt("false"),
		k("unobserved", KindWord, "A declared level no row has: refuse, or drop its column.").words(unobservedWords).dflt(unobservedWords[0]),
	)),
	k("predictors", KindList, "The predictor terms: a column name, or a mapping that names a transformed column or an interaction.").req().item(
		mkey("", "One term (a column name is also a term).",
			k("name", KindName, "The term's name in tables and hypotheses."),
			k("column", KindName, "The column the term reads."),
			mkey("log", "The logarithm of the column, after adding shift.", k("shift", KindNumber, "Added before the logarithm.")),
			k("sqrt", KindBoolean, "The square root of the column."),
			k("centre", KindAny, "Subtract a value: a number, or mean (the sample mean, computed once and recorded)."),
			k("scale", KindAny, "Divide by the sample standard deviation (after centring): sd."),
			mkey("polynomial", "A polynomial in the column.", k("degree", KindInteger, "The degree.").req(), k("basis", KindWord, "The polynomial basis.").words(polyBasisWords).dflt(polyBasisWords[0])),
			mkey("spline", "A natural cubic spline in the column.", k("knots", KindNumbers, "All knots, increasing (at least 3): the first and last are the boundary knots, beyond which the spline is linear. Knots must lie within the range of the rows used (of the transformed column)."), k("quantiles", KindNumbers, "Knots at these quantiles (probabilities) of the transformed column, computed once and recorded.")),
			k("interact", KindNames, "The product of earlier terms."),
		)),
	mkey("models", "The grid of candidate models: approaches x effect structures x links.",
		k("approaches", KindWords, "How the categories are compared.").words(fit.ComparisonWords.Names()).dflt(joinWords(defaultApproaches)),
		k("direction", KindWord, "The direction of stage models.").words(directionWords).dflt("forward"),
		k("effects", KindWords, "The effect structures of the grid.").words(fit.StructureWords.Names()).dflt(joinWords(defaultEffects)),
		k("links", KindWords, "The links.").words(fit.LinkWords.Names()).dflt(joinWords(defaultLinks)),
		mkey("partial", "Which predictors leave the parallel structure in the partial and constrained effect structures.",
			k("free", KindNames, "The predictors made nonparallel (partial) or constrained (constrained)."),
			mkey("select", "Or choose them by stepwise selection.",
				k("method", KindWord, "The selection method.").words(selectMethodWords).dflt("stepwise"),
				k("alpha", KindProbability, "The level of the selection tests.").dflt("0.05"),
				k("test", KindWord, "The selection test.").words(names(selectTests)).dflt(fit.TestWald.String()),
			),
			k("groups", KindList, "Constraint groups of the constrained effect structure, each with its own common factor.").item(mkey("", "One group.",
				k("name", KindName, "The group's name (required with several groups)."),
				k("predictors", KindNames, "The free predictors of the group.").req(),
			)),
		),
		k("run_every_start", KindBoolean, "Run every start of a constrained or stereotype search to its end, none abandoned early: slower; for checking the search.").dflt("false"),
	),
	mkey("tests", "The tests of the parallel-lines assumption.",
		k("parallel_lines", KindWords, "The tests run for every approach and link.").words(names(parallelTests)).dflt(joinWords(defaultParallelLines)),
		k("alpha", KindProbability, "Their level.").dflt("0.05"),
	),
	k("rules", KindRules, "The decision rules, applied in order; the last is choose or prefer_simpler.").req().variants(
		k(RuleRejectUnconverged, KindBoolean, "Reject fits that did not converge, have no finite maximum, or have a finite maximum so flat that some estimates are not determined."),
		k(RuleRejectNegativeProbabilities, KindBoolean, "Reject cumulative fits that predict a negative probability for a row."),
		mkey(RuleRejectIfTestRejects, "Reject a model when a test against a less constrained model of its approach and link rejects it. The test named is the test used: a plan whose test is not defined for a comparison the rule makes is refused (brant: cumulative logit, parallel against nonparallel; wald and score: no constrained or stereotype models; with sampling weights: wald only).",
			k("test", KindWord, "The test.").words(names(ruleTests)).dflt(fit.TestLR.String()),
			k("alpha", KindProbability, "Its level (default: tests.alpha)."),
			k("against", KindWord, "What a model is tested against: the least constrained model of its approach and link, the next less constrained one, or each less constrained one in turn (rejected when any test rejects; the tests are not corrected for their number).").words(againstWords).dflt(AgainstLeast),
			k("applies_to", KindWords, "The effect structures tested (default: all), each one of models.effects with a less constrained structure to test against (not nonparallel).").words(fit.StructureWords.Names()),
		),
		mkey(RuleRejectIfSimplerIsClose, "Reject a model when a simpler kept model of its approach and link predicts every category probability by less than max_difference apart from it (practical significance). Simpler models are judged first: one this rule rejects is not kept.",
			k("max_difference", KindProbability, "The simpler model suffices when every difference is below this.").req(),
			k("grid", KindMap, "Where predictions are compared: every combination of numeric column: [values] and categorical column: all, a level or [levels], the other columns at their means or reference levels (default: the rows used).").keys(k("", KindAny, "Values of a numeric predictor; all, a level or a list of levels of a categorical one.")),
		),
		mkey(RuleRejectIfSparse, "Reject a model with too few observations per parameter or too small categories.",
			k("per_parameter", KindNumber, "Observations per parameter at least this (rows with sampling weights).").above(0),
			k("smallest_category", KindNumber, "Every outcome category count at least this.").above(0),
			k("within", KindName, "Count the categories within each value of this column (for a predictor: in models where its effect varies across equations)."),
		),
		mkey(RuleRejectIfUnstable, "Reject a model whose information is ill-conditioned or whose constrained search is unstable.",
			k("max_condition", KindNumber, "Largest condition number of the information scaled to unit diagonal.").above(1),
			k("min_starts_agreeing", KindInteger, "Starts of a constrained search reaching the best value.").range_(1, 1000),
		),
		chooseRule(RuleChoose, "Choose the model with the smallest criterion.", "0"),
		chooseRule(RulePreferSimpler, "Among models within margin of the smallest criterion, choose the one with the fewest parameters.", "2"),
	),
	k("covariance", KindWord, "How standard errors are computed.").words(fit.CovarianceWords.Names()).dflt(fit.Observed.String()),
	k("few_clusters", KindWord, "With covariance: clustered, a correction for few clusters: none (the cluster-robust sandwich), or jackknife (the delete-one-cluster jackknife covariance, each model refitted without each cluster in turn from its estimates, G the clusters of the rows used). Either way single estimates, intervals and p-values refer to t on G-1 degrees of freedom and a joint Wald statistic W of q restrictions as W (G-q)/((G-1) q) to F(q, G-q). The jackknife costs G refits per model; a model with a refit that reaches no maximum is refused with the cluster and the reason. On imputed data each imputed set's fits take their own jackknife covariance, pooled by Rubin's rules with complete-data degrees of freedom G-1 (G-q for a joint Wald test of q restrictions, docs/models.md).").words(fit.ClusterCorrectionWords.Names()).dflt(fit.NoCorrection.String()),
	mkey("report", "The written report.",
		k("title", KindText, "The report's title (default: the plan's)."),
		k("focus_predictor", KindName, "The x axis of the predicted-probability chart (default: the first predictor)."),
		k("panels_by", KindName, "A predictor column whose values give the predictions one panel each: a categorical column, a panel per level, or a column holding only 0 and 1 (a randomized arm, say), a panel at 0 and one at 1. Without it, a 0/1 column other than the focus is held at its mean, the share of rows at 1, which no single row has."),
		k("confidence_level", KindProbability, "The level of the intervals.").dflt("0.95"),
		k("timestamp", KindBoolean, "Put the start time in the report (off: same inputs, same bytes).").dflt("false"),
	),
	mkey("inference", "What to report beyond the model choice.",
		k("hypotheses", KindList, "Linear hypotheses on parameters, e.g. \"pilot[1] = pilot[2]\" or \"tau[1] = -tau[4]\", tested by Wald tests.").item(k("", KindText, "One hypothesis.")),
		k("multiplicity", KindWord, "Adjust the hypotheses' p-values for multiplicity over every outcome, each in its chosen model: holm (family-wise error rate) or benjamini_hochberg (false discovery rate); the raw p-values are reported beside.").words(multiplicityWords).dflt(MultiplicityNone),
		k("marginal_effects", KindWords, "The kinds of marginal effects of the chosen model.").words(marginalEffectWords).dflt("average"),
		k("profile", KindMap, "Predictor values for marginal_effects: [profile] (a number, or a level of a categorical column).").keys(k("", KindAny, "A value.")),
		mkey("level_pairs", "Compare every pair of levels of categorical predictors in the chosen model, not only each level against the reference: differences of average marginal effects (and of the probabilities at the means and at the profile, when marginal_effects asks for those) and, under the logit link, odds ratios of one level against another. Off unless given (a predictor of k levels has k(k-1)/2 pairs).",
			k("predictors", KindNames, "The categorical columns whose levels are compared pair by pair, each with three or more levels the rows used can have.").req(),
			k("multiplicity", KindWord, "Adjust the p-values of one predictor's pairs (for one outcome category, or at one boundary) for their number: holm (family-wise error rate), benjamini_hochberg (false discovery rate) or none; the raw p-values are reported beside.").words(multiplicityWords).dflt(MultiplicityHolm),
		),
		k("term_tests", KindWord, "Which tests of each term of the chosen model (does the term matter at all, given the others?) to compute: both, the Wald test only (wald: no refits), the likelihood-ratio test only (lr: one refit of the chosen model without the term, per term and per imputed set), or none; the report says which the plan left out. With sampling weights there is no likelihood-ratio test, so lr is refused.").words(termTestWords).dflt(TermTestsBoth),
		k("predict", KindText, "A file of new rows whose predictions go to predictions-<outcome>.csv: CSV text, an .xlsx workbook (*.xlsx) or a flat Parquet file (*.parquet), read like the data file (delimiter and decimal mark; a workbook's sheet and header row). A row outside the population fitted (failing a subset condition, outside the dictionary's range or values, beyond the data's range) is predicted and flagged (columns outside, outside_why)."),
	),
	mkey("selection_stability", "Optional: how stable the model choice is. ordplan run repeats the whole decision procedure (the same grid, tests and rules, in order) on this many bootstrap resamples of the rows used (whole clusters with data.cluster; frequency weights as that many units; sampling weights kept with their rows), or with draw: chosen_model on this many sets of outcomes simulated from the chosen model at the rows used, the terms' constants (means, knots) kept from the primary analysis, and reports per outcome how often each model is chosen, how often each rule rejects each model and how often each hypothesis is rejected in the model chosen in a resample. A measure of how reproducible the procedure is, selection included; not power, not a p-value. With data.missing: impute each resample of the rows as read is imputed anew with the same settings (bootstrap, then impute); not with data.imputed.",
		k("resamples", KindInteger, "The number of bootstrap resamples (with draw: chosen_model, of simulated sets).").req().range_(MinStabilityResamples, MaxStabilityResamples),
		k("seed", KindInteger, "Seed of the resampling (resample r is drawn from this seed and r alone, so the results do not depend on the workers).").req(),
		k("draw", KindWord, "How each repetition's data are drawn: bootstrap (resamples of the rows used, as above: how often the rules repeat their choice on data like these, leaning towards the less constrained models) or chosen_model (at the rows used, their predictors, weights, offsets and clusters kept, outcomes simulated from the model the primary analysis chose, with its estimates: how often the rules find that model when it holds with these estimates; says nothing about whether it holds; not with data.missing: impute).").words(stabilityDrawWords).dflt(StabilityBootstrap),
	),
	k("dictionary", KindMap, "What each used column holds; check and run validate the data file against it, the report prints it. When given, it describes every predictor, weights, offset and cluster column (the outcome's categories and label stay in outcomes, a categorical column's levels in categorical).").keys(mkey("", "One column.",
		k("label", KindText, "What the column is, for the report."),
		k("unit", KindText, "Its unit of measurement."),
		k("range", KindNumbers, "[min, max]: the smallest and largest allowed value of a numeric column (inclusive); not with values."),
		k("values", KindNames, "The allowed values of a numeric column (codes such as 0, 1); not with range."),
		k("missing", KindNames, "The column's own missing-value codes (such as \"-9\"), besides data.missing_values; missing in this column only."),
		k("assigned_by_chance", KindBoolean, "true for a predictor whose values were given to the units by chance (the treatment of a randomized trial): the report then reads the comparison of its values as caused by that assignment, under the trial's conditions, and the other predictors' effects as associations only. Only for a predictor column.").dflt("false"),
	)),
	mkey("assumptions", "What the data are expected to look like, stated before they exist: ordplan rehearse and ordplan power draw the predictors, make their design columns as a run does, and draw each outcome from the generating model stated here.",
		k("n", KindInteger, "Rows a rehearsal simulates (ordplan rehearse --n overrides).").range_(MinSimulatedRows, MaxSimulatedRows).dflt("500"),
		k("comparison", KindWord, "The comparison of the generating model: cumulative, stage or adjacent (see docs/models.md).").words(fit.ComparisonWords.Names()).dflt("cumulative"),
		k("direction", KindWord, "The direction of a stage generating model (default: models.direction).").words(directionWords),
		k("link", KindWord, "The link of the generating model (default: the plan's first link).").words(fit.LinkWords.Names()),
		k("predictors", KindMap, "How each predictor column (and each column the subset reads) is drawn; default: the dictionary's values or levels equally often, or uniformly over its range.").keys(mkey("", "One column.",
			k("mean", KindNumber, "Mean of a normal draw of a numeric column (with sd; kept within the dictionary's range)."), k("sd", KindNumber, "Its standard deviation (above 0)."),
			k("proportions", KindNumbers, "Shares of the column's dictionary values or categorical levels, in their order, summing to 1."))),
		k("correlations", KindList, "Correlations between numeric predictor columns (others are drawn independently). They are the correlations of the columns' normal scores (a Gaussian copula): each column keeps its own distribution, and two normal columns without a range get exactly this correlation. Together they must be positive definite.").item(mkey("", "One pair.",
			k("between", KindNames, "The two numeric predictor columns, e.g. [age, years_resident].").req(),
			k("r", KindNumber, "Their correlation, above -1 and below 1.").req())),
		k("outcomes", KindMap, "Each outcome's category proportions and the effects of its terms.").req().keys(mkey("", "One outcome.",
			k("proportions", KindNumbers, "Share of each category, lowest first, among the simulated rows the subset keeps (the population the plan analyses; the cutpoints are solved to give them); one per category, summing to 1.").req(),
			k("effects", KindMap, "The effect of each term, the same at every boundary, on the generating link's scale (positive: towards higher categories); terms not named have no effect. A term with one design column (a column, log, sqrt, centred or scaled, or a product of such) takes one slope per unit of that column, on the transformed scale. A categorical term takes level: slope, each level against the reference (whatever the coding). A polynomial or spline takes {at: [x1, x2, ...], values: [v1, v2, ...]}: its contribution at raw values x (only differences count; one point more than its design columns, the curve the columns draw through them), or column: slope per design column (term.1, term.2, ...). An interaction takes column: slope per design column, named as a fit names them (pilot&street_type.through_road); columns not named are 0.").keys(k("", KindAny, "A slope; level: slope; column: slope; or {at, values}.")),
			k("nonparallel", KindMap, "Terms whose effect differs between boundaries: a list of one effect per boundary (categories minus 1), each in the form effects takes; not also in effects.").keys(k("", KindAny, "One effect per boundary.")))),
		mkey("clusters", "How the clusters of data.cluster are simulated (default: runs of 10 consecutive rows, no cluster effect): their number or size, and a cluster effect, a normal random intercept that every row of a cluster adds to its linear predictors (towards higher categories when positive). The stated effects are then within a cluster; the cutpoints are solved over rows with their intercepts drawn, so the stated proportions are those of the whole population. Only with data.cluster.",
			k("number", KindInteger, "The number of clusters, the same at every sample size: the rows are cut into this many runs of consecutive rows, their sizes differing by at most one (at least 2, and at most the rows simulated). Not with rows_each.").atLeast(2),
			k("rows_each", KindInteger, "Or the rows of each cluster: runs of this many consecutive rows (the last may be shorter), so the number of clusters grows with the sample size. Not with number.").dflt("10").atLeast(1),
			k("intercept_sd", KindNumber, "The standard deviation of the clusters' random intercepts, on the generating link's scale (0 or more; 0: no cluster effect). Not with latent_icc.").dflt("0").atLeast(0),
			k("latent_icc", KindNumber, "Or the intraclass correlation on the latent scale, sd^2 / (sd^2 + v), v the variance of the generating link's standard distribution (logit: pi^2/3, probit: 1, cloglog and loglog: pi^2/6; the cauchy link has none, so take intercept_sd): from 0 up to (not including) 1. Not with intercept_sd.").atLeast(0),
			k("per_cluster", KindNames, "Predictor columns drawn once per cluster, the same in every row of it (a treatment assigned by cluster, a clinic's size), as assumptions.predictors and the dictionary say, so that a power study counts their design effect; the others are drawn row by row. Not a column with stated correlations."),
		),
		k("missing", KindMap, "Missing values to put into the simulated data, per column (an outcome or a column the predictors read; default: none), so that a rehearsal runs the plan's data.missing (dropping incomplete rows, or imputing) as a real run would, and a power study counts the information they take away. Each simulated value is then missing with a probability from a logistic model: its log-odds are a constant plus, for each column named in given, the strength times that column's standardized value; the constant is solved so that the share missing among the rows the plan analyses is the proportion.").keys(mkey("", "One column.",
			k("proportion", KindNumber, "The share of the column's values that are missing, from 0 up to (not including) 1.").req(),
			k("given", KindMap, "Missing at random given other columns: column: strength, the change of the log-odds of being missing per standard deviation of that column (an outcome counts by its category number, 1 for the lowest). The columns named must be numeric predictor columns or outcomes that are never missing themselves, and not this column (missingness that depends on the missing value itself is not at random). Without given, missing completely at random.").keys(k("", KindNumber, "The strength.")))),
	),
	k("deviations", KindList, "Why the plan departs from its frozen form (ordplan freeze): each changed key needs a reason, or check and run stop (unless --allow-unregistered-changes). Not part of the frozen form.").item(mkey("", "One deviation.",
		k("key", KindText, "A key path of the canonical form that changed, as the comparison prints it (rules[2].reject_if_test_rejects.alpha), or a section above it (rules[2], rules).").req(),
		k("reason", KindText, "Why it changed, in words a reader of the report understands.").req())),
))

func chooseRule(name, doc, margin string) *Key {
	return mkey(name, doc,
		k("by", KindWord, "The criterion; with sampling weights only tic (Takeuchi's, valid for a pseudo-likelihood).").words(criterionWords).dflt("bic"),
		k("margin", KindNumber, "Criterion differences within this count as ties.").dflt(margin).atLeast(0),
		k("otherwise", KindName, "When every model is rejected: stop (nothing chosen; ordplan run exits 3), or a fallback model approach/effects/link, reported as such.").dflt(OtherwiseStop),
	)
}

func subsetKeys() []*Key {
	var out []*Key
	for _, o := range subsetOps {
		kind := KindAny
		doc := fmt.Sprintf("Keep rows where the column %s this value.", o.op)
		if o.op == "in" || o.op == "not_in" {
			kind, doc = KindNames, fmt.Sprintf("Keep rows whose value is %s these.", map[string]string{"in": "one of", "not_in": "none of"}[o.op])
		}
		out = append(out, k(o.key, kind, doc))
	}
	return out
}

// find returns the key at a dotted path ("models.partial"); list items
// and map values are entered through their item key ("outcomes" gives the
// outcome mapping).
func (x *Key) find(path string) *Key {
	cur := x
	if path == "" {
		return cur
	}
	for _, part := range strings.Split(path, ".") {
		var next *Key
		for _, c := range cur.Keys {
			if c.Name == part {
				next = c
			}
		}
		for _, v := range cur.Variants {
			if v.Name == part {
				next = v
			}
		}
		if next == nil {
			panic("plan: no key " + path + " in Spec")
		}
		for next.Item != nil && next.Kind == KindList {
			next = next.Item
		}
		if next.Kind == KindMap && len(next.Keys) == 1 && next.Keys[0].Kind == KindMapping {
			next = next.Keys[0]
		}
		cur = next
	}
	return cur
}

// keysAt lists the keys the mapping at path allows, in Spec order.
func keysAt(path string) []string {
	var out []string
	for _, c := range Spec.find(path).Keys {
		out = append(out, c.Name)
	}
	return out
}

// KeyHelp lists every key of a plan with its type, default, allowed words
// and sentence.
func KeyHelp() string {
	var b strings.Builder
	b.WriteString("The keys of an analysis plan (YAML). `null` or `~` means \"not set\".\n" +
		"Items of a list are written [i]; the values of a name: value mapping NAME.\n\n")
	var walk func(x *Key, path string)
	line := func(x *Key, path string) {
		t := kindText[x.Kind]
		if x.Kind == KindWord || x.Kind == KindWords {
			t += ": " + strings.Join(x.Words, " | ")
		}
		if x.Min != nil && x.Max != nil {
			t += fmt.Sprintf(", %g to %g", *x.Min, *x.Max)
		} else if x.Min != nil && x.MinOpen {
			t += fmt.Sprintf(", more than %g", *x.Min)
		} else if x.Min != nil {
			t += fmt.Sprintf(", at least %g", *x.Min)
		}
		var extra []string
		if x.Required {
			extra = append(extra, "required")
		}
		if x.Default != "" {
			extra = append(extra, "default "+x.Default)
		}
		if len(extra) > 0 {
			t += "; " + strings.Join(extra, "; ")
		}
		fmt.Fprintf(&b, "%s\n    %s\n    %s\n", path, t, x.Doc)
	}
	walk = func(x *Key, path string) {
		if path != "" {
			line(x, path)
		}
		switch {
		case x.Kind == KindList && x.Item != nil && x.Item.Kind == KindMapping:
			for _, c := range x.Item.Keys {
				walk(c, path+"[i]."+c.Name)
			}
		case x.Kind == KindMap && len(x.Keys) == 1 && x.Keys[0].Kind == KindMapping:
			for _, c := range x.Keys[0].Keys {
				walk(c, path+".NAME."+c.Name)
			}
		case x.Kind == KindMapping:
			for _, c := range x.Keys {
				p := c.Name
				if path != "" {
					p = path + "." + c.Name
				}
				walk(c, p)
			}
		case x.Kind == KindRules:
			for _, v := range x.Variants {
				walk(v, path+"[i]."+v.Name)
			}
		}
	}
	walk(Spec, "")
	return b.String()
}

// Schema is the JSON Schema (draft 2020-12) of a plan, made from Spec: YAML
// editors use it for completion and checking. It checks the shape (keys,
// kinds, allowed words, ranges); `ordplan check` checks the rest (columns,
// rule order, what refers to what).
func Schema() []byte {
	root := schemaOf(Spec)
	root["$schema"] = "https://json-schema.org/draft/2020-12/schema"
	root["$id"] = "https://ordplan.invalid/plan.schema.json"
	root["title"] = "ordplan analysis plan"
	b, err := json.MarshalIndent(root, "", "  ")
	if err != nil {
		panic("plan: schema encoding failed: " + err.Error())
	}
	return append(b, '\n')
}

// nullable lets a key be null ("not set") besides its type.
func nullable(s map[string]any) map[string]any {
	return map[string]any{"anyOf": []any{s, map[string]any{"type": "null"}}}
}

func schemaOf(x *Key) map[string]any {
	s := map[string]any{}
	if x.Doc != "" {
		s["description"] = x.Doc
	}
	num := func(t string) {
		s["type"] = t
		if x.Kind == KindProbability {
			s["exclusiveMinimum"], s["exclusiveMaximum"] = 0, 1
		}
		if x.Min != nil && x.MinOpen {
			s["exclusiveMinimum"] = *x.Min
		} else if x.Min != nil {
			s["minimum"] = *x.Min
		}
		if x.Max != nil {
			s["maximum"] = *x.Max
		}
	}
	switch x.Kind {
	case KindText, KindName:
		s["type"] = "string"
	case KindInteger:
		num("integer")
	case KindNumber, KindProbability:
		num("number")
	case KindBoolean:
		s["type"] = "boolean"
	case KindWord:
		s["enum"] = x.Words
	case KindWords:
		s["type"] = "array"
		s["items"] = map[string]any{"enum": x.Words}
		s["uniqueItems"] = true
	case KindNames:
		s["type"] = "array"
		s["items"] = map[string]any{"type": []string{"string", "number", "boolean"}}
	case KindNumbers:
		s["type"] = "array"
		s["items"] = map[string]any{"type": "number"}
	case KindMapping:
		s["type"] = "object"
		props := map[string]any{}
		var req []string
		for _, c := range x.Keys {
			cs := schemaOf(c)
			if !c.Required {
				cs = nullable(cs)
			}
			props[c.Name] = cs
			if c.Required {
				req = append(req, c.Name)
			}
		}
		s["properties"] = props
		s["additionalProperties"] = false
		if len(req) > 0 {
			s["required"] = req
		}
	case KindMap:
		s["type"] = "object"
		if len(x.Keys) == 1 {
			s["additionalProperties"] = schemaOf(x.Keys[0])
		}
	case KindList:
		s["type"] = "array"
		if x.Item != nil {
			it := schemaOf(x.Item)
			if x.Name == "predictors" {
				// A term is a column name or a mapping.
				it = map[string]any{"anyOf": []any{map[string]any{"type": "string"}, it}}
			}
			s["items"] = it
		}
	case KindRules:
		s["type"] = "array"
		var kinds []any
		for _, v := range x.Variants {
			var val map[string]any
			if v.Kind == KindMapping {
				opts := schemaOf(v)
				delete(opts, "description")
				val = map[string]any{"anyOf": []any{map[string]any{"const": true}, opts}}
			} else {
				val = map[string]any{"anyOf": []any{map[string]any{"const": true}, map[string]any{"type": "object", "maxProperties": 0}}}
			}
			val["description"] = v.Doc
			kinds = append(kinds, map[string]any{
				"type": "object", "properties": map[string]any{v.Name: val},
				"required": []string{v.Name}, "additionalProperties": false,
			})
		}
		s["items"] = map[string]any{"oneOf": kinds}
	}
	return s
}

// missingDefault writes the reader's default missing-value markers.
func missingDefault() string {
	var out []string
	for _, m := range data.DefaultMissing {
		if m == "" {
			m = `""`
		}
		out = append(out, m)
	}
	return strings.Join(out, ", ")
}
