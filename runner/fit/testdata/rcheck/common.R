# Helpers shared by the cross-check scripts (see crosscheck_r_test.go).
# Base R only: stats::glm here, nnet::multinom in multinom.R. No package made
# for ordinal regression is used.
#
# The scripts run in the test's temporary folder, read the CSV files the Go
# test wrote there, write the R data sets they export, and print one line per
# value list: "name v1 v2 ..." with 17 significant digits.

options(warn = 1)
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
links <- c("logit", "probit", "cloglog", "loglog", "cauchit")

out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")

# The distribution function F of a glm link in log space (log F, log(1-F)),
# its density f and the derivative of the density, for the observed
# information.
linkfuns <- function(link) switch(link,
  logit = list(
    lF = function(z) plogis(z, log.p = TRUE),
    lFc = function(z) plogis(z, lower.tail = FALSE, log.p = TRUE),
    f = function(z) dlogis(z),
    df = function(z) dlogis(z) * (plogis(z, lower.tail = FALSE) - plogis(z))),
  probit = list(
    lF = function(z) pnorm(z, log.p = TRUE),
    lFc = function(z) pnorm(z, lower.tail = FALSE, log.p = TRUE),
    f = function(z) dnorm(z),
    df = function(z) -z * dnorm(z)),
  cloglog = list(
    lF = function(z) log(-expm1(-exp(z))),
    lFc = function(z) -exp(z),
    f = function(z) exp(z - exp(z)),
    df = function(z) exp(z - exp(z)) * (1 - exp(z))),
  cauchit = list(
    lF = function(z) pcauchy(z, log.p = TRUE),
    lFc = function(z) pcauchy(z, lower.tail = FALSE, log.p = TRUE),
    f = function(z) dcauchy(z),
    df = function(z) -2 * z / (pi * (1 + z^2)^2)),
  stop("no such glm link: ", link))

# binfit fits ordplan's binary model P(e = 1) = F(L) with the ordplan link
# `link`, where L = sum_j sgn_j Z_j theta_j: sgn_j = +1 for a threshold column
# (a column of ones, or a stage indicator) and -1 for a predictor, so that
# L = tau - x'b as in docs/models.md. The fit is R's glm, binomial family:
#
#   logit, probit, cloglog, cauchit: glm(e ~ 0 + Z, binomial(link)) models
#     P(e = 1) = F(eta) with eta = Z c, so eta = L and theta = sgn * c.
#   loglog: F(z) = exp(-exp(-z)), so 1 - F(z) = 1 - exp(-exp(-z)) = G(-z) with
#     G(z) = 1 - exp(-exp(z)) the cloglog distribution. Hence
#     P(e = 0) = G(-L), and glm(1 - e ~ 0 + Z, binomial("cloglog")) has
#     eta = -L, so theta = -sgn * c.
#
# In both cases theta = D c with D a diagonal of +-1, so covariances map as
# D V D. w are prior (frequency or sampling) weights.
#
# Returned: theta; the log-likelihood sum_i w_i log P(e_i) (computed in log
# space; also glm's logLik when the weights are whole numbers); the
# covariance from glm (vcov: the inverse expected information, which is the
# observed one for the logit); the inverse observed information computed by
# hand; the weighted score contributions U (row i: w_i times the score of row
# i in glm's coefficients, from glm's working residuals and working weights),
# the bread A^-1 (inverse observed information) and D, for sandwiches.
binfit <- function(Z, sgn, e, w, link) {
  flip <- link == "loglog"
  glink <- if (flip) "cloglog" else link
  r <- if (flip) 1 - e else e
  D <- if (flip) -sgn else sgn
  # Start from the proportions within each threshold column (a 0/1
  # indicator) with slopes 0: from its default start glm's iteration can
  # run away with the cloglog link.
  fam <- binomial(glink)
  start <- numeric(length(sgn))
  for (j in which(sgn > 0)) start[j] <- fam$linkfun(weighted.mean(r[Z[, j] == 1], w[Z[, j] == 1]))
  # binomial() warns about non-integer successes under sampling weights; the
  # estimates are still the weighted maximum likelihood ones.
  fit <- suppressWarnings(glm(r ~ 0 + Z, family = fam, weights = w, start = start, control = ctl))
  lk <- linkfuns(glink)
  if (!fit$converged || any(!is.finite(coef(fit)))) {
    # Fisher scoring can run away with the cauchit link even where the
    # maximum is finite: reach its neighbourhood with optim's BFGS on the
    # log-likelihood, then let glm iterate to convergence from there.
    nll <- function(c) {
      eta <- drop(Z %*% c)
      -sum(w * ifelse(r == 1, lk$lF(eta), lk$lFc(eta)))
    }
    o <- optim(start, nll, method = "BFGS", control = list(reltol = 1e-12, maxit = 10000))
    fit <- suppressWarnings(glm(r ~ 0 + Z, family = fam, weights = w, start = o$par, control = ctl))
  }
  if (!fit$converged) stop("glm did not converge: ", link)
  # Fisher scoring converges linearly for links other than the canonical
  # logit, and glm stops when the deviance no longer changes in 14 digits,
  # which leaves the coefficients good to about 1e-8. Restart it from its
  # own estimates (each restart runs at least one more iteration) until the
  # coefficients stop moving.
  for (i in 1:50) {
    prev <- coef(fit)
    fit <- suppressWarnings(glm(r ~ 0 + Z, family = fam, weights = w, start = prev, control = ctl))
    if (max(abs(coef(fit) - prev) / pmax(abs(prev), 1e-3)) < 1e-14) break
  }
  cf <- coef(fit)
  eta <- drop(Z %*% cf)
  lF <- lk$lF(eta)
  lFc <- lk$lFc(eta)
  f <- lk$f(eta)
  df <- lk$df(eta)
  ll <- sum(w * ifelse(r == 1, lF, lFc))
  # second derivative of a row's log-likelihood in eta
  a <- f / exp(lF)
  b <- f / exp(lFc)
  d2 <- ifelse(r == 1, df / exp(lF) - a^2, -df / exp(lFc) - b^2)
  A <- crossprod(Z, Z * (-w * d2))
  Ainv <- solve(A)
  U <- Z * (residuals(fit, type = "working") * fit$weights)
  whole <- all(w == round(w))
  list(theta = D * cf, ll = ll, ll_glm = if (whole) as.numeric(logLik(fit)) else NA,
       V_glm = D * t(D * vcov(fit)), V_obs = D * t(D * Ainv),
       U = U, Ainv = Ainv, D = D, w = w, fit = fit)
}

# sandwich: A^-1 B A^-1 times a small-sample factor, mapped to theta.
#   frequency weights, no clusters: B = sum_i w_i s_i s_i', N = sum of weights
#   sampling weights, no clusters:  B = sum_i (w_i s_i)(w_i s_i)', N = rows
#   clusters g: B = sum_g S_g S_g', S_g = sum_{i in g} w_i s_i
# factor: N/(N-P) without clusters, G/(G-1) (N-1)/(N-P) with G clusters, or 1
# when plain.
sandwich <- function(b, sampling = FALSE, cluster = NULL, plain = FALSE) {
  U <- b$U
  P <- ncol(U)
  N <- if (sampling) nrow(U) else sum(b$w)
  if (is.null(cluster)) {
    B <- if (sampling) crossprod(U) else crossprod(U, U / b$w)
    k <- N / (N - P)
  } else {
    S <- rowsum(U, cluster, reorder = TRUE)
    B <- crossprod(S)
    G <- nrow(S)
    k <- G / (G - 1) * (N - 1) / (N - P)
  }
  if (plain) k <- 1
  V <- k * b$Ainv %*% B %*% b$Ainv
  b$D * t(b$D * V)
}

# jackknife: the delete-one-cluster jackknife covariance of binfit's theta,
# each cluster left out in turn and the binary model refitted by glm
# (binfit) on the other rows: V = (G-1)/G sum_g (t_g - t_mean)(t_g - t_mean)'.
jackknife <- function(Z, sgn, e, w, link, cluster) {
  ids <- sort(unique(cluster))
  Th <- t(sapply(ids, function(g) {
    k <- cluster != g
    binfit(Z[k, , drop = FALSE], sgn, e[k], w[k], link)$theta
  }))
  G <- length(ids)
  Dv <- sweep(Th, 2, colMeans(Th))
  (G - 1) / G * crossprod(Dv)
}

# printclusterwald prints, for a cluster-robust covariance V of theta from
# G clusters (the clustered sandwich or the jackknife), the two-sided
# p-values of each theta_j / sqrt(V_jj) on t(G-1), and the Wald statistic W
# of theta_j = 0 for the parameters in `joint` (q of them) with the p-value
# of W (G-q)/((G-1) q) on F(q, G-q) (Hotelling's T-squared approximation).
printclusterwald <- function(prefix, theta, V, G, joint) {
  out(paste0(prefix, "_p"), 2 * pt(-abs(theta / sqrt(diag(V))), G - 1))
  b <- theta[joint]
  W <- drop(t(b) %*% solve(V[joint, joint], b))
  q <- length(joint)
  out(paste0(prefix, "_wald"), c(W, pf(W * (G - q) / ((G - 1) * q), q, G - q, lower.tail = FALSE)))
}

# printjackknife prints the jackknife covariance V of theta from G clusters
# and its tests (printclusterwald).
printjackknife <- function(prefix, theta, V, G, joint) {
  out(prefix, V)
  printclusterwald(prefix, theta, V, G, joint)
}

# printfit prints a binary fit under prefix: theta, the log-likelihoods, the
# standard errors from glm and from the observed information.
printfit <- function(prefix, b) {
  out(paste0(prefix, ".theta"), b$theta)
  out(paste0(prefix, ".ll"), b$ll)
  if (!is.na(b$ll_glm)) out(paste0(prefix, ".ll_glm"), b$ll_glm)
  out(paste0(prefix, ".se_glm"), sqrt(diag(b$V_glm)))
  out(paste0(prefix, ".se_obs"), sqrt(diag(b$V_obs)))
}

# printsandwiches prints the four sandwich covariances (row-major; they are
# symmetric) of a binary fit, and the references of the clustered one
# (printclusterwald: every slope 0).
printsandwiches <- function(prefix, b, sampling, cluster) {
  out(paste0(prefix, ".sandwich"), sandwich(b, sampling))
  out(paste0(prefix, ".sandwich_plain"), sandwich(b, sampling, plain = TRUE))
  out(paste0(prefix, ".clustered"), sandwich(b, sampling, cluster))
  printclusterwald(paste0(prefix, ".clustered"), b$theta, sandwich(b, sampling, cluster),
    length(unique(cluster)), 2:length(b$theta))
  out(paste0(prefix, ".clustered_plain"), sandwich(b, sampling, cluster, plain = TRUE))
}

# esoph_long: R's esoph (datasets package, ?esoph: "Smoking, Alcohol and
# (O)esophageal Cancer", Breslow & Day 1980, the Ille-et-Vilaine case-control
# study) with one row per cell and case status: the grouped factors as their
# integer scores (agegp 1..6, alcgp 1..4, tobgp 1..4), case 0/1, the number
# of subjects w (rows with none dropped) and the cell number.
esoph_long <- function() {
  e <- esoph
  part <- function(case, w) data.frame(cell = seq_len(nrow(e)),
    agegp = as.integer(e$agegp), alcgp = as.integer(e$alcgp),
    tobgp = as.integer(e$tobgp), case = case, w = w)
  long <- rbind(part(1, e$ncases), part(0, e$ncontrols))
  long <- long[long$w > 0, ]
  long <- long[order(long$cell, long$case), ]
  rownames(long) <- NULL
  long
}
