// Package fit holds the statistics of ordplan: links, comparisons, effect
// structures, the Newton engine, results, tests and predictions. It works on
// plain arrays and never imports the plan layer.
package fit
