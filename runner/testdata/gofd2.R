# D2 of the general-purpose multiple-imputation package mitml (the function
# mice::D2 and mitml's testModels(method = "D2") use, mitml:::.D2) on the
# chi-square statistics of the goodness-of-fit tests of one run of the
# program on four imputed sets (runner/pooledgof_test.go: the chained
# fixture, sets 4, iterations 2): the Lipsitz test (9 df) and the
# Pulkstenis-Robinson Pearson and deviance statistics (7 df) of each set.
# Prints "name v1 v2 ..." lines with 17 significant digits: the versions,
# the statistics, and for each test D2's F, k, v and r with the p-value of
# F(k, v) (a negative F counted as 0, p = 1, as the program does).
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
out("r_version", c(R.version$major, strsplit(R.version$minor, ".", fixed = TRUE)[[1]]))
out("mitml_version", unlist(packageVersion("mitml")))
stats <- list(
  lipsitz = list(d = c(15.171073660307457, 16.75298350527072, 11.363262253182484, 41.820434923839571), k = 9),
  pearson = list(d = c(10.113889630569918, 8.8798148190469597, 14.679014329630894, 6.1777012494372263), k = 7),
  deviance = list(d = c(11.181080527027504, 11.606627726395011, 18.730903945855239, 6.1083645811865726), k = 7)
)
for (name in names(stats)) {
  s <- stats[[name]]
  d2 <- mitml:::.D2(s$d, s$k)
  out(paste0(name, "_chi2"), s$d)
  out(paste0(name, "_d2"), c(d2$F, d2$k, d2$v, d2$r, pf(max(d2$F, 0), d2$k, d2$v, lower.tail = FALSE)))
}
