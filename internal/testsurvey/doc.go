// Package testsurvey holds the invented data and plans that the tests of
// several packages share, each written once: seeded generators of small
// surveys (an outcome in three ordered categories drawn from a cumulative
// logit, with the missing values and imputed sets the imputation tests
// need; a survey whose nonparallel fit separates, LevelSeparated, which
// the benchmarks use too), and the plans of the simulation tests, written
// from the lines they all have. The generators take the caller's seeded
// random stream, so a test's data are fixed by its seed; only tests and
// the benchmarks (bench) import the package.
package testsurvey
