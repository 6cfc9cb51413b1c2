// Package words holds closed vocabularies: the words of an enumerated type
// (links, comparisons, effect structures, tests, covariance kinds, rules),
// each written once beside its type, with parsing, printing and the lists
// that messages, help and the plan's schema show.
package words
