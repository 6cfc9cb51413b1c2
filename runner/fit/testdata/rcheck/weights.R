# Frequency weights equal duplicated rows.
#
# R's esoph (datasets package, ?esoph: "Smoking, Alcohol and (O)esophageal
# Cancer", Breslow & Day 1980) as one row per cell and case status with the
# number of subjects as frequency weight (esoph_long in common.R), exported
# to esoph.csv. Outcome: case status (category 1 = control, 2 = case);
# predictors: the scores of agegp, alcgp and tobgp; clusters: the cells.
# Each link is fitted by glm twice: with the weights ("w") and on the data
# with every row repeated as often as its weight says ("x").

long <- esoph_long()
write.csv(long, "esoph.csv", row.names = FALSE)
Z <- cbind(1, as.matrix(long[, c("agegp", "alcgp", "tobgp")]))
sgn <- c(1, -1, -1, -1)
e <- as.numeric(long$case == 0)
rep_idx <- rep(seq_len(nrow(long)), long$w)
for (link in links) {
  bw <- binfit(Z, sgn, e, long$w, link)
  printfit(paste0("esoph.w.", link), bw)
  printsandwiches(paste0("esoph.w.", link), bw, FALSE, long$cell)
  bx <- binfit(Z[rep_idx, ], sgn, e[rep_idx], rep(1, length(rep_idx)), link)
  printfit(paste0("esoph.x.", link), bx)
  printsandwiches(paste0("esoph.x.", link), bx, FALSE, long$cell[rep_idx])
}
