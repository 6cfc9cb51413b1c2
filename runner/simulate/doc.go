// Package simulate draws data sets from a plan's assumptions and data
// dictionary, for `ordplan rehearse` (one data set, the whole plan run on
// it) and `ordplan power` (many, at several sample sizes).
//
// Raw columns: the predictors' columns and the columns the subset reads.
// A categorical column is drawn over its levels and a numeric column over
// its dictionary values with the stated proportions (equal by default); a
// numeric column with a mean and standard deviation from a normal
// distribution, within the dictionary's range; a numeric column with only
// a range uniformly on it. Columns with stated correlations are drawn
// together through a Gaussian copula: correlated standard normal scores
// (the Cholesky factor of the stated matrix) turned into each column's own
// distribution by its quantile function; the others independently.
// The weights column is drawn for each row, independently of every other
// column and from a stream of its own, from its dictionary values (equally
// often) or uniformly over its dictionary range, and is 1 when the
// dictionary states neither (Sim.WeightsRecord says which; the reports
// say it). The offset is 0. The cluster column's ids number runs of
// consecutive rows: assumptions.clusters.number of them at every size
// (sizes differing by at most one), or runs of rows_each rows (10 by
// default), so that their number grows with n (Sim.Clusters refuses n
// rows that cannot hold them). Each cluster draws a normal intercept of
// the stated standard deviation (intercept_sd, or from latent_icc through
// the variance of the link's distribution; 0 by default: no cluster
// effect) from a stream of its own, and every outcome of its rows adds it
// to its linear predictors (Sim.ClustersRecord says how; the reports say
// it, and a power study counts the runs' few-clusters warnings per size).
// The predictor columns named in per_cluster are drawn once per cluster,
// from a stream of their own, the row's own draws replaced.
//
// Outcomes: the raw columns become design columns through runner/design,
// the same path as real data, its data-determined constants (means, SDs,
// quantile knots, orthogonal polynomials) frozen on a large seeded sample
// of the predictors (the calibration sample). The stated effects become
// coefficients of the design columns (levels against the reference solved
// through the coding, values at points through the term's columns), and
// each outcome follows the stated comparison (cumulative, stage forward or
// backward, adjacent) and link with L_m = tau_m - x'b_m, the category
// probabilities computed as a fit computes them. The cutpoints are solved
// so that the category proportions averaged over the calibration sample
// (each row with an intercept drawn, under a cluster effect) are the
// stated ones (one at a time for cumulative models, by Newton's
// method for the others); positive coefficients move the outcome towards
// higher categories. The subset is applied by the ordinary reader.
//
// Everything is seeded: the same plan, sample size and replicate number give
// the same bytes.
package simulate
