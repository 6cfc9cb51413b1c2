# Stage models as binary glms on the expanded data (one row per stage a
# subject reaches), forward and backward, nonparallel (one glm per stage)
# and parallel (one glm with a threshold per stage).
#
# 1. R's esoph (datasets package, ?esoph, Breslow & Day 1980) as one row
#    per cell and case status with frequency weights (esoph_long in
#    common.R), exported to esoph.csv. Outcome: the alcohol group alcgp
#    (4 ordered categories); predictors: the agegp and tobgp scores, case.
# 2. sim4.csv, written by the Go test (seeded simulation): outcome y (1..4),
#    predictors x1, x2, x3.
#
# Forward, stage m = 1..J-1 (F(L_m) = P(y = m | y >= m)): the rows with
#   y >= m, event y = m.
# Backward, stage m = 1..J-1 (F(L_m) = P(y <= m | y <= m+1)): the rows with
#   y <= m+1, event y <= m.
# Printed theta is in ordplan's order: tau_1..tau_{J-1}, then per predictor
# its slope (parallel) or its slopes b_1..b_{J-1} (nonparallel).

stage_rows <- function(y, J, backward) {
  idx <- integer(0); st <- integer(0); e <- numeric(0)
  for (m in 1:(J - 1)) {
    if (backward) {
      keep <- which(y <= m + 1); ev <- as.numeric(y[keep] <= m)
    } else {
      keep <- which(y >= m); ev <- as.numeric(y[keep] == m)
    }
    idx <- c(idx, keep); st <- c(st, rep(m, length(keep))); e <- c(e, ev)
  }
  list(idx = idx, stage = st, e = e)
}

stagefit <- function(prefix, X, y, w, J, backward, parallel, link) {
  q <- J - 1
  K <- ncol(X)
  ex <- stage_rows(y, J, backward)
  if (parallel) {
    Z <- cbind(outer(ex$stage, 1:q, "==") * 1, X[ex$idx, , drop = FALSE])
    b <- binfit(Z, c(rep(1, q), rep(-1, K)), ex$e, w[ex$idx], link)
    printfit(prefix, b)
    return(invisible())
  }
  theta <- se_glm <- se_obs <- numeric(q * (K + 1))
  ll <- ll_glm <- 0
  for (m in 1:q) {
    sel <- ex$stage == m
    Z <- cbind(1, X[ex$idx[sel], , drop = FALSE])
    b <- binfit(Z, c(1, rep(-1, K)), ex$e[sel], w[ex$idx[sel]], link)
    pos <- c(m, q + (0:(K - 1)) * q + m)
    theta[pos] <- b$theta
    se_glm[pos] <- sqrt(diag(b$V_glm))
    se_obs[pos] <- sqrt(diag(b$V_obs))
    ll <- ll + b$ll
    ll_glm <- ll_glm + b$ll_glm
  }
  out(paste0(prefix, ".theta"), theta)
  out(paste0(prefix, ".ll"), ll)
  out(paste0(prefix, ".ll_glm"), ll_glm)
  out(paste0(prefix, ".se_glm"), se_glm)
  out(paste0(prefix, ".se_obs"), se_obs)
}

long <- esoph_long()
write.csv(long, "esoph.csv", row.names = FALSE)
sim <- read.csv("sim4.csv")
sets <- list(
  esoph = list(X = as.matrix(long[, c("agegp", "tobgp", "case")]), y = long$alcgp, w = long$w),
  sim4 = list(X = as.matrix(sim[, c("x1", "x2", "x3")]), y = sim$y, w = rep(1, nrow(sim))))
for (s in names(sets)) for (link in links) for (dir in c("forward", "backward"))
  for (eff in c("parallel", "nonparallel")) {
    d <- sets[[s]]
    stagefit(paste(s, dir, eff, link, sep = "."), d$X, d$y, d$w, 4,
      dir == "backward", eff == "parallel", link)
  }
