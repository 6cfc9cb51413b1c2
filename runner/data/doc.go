// Package data reads a CSV file into an analysis data set for ordinal
// regression: an ordered outcome, numeric predictors and optional weights,
// offset and cluster ids. Rows with missing values in a used column are
// dropped and counted; any other bad input is reported as an *Error that
// names the file, line, column and value.
package data
