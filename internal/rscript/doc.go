// Package rscript runs R for the cross-check tests: it finds Rscript, runs
// R scripts in a test's temporary folder, and reads back what they print and
// write. The scripts print one value list per line, "name v1 v2 ...", each
// number with 17 significant digits (sprintf("%.17g")), so that no digit is
// lost on the way; base R has no JSON writer and needs none for this.
//
// A test calls Require first: where Rscript is not on PATH the test is
// skipped with one line.
package rscript
