# Pulkstenis-Robinson statistics of a two-category outcome from glm's fitted
# values (see crosscheck_r_test.go, testRPatternSplit). sim_pr.csv has y in
# {1, 2}, the categorical predictors a (levels 1..3) and b (levels 1..2) and
# the numeric x. The rows of each combination of a and b are ordered by
# their fitted P(y = 2) (equivalently by the ordinal score 1 + P(y = 2)); the
# first floor(m/2) of its m rows form the lower half, the rest the upper
# half. Observed and expected counts of both categories per half give the
# Pearson statistic sum (O - E)^2 / E and the deviance 2 sum O log(O / E).
sim <- read.csv("sim_pr.csv")
g <- glm(I(y == 2) ~ factor(a) + factor(b) + x, family = binomial, data = sim, control = ctl)
p2 <- fitted(g)
pat <- interaction(sim$a, sim$b, drop = TRUE)
half <- integer(nrow(sim))
for (lv in levels(pat)) {
  idx <- which(pat == lv)
  idx <- idx[order(p2[idx])]
  m <- length(idx)
  half[idx] <- ifelse(seq_len(m) <= floor(m / 2), 1L, 2L)
}
grp <- interaction(pat, half, drop = TRUE)
O2 <- tapply(sim$y == 2, grp, sum)
E2 <- tapply(p2, grp, sum)
n <- tapply(rep(1, nrow(sim)), grp, sum)
O <- c(n - O2, O2)
E <- c(n - E2, E2)
dev <- 2 * sum(ifelse(O > 0, O * log(O / E), 0))
out("pr_pearson", sum((O - E)^2 / E))
out("pr_deviance", dev)
out("pr_groups", nlevels(grp))
out("pr_loglik", as.numeric(logLik(g)))
