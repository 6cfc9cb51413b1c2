// Package design turns the terms of a plan and the raw data columns into
// the design columns a fit uses, and back.
//
// A raw column is either numeric or categorical (its cells are level
// indices 0..L-1 into the declared levels). A term is one of
//
//   - a numeric column, optionally transformed: log(v + shift) or sqrt(v),
//     then centred (at a value or the sample mean), then scaled by the
//     sample standard deviation, then expanded into a polynomial (raw or
//     orthogonal) or a natural cubic spline basis;
//   - a categorical column, coded by treatment (dummy), sum-to-zero or
//     successive-difference coding;
//   - an interaction of two or more earlier terms (every product of one
//     column of each).
//
// Every constant the data determine (means, standard deviations, quantile
// knots, orthogonal-polynomial coefficients, the levels kept) is computed
// once by Build, frozen in the Design, and reused by Row for new rows.
//
// Column names: a single-column term's column is named after the term; a
// categorical term's columns are "term.level"; polynomial and spline
// columns are "term.1", "term.2", ...; an interaction's columns join one
// column of each component with "&", e.g. "treat.drug&age". Names hold no
// spaces, brackets, '=', '+', '-', '*', ',', ':' or ';', so they can be
// written in hypotheses ("treat.drug&age[2]") and in the command line's
// group syntax.
package design
