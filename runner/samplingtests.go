package runner

import (
	"strings"

	"ordplan/internal/words"
	"ordplan/runner/fit"
)

// Under sampling weights the fits maximize a pseudo-likelihood: every
// test that rests on the likelihood ignores the sampling design and has
// no chi-square reference, so it is not computed (barredTest) or shown as
// no test (the overall likelihood ratio, the goodness-of-fit statistics);
// only Wald tests with the sandwich covariance stand, and on imputed sets
// only they are pooled, by D1. This file says so once, for the run's
// notes, decisions.json and the report.

// goodnessOfFitTests are the chosen model's goodness-of-fit tests, whose
// statistics are not tests under sampling weights (goodnessOfFit).
var goodnessOfFitTests = []string{"Lipsitz", "Pulkstenis-Robinson"}

// SamplingIgnoredTests names every test that ignores a sampling design:
// the tests that need a likelihood (fit.TestKind.NeedsLikelihood, in the
// order of the vocabulary), then the goodness-of-fit tests.
func SamplingIgnoredTests() []string {
	var out []string
	for _, k := range fit.TestWords.All() {
		if k.NeedsLikelihood() {
			out = append(out, k.Title())
		}
	}
	return append(out, goodnessOfFitTests...)
}

// samplingIgnoredPhrase is SamplingIgnoredTests in a sentence: "Brant,
// likelihood-ratio, score and Wolfe-Gould tests and the goodness-of-fit
// tests (Lipsitz, Pulkstenis-Robinson)".
func samplingIgnoredPhrase() string {
	all := SamplingIgnoredTests()
	lik, gof := all[:len(all)-len(goodnessOfFitTests)], all[len(all)-len(goodnessOfFitTests):]
	return words.AndList(lik) + " tests (likelihood-ratio ones also against the thresholds-only model) and the goodness-of-fit tests (" + strings.Join(gof, ", ") + ")"
}

// SamplingTestsText says which tests stand under sampling weights: the
// run's note.
func SamplingTestsText() string {
	return "the " + samplingIgnoredPhrase() + " rest on the likelihood and ignore the sampling design, so they are not tests here; Wald tests with the sandwich covariance are"
}

// SamplingPoolingText says which tests are pooled over imputed sets under
// sampling weights: only Wald tests, by D1; the tests of
// SamplingIgnoredTests are not tests, so none is pooled (by D3 or D2).
// The one statement for the run's notes, decisions.json and the report.
func SamplingPoolingText() string {
	return "only Wald tests (of parallel lines and of the plan's hypotheses) are pooled, by D1; the " + samplingIgnoredPhrase() + " ignore the sampling design (the fits maximize a pseudo-likelihood), so none of them is a test and none is pooled"
}
