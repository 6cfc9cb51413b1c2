// Package plan reads, checks and resolves ordplan analysis plans.
//
// A plan is a YAML file that names the data, the ordinal outcomes, the
// predictors, the family of models to fit, the parallel-lines tests to run,
// the rules that pick one model, and how to report the result. Load and
// Parse return a fully resolved Plan (defaults applied) or an Errors value
// listing every problem found, each with file, line, column and key path.
//
// Key paths use dots for mapping keys and zero-based [i] for list items,
// for example "models.partial.free[1]" or "rules[2].choose.by".
package plan
