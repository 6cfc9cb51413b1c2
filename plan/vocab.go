package plan

import (
	"fmt"
	"strings"

	"ordplan/internal/words"
	"ordplan/runner/fit"
)

// Words that only the plan uses, in the order they are listed in messages.
// The words of the model vocabulary (approaches, effect structures, links,
// tests, covariance kinds) belong to their types in runner/fit.
var (
	directionWords    = []string{"forward", "backward"}
	criterionWords    = []string{"aic", "bic", "tic"}
	againstWords      = []string{AgainstLeast, AgainstNext, AgainstEach}
	missingWords      = []string{"drop", "refuse", MissingImpute}
	weightKindWords   = []string{"frequency", "sampling"}
	selectMethodWords = []string{"stepwise"}
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

// The tests each setting allows, out of fit.TestWords.
var (
	parallelTests = fit.TestWords.All()
	ruleTests     = []fit.TestKind{fit.TestLR, fit.TestWald, fit.TestScore, fit.TestBrant}
	selectTests   = []fit.TestKind{fit.TestWald, fit.TestLR}
)

// Defaults that are lists.
var (
	defaultApproaches    = fit.ComparisonWords.All()
	defaultEffects       = []fit.Structure{fit.ParallelEffects, fit.PartialEffects, fit.ConstrainedEffects, fit.NonparallelEffects}
	defaultLinks         = []fit.Link{fit.Logit}
	defaultParallelLines = []fit.TestKind{fit.TestBrant, fit.TestLR, fit.TestScore, fit.TestWald}
)

// Keys allowed in each mapping.
var (
	topKeys        = keysAt("")
	dataKeys       = keysAt("data")
	imputedKeys    = keysAt("data.imputed")
	imputationKeys = keysAt("data.imputation")
	outcomeKeys    = keysAt("outcomes")
	modelsKeys     = keysAt("models")
	partialKeys    = keysAt("models.partial")
	selectKeys     = keysAt("models.partial.select")
	groupKeys      = keysAt("models.partial.groups")
	testsKeys      = keysAt("tests")
	reportKeys     = keysAt("report")
	stabilityKeys  = keysAt("selection_stability")
)

// orList renders ["a", "b", "c"] as "a, b or c".
func orList(ws []string) string { return words.OrList(ws) }

// unknownWord explains why s is not one of ws, suggesting a match
// that differs only in letter case or separators.
func unknownWord(what, s string, ws []string) string {
	return words.Unknown(what, clip(s), ws)
}

// joinWords lists words of a vocabulary, comma separated.
func joinWords[T fmt.Stringer](xs []T) string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = x.String()
	}
	return strings.Join(out, ", ")
}

// names gives the words of vals.
func names[T fmt.Stringer](vals []T) []string {
	out := make([]string, len(vals))
	for i, v := range vals {
		out[i] = v.String()
	}
	return out
}

// typedWord reads one word of set (what names it in messages), limited to
// allowed, into *dst; *dst keeps its default when the key is absent, null
// or bad.
func typedWord[T interface {
	~int
	String() string
}](m *mapping, key, what string, set words.Set[T], allowed []T, dst *T) {
	var s string
	m.word(key, what, names(allowed), &s)
	if s != "" {
		*dst, _ = set.Parse(s)
	}
}

// typedWords reads a list of words of set, limited to allowed, into *dst;
// see mapping.words.
func typedWords[T interface {
	~int
	String() string
}](m *mapping, key, what string, set words.Set[T], allowed []T, emptyOK bool, dst *[]T) {
	var list []string
	if !m.words(key, what, names(allowed), emptyOK, &list) {
		return
	}
	out := make([]T, 0, len(list))
	for _, w := range list {
		v, _ := set.Parse(w)
		out = append(out, v)
	}
	*dst = out
}
