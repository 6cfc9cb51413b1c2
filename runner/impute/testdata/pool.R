# Pools glm fits of the imputed sets imp1.csv .. impM.csv with the mice
# package (general-purpose multiple imputation; its pool.scalar and D3).
# Prints "name v1 v2 ..." lines with 17 significant digits.
suppressPackageStartupMessages(library(mice))
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
m <- as.integer(readLines("m.txt"))
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
sets <- lapply(seq_len(m), function(i) read.csv(sprintf("imp%d.csv", i)))
fit1 <- lapply(sets, function(d) glm(y ~ x1 + x2, family = binomial, data = d, control = ctl))
fit0 <- lapply(sets, function(d) glm(y ~ x1, family = binomial, data = d, control = ctl))
n <- nrow(sets[[1]])
for (j in 1:3) {
  Q <- sapply(fit1, function(f) coef(f)[j])
  U <- sapply(fit1, function(f) vcov(f)[j, j])
  p <- pool.scalar(Q, U, n = n, k = 3)
  out(sprintf("coef%d", j), c(p$qbar, p$ubar, p$b, p$t, p$df, p$r, p$fmi))
  pinf <- pool.scalar(Q, U, n = Inf, k = 3)
  out(sprintf("coefinf%d", j), c(pinf$df, pinf$fmi))
}
d3 <- D3(as.mira(fit1), as.mira(fit0))
out("d3", d3$result[1:5])
out("dev1M", d3$deviances$dev1.M)
out("dev0M", d3$deviances$dev0.M)
out("dev1L", d3$deviances$dev1.L)
out("dev0L", d3$deviances$dev0.L)
