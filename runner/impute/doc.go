// Package impute pools analyses of multiply imputed data sets: Rubin's
// rules for estimates and covariances (within, between and total
// variance, the Barnard-Rubin degrees of freedom, the relative increase
// in variance and the fraction of missing information per parameter),
// the same rules for one derived quantity (PoolScalar: a marginal effect,
// a predicted probability), the pooled Wald test of several parameters
// (D1), the pooling of chi-square statistics alone (D2) and the pooled
// likelihood-ratio test (D3). It works on plain arrays and does not fit
// models.
package impute
