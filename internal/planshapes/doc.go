// Package planshapes makes analysis plans for structure-aware fuzzing: the
// fuzz bytes choose a base plan and the changes made to it (keys dropped,
// duplicated or added from plan.Spec, values of the right kind or of
// another, out-of-range numbers, lists grown, shrunk or reordered), so that
// the fuzzer reaches the plan checks that byte-level changes to YAML text
// rarely get past the decoder to. Only tests import it.
package planshapes
