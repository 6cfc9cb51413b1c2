# Two categories: every link as a binary glm, with sandwich and
# cluster-robust covariances computed by hand.
#
# 1. R's infert (datasets package, ?infert: "Infertility after Spontaneous
#    and Induced Abortion", Trichopoulos et al. 1976): outcome case (category
#    1 = control, 2 = case), predictors age, parity, induced, spontaneous;
#    clusters: the matched sets (stratum). Exported to infert.csv.
# 2. sim2.csv, written by the Go test (seeded simulation): outcome y (1, 2),
#    predictors x1, x2, sampling weights sw, clusters g.

inf <- data.frame(y = infert$case + 1, age = infert$age, parity = infert$parity,
  induced = infert$induced, spontaneous = infert$spontaneous,
  stratum = infert$stratum)
write.csv(inf, "infert.csv", row.names = FALSE)
Z <- cbind(1, as.matrix(inf[, c("age", "parity", "induced", "spontaneous")]))
sgn <- c(1, -1, -1, -1, -1)
for (link in links) {
  # the event of the binary model is the lower category: F(L) = P(y = 1)
  b <- binfit(Z, sgn, as.numeric(inf$y == 1), rep(1, nrow(inf)), link)
  printfit(paste0("infert.", link), b)
  printsandwiches(paste0("infert.", link), b, FALSE, inf$stratum)
}

sim <- read.csv("sim2.csv")
Z <- cbind(1, as.matrix(sim[, c("x1", "x2")]))
sgn <- c(1, -1, -1)
for (link in links) {
  b <- binfit(Z, sgn, as.numeric(sim$y == 1), sim$sw, link)
  printfit(paste0("sim2.", link), b)
  printsandwiches(paste0("sim2.", link), b, TRUE, sim$g)
}
