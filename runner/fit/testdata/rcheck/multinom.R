# The adjacent-category logit with every effect nonparallel against the
# multinomial logit of nnet::multinom (baseline-category form).
#
# 1. R's esoph (datasets package, ?esoph, Breslow & Day 1980) as one row
#    per cell and case status with frequency weights (esoph_long in
#    common.R), exported to esoph.csv. Outcome: the alcohol group alcgp
#    (4 ordered categories); predictors: the agegp and tobgp scores, case.
# 2. sim4.csv, written by the Go test (seeded simulation): outcome y (1..4),
#    predictors x1, x2, x3.
#
# Each set is fitted twice: against the first category ("first") and, with
# the last category made the reference level, against the last ("last").
# Printed per fit: the log-likelihood, multinom's convergence code (0 when
# its optimizer stopped by the tolerance, not the iteration limit), the
# coefficients column by column (intercepts of the non-reference categories
# in order, then each predictor's) and their standard errors from
# multinom's Hessian.
#
# multinom maximizes with BFGS (optim's vmmin); reltol = 1e-15 with up to
# 10000 iterations makes it stop only when the relative change of the
# log-likelihood is at the rounding level.

library(nnet)

mfit <- function(prefix, X, y, w, ref) {
  lev <- sort(unique(y))
  lev <- c(ref, setdiff(lev, ref))
  d <- data.frame(y = factor(y, levels = lev), X)
  fit <- multinom(y ~ ., data = d, weights = w, Hess = TRUE, trace = FALSE,
    reltol = 1e-15, maxit = 10000)
  out(paste0(prefix, ".convergence"), fit$convergence)
  out(paste0(prefix, ".ll"), as.numeric(logLik(fit)))
  out(paste0(prefix, ".est"), as.vector(coef(fit)))
  out(paste0(prefix, ".se"), as.vector(summary(fit)$standard.errors))
}

long <- esoph_long()
write.csv(long, "esoph.csv", row.names = FALSE)
sim <- read.csv("sim4.csv")
sets <- list(
  esoph = list(X = long[, c("agegp", "tobgp", "case")], y = long$alcgp, w = long$w),
  sim4 = list(X = sim[, c("x1", "x2", "x3")], y = sim$y, w = rep(1, nrow(sim))))
for (s in names(sets)) {
  d <- sets[[s]]
  mfit(paste0(s, ".first"), d$X, d$y, d$w, 1)
  mfit(paste0(s, ".last"), d$X, d$y, d$w, 4)
}
