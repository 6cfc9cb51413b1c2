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
  lipsitz = list(d = c(19.115063630717714, 19.565837658098019, 18.62031801067269, 22.147239989107334), k = 9),
  pearson = list(d = c(10.800048651962889, 8.3522630382378189, 7.9772047587605446, 5.3486773042053235), k = 7),
  deviance = list(d = c(11.387366030423806, 8.7166770946047016, 8.5414598773722847, 5.6391308070965129), k = 7)
)
for (name in names(stats)) {
  s <- stats[[name]]
  d2 <- mitml:::.D2(s$d, s$k)
  out(paste0(name, "_chi2"), s$d)
  out(paste0(name, "_d2"), c(d2$F, d2$k, d2$v, d2$r, pf(max(d2$F, 0), d2$k, d2$v, lower.tail = FALSE)))
}
