// Package simulate draws data sets from a plan's assumptions and data
// dictionary, for `ordplan rehearse` (one data set, the whole plan run on
// it) and `ordplan power` (many, at several sample sizes).
//
// Predictors are drawn independently of each other: a categorical column
// over its levels and a numeric column over its dictionary values with the
// stated proportions (equal by default); a numeric column with a mean and
// standard deviation from a normal distribution, redrawn until it falls in
// the dictionary's range; a numeric column with only a range uniformly on
// it. Weights are 1, the offset 0, and cluster ids number consecutive
// groups of ten rows (with no cluster effect).
//
// Each outcome follows a cumulative model: P(y <= m | x) = F(tau_m - eta_m)
// with eta_m the sum of the stated slopes times the predictors (a slope per
// boundary for a nonparallel term, a slope per level against the reference
// for a categorical column). The cutpoints are solved, by bisection, so
// that the category proportions averaged over a large seeded sample of the
// predictors (the calibration sample) are the stated ones; positive slopes
// move the outcome towards higher categories.
//
// Everything is seeded: the same plan, sample size and replicate number give
// the same bytes.
package simulate
