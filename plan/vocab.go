package plan

import "strings"

// Allowed words, in the order they are listed in messages.
var (
	approachWords     = []string{"cumulative", "stage", "adjacent"}
	directionWords    = []string{"forward", "backward"}
	levelWords        = []string{"parallel", "partial", "constrained", "nonparallel", "stereotype"}
	linkWords         = []string{"logit", "probit", "cloglog", "loglog", "cauchit"}
	parallelTestWords = []string{"brant", "lr", "score", "wald", "wolfe_gould"}
	ruleTestWords     = []string{"lr", "wald", "score", "brant"}
	criterionWords    = []string{"aic", "bic", "tic"}
	againstWords      = []string{AgainstLeast, AgainstNext, AgainstEach}
	covarianceWords   = []string{"oim", "eim", "robust", "robust_hc0", "cluster"}
	missingWords      = []string{"drop", "refuse"}
	weightKindWords   = []string{"frequency", "probability"}
	selectMethodWords = []string{"stepwise"}
	selectTestWords   = []string{"wald", "lr"}
	ruleKindWords     = []string{
		RuleRejectUnconverged,
		RuleRejectNegativeProbabilities,
		RuleRejectIfTestRejects,
		RuleRejectIfSimplerIsClose,
		RuleRejectIfSparse,
		RuleRejectIfUnstable,
		RuleChoose,
		RulePreferSimpler,
	}
)

// Defaults that are lists.
var (
	defaultApproaches    = []string{"cumulative", "stage", "adjacent"}
	defaultLevels        = []string{"parallel", "partial", "constrained", "nonparallel"}
	defaultLinks         = []string{"logit"}
	defaultParallelLines = []string{"brant", "lr", "score", "wald"}
)

// Keys allowed in each mapping.
var (
	topKeys     = []string{"version", "title", "seed", "data", "outcomes", "subset", "categorical", "predictors", "models", "tests", "rules", "covariance", "report", "inference", "dictionary", "assumptions", "deviations"}
	dataKeys    = []string{"file", "missing", "missing_values", "weights", "weight_kind", "offset", "cluster"}
	outcomeKeys = []string{"column", "categories", "label", "predictors"}
	modelsKeys  = []string{"approaches", "direction", "levels", "links", "partial"}
	partialKeys = []string{"free", "select", "groups"}
	selectKeys  = []string{"method", "alpha", "test"}
	groupKeys   = []string{"name", "predictors"}
	testsKeys   = []string{"parallel_lines", "alpha"}
	reportKeys  = []string{"title", "focus_predictor", "panels_by", "confidence_level", "timestamp"}
)

// orList renders ["a", "b", "c"] as "a, b or c".
func orList(words []string) string {
	switch len(words) {
	case 0:
		return ""
	case 1:
		return words[0]
	}
	return strings.Join(words[:len(words)-1], ", ") + " or " + words[len(words)-1]
}

// unknownWord explains why s is not one of words, suggesting a match
// that differs only in letter case or separators.
func unknownWord(what, s string, words []string) string {
	msg := "unknown " + what + " " + quote(s) + " (want " + orList(words) + ")"
	norm := func(w string) string {
		return strings.NewReplacer("-", "_", " ", "_").Replace(strings.ToLower(strings.TrimSpace(w)))
	}
	for _, w := range words {
		if norm(s) == norm(w) {
			return msg + `; did you mean "` + w + `"?`
		}
	}
	return msg
}
