# Two categories: every link as a binary glm, with sandwich and
# cluster-robust covariances computed by hand.
#
# 1. R's infert (datasets package, ?infert: "Infertility after Spontaneous
#    and Induced Abortion", Trichopoulos et al. 1976): outcome case (category
#    1 = control, 2 = case), predictors age, parity, induced, spontaneous;
#    clusters: the matched sets (stratum); also education (3 levels) as
#    3 clusters, whose cluster-robust covariance has rank G-1 = 2: its
#    numerical rank is the number of eigenvalues of the covariance scaled
#    to unit diagonal (cov2cor) above 1e-10 of the largest. The
#    delete-one-cluster jackknife covariance (jackknife in common.R: glm
#    refitted without each cluster) with the 3 education groups and with
#    the matched sets dealt into 10 clusters by stratum modulo 10 (set10),
#    with p-values on t(G-1) and a Wald test of age = parity = 0 referred
#    as W (G-2)/((G-1) 2) to F(2, G-2); the same references on the
#    cluster-robust sandwich by education (age = parity = 0) and by matched
#    set (every slope 0, F(4, G-4)). Exported to infert.csv.
# 2. sim2.csv, written by the Go test (seeded simulation): outcome y (1, 2),
#    predictors x1, x2, sampling weights sw, clusters g.

inf <- data.frame(y = infert$case + 1, age = infert$age, parity = infert$parity,
  induced = infert$induced, spontaneous = infert$spontaneous,
  stratum = infert$stratum, education = as.integer(infert$education),
  set10 = infert$stratum %% 10)
write.csv(inf, "infert.csv", row.names = FALSE)
Z <- cbind(1, as.matrix(inf[, c("age", "parity", "induced", "spontaneous")]))
sgn <- c(1, -1, -1, -1, -1)
for (link in links) {
  # the event of the binary model is the lower category: F(L) = P(y = 1)
  b <- binfit(Z, sgn, as.numeric(inf$y == 1), rep(1, nrow(inf)), link)
  printfit(paste0("infert.", link), b)
  printsandwiches(paste0("infert.", link), b, FALSE, inf$stratum)
  V3 <- sandwich(b, FALSE, inf$education)
  out(paste0("infert.", link, ".clustered3"), V3)
  ev <- eigen(cov2cor(V3), symmetric = TRUE, only.values = TRUE)$values
  out(paste0("infert.", link, ".clustered3_rank"), sum(ev > 1e-10 * max(ev)))
  printclusterwald(paste0("infert.", link, ".clustered3"), b$theta, V3, 3, 2:3)
  for (cl in c("education", "set10")) {
    V <- jackknife(Z, sgn, as.numeric(inf$y == 1), rep(1, nrow(inf)), link, inf[[cl]])
    printjackknife(paste0("infert.", link, ".jack_", cl), b$theta, V, length(unique(inf[[cl]])), 2:3)
  }
}

sim <- read.csv("sim2.csv")
Z <- cbind(1, as.matrix(sim[, c("x1", "x2")]))
sgn <- c(1, -1, -1)
for (link in links) {
  b <- binfit(Z, sgn, as.numeric(sim$y == 1), sim$sw, link)
  printfit(paste0("sim2.", link), b)
  printsandwiches(paste0("sim2.", link), b, TRUE, sim$g)
  V <- jackknife(Z, sgn, as.numeric(sim$y == 1), sim$sw, link, sim$g)
  printjackknife(paste0("sim2.", link, ".jack_g"), b$theta, V, length(unique(sim$g)), 2:3)
}
