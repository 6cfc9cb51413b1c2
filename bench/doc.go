// Command bench measures the cost of ordplan's fits on generated data and
// writes a Markdown table: time, Newton iterations, peak memory against the
// design matrix, the time of one Newton iteration over the time of the
// weighted cross-products it needs, and the time of the twelve-model grid
// on all cores over the same fits run one after another. Every ratio is
// measured within one run; nothing is asserted.
//
//	go run ./bench -out bench/README.md       # the full table (about 15 minutes here)
//	go run ./bench -smoke                      # a small variant for CI
//	go run ./bench -only targets               # the fitting engine's speed targets only
package main
