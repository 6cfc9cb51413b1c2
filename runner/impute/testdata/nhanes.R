# Rubin's rules by the general-purpose multiple-imputation package mice on
# the data set published with it, nhanes (?nhanes: Schafer, J.L. (1997)
# Analysis of Incomplete Multivariate Data, Chapman & Hall, Table 6.14):
# five imputed sets made by mice (seeded), lm(chl ~ age + bmi + hyp) on
# each, pooled by pool(); pool.scalar for one coefficient with the
# complete-data sample size; the t test of each coefficient (summary of
# the pooled fit); D2 (mice::D2, Wald statistics combined by
# mitml) of bmi and hyp; D1 of bmi and hyp by mitml's testModels with
# the complete-data degrees of freedom of lm, the residual ones (its
# small-sample denominator, as mice::D1 passes them). Prints "name v1 v2 ..." lines with 17 significant
# digits: the versions, every set's estimates and covariance, and what
# mice computed from them.
suppressPackageStartupMessages(library(mice))
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
out("r_version", c(R.version$major, strsplit(R.version$minor, ".", fixed = TRUE)[[1]]))
out("mice_version", unlist(packageVersion("mice")))
out("mitml_version", unlist(packageVersion("mitml")))
m <- 5
imp <- mice(nhanes, m = m, seed = 20261202, printFlag = FALSE)
fit <- with(imp, lm(chl ~ age + bmi + hyp))
fit0 <- with(imp, lm(chl ~ age))
out("m", m)
out("df_residual", df.residual(fit$analyses[[1]]))
test <- c("bmi", "hyp")
wald <- numeric(m)
for (i in seq_len(m)) {
  f <- fit$analyses[[i]]
  out(sprintf("est%d", i), coef(f))
  out(sprintf("cov%d", i), vcov(f))
  q <- coef(f)[test]
  wald[i] <- drop(t(q) %*% solve(vcov(f)[test, test], q))
}
pl <- pool(fit)$pooled
for (col in c("estimate", "ubar", "b", "t", "dfcom", "df", "riv", "lambda", "fmi")) out(col, pl[[col]])
# The t test of each pooled coefficient (summary of pool: estimate over
# its total standard error on the Barnard-Rubin degrees of freedom).
sm <- summary(pool(fit))
out("t_statistic", sm$statistic)
out("t_df", sm$df)
out("t_p", sm$p.value)
Q <- sapply(fit$analyses, function(f) coef(f)[["bmi"]])
U <- sapply(fit$analyses, function(f) vcov(f)["bmi", "bmi"])
ps <- pool.scalar(Q, U, n = nrow(nhanes), k = 4)
out("scalar", c(ps$qbar, ps$ubar, ps$b, ps$t, ps$df, ps$r, ps$fmi))
out("wald", wald)
d2 <- D2(fit, fit0)
out("d2", d2$result[1:5])
d1 <- mitml::testModels(fit$analyses, fit0$analyses, method = "D1", df.com = df.residual(fit$analyses[[1]]))
out("d1", d1$test[1:5])
