// Package skeleton writes the commented plan that `ordplan init` starts an
// analysis with: the columns of the data file (or of a header line) with
// the kind each seems to be, a guessed outcome and predictors, and every
// section of a plan with its choices spelled out, so that the author only
// edits.
package skeleton
