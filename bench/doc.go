// Command bench measures the cost of ordplan's fits on generated data and
// writes a Markdown table: time, Newton iterations, peak memory against the
// design matrix, the time of one Newton iteration over the time of the
// weighted cross-products it needs, and the time of the twelve-model grid
// on all cores over the same fits run one after another; and the reading of
// data files, the chunked parallel CSV reader against the record-at-a-time
// one. Every ratio is measured within one run; nothing is asserted.
//
//	go run ./bench -out /tmp/bench.md         # the full table (about 15 minutes here), to a
//	                                           # new file (-out refuses one that exists): copy its
//	                                           # sections into bench/README.md by hand
//	go run ./bench -smoke                      # a small variant for CI
//	go run ./bench -only targets               # the fitting engine's speed targets only (with the
//	                                           # peak memory of two single fits and of the 13-model
//	                                           # grid, each in a fresh process)
//	go run ./bench -only grid                  # the 13-model grid: each model alone, then all
//	                                           # through fit.FitGrid, with the grid's peak heap / X
//	go run ./bench -only links                 # single fits at n = 1e6 (K = 10, J = 5) of the three
//	                                           # comparisons, parallel and nonparallel, under every
//	                                           # link: CPU seconds and passes over the data against
//	                                           # the logit's of the same run (-links-repeats runs each)
//	go run ./bench -only ingest                # reading data only: CSV (three dialects) and
//	                                           # Parquet, 1e6 rows x 10 predictors, each reading in
//	                                           # a fresh process: seconds, CPU, MB/s against the
//	                                           # 250 MB/s target, peak heap and RSS against the
//	                                           # design matrix
package main
