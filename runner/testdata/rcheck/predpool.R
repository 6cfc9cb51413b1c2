# Pools the predicted probabilities of glm fits of the imputed sets
# imp1.csv .. impM.csv at the rows of new.csv with the mice package
# (general-purpose multiple imputation; its pool.scalar), each prediction
# with its delta-method standard error from predict(se.fit = TRUE).
# Prints "name v1 v2 ..." lines with 17 significant digits.
suppressPackageStartupMessages(library(mice))
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
m <- as.integer(readLines("m.txt"))
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
new <- read.csv("new.csv")
sets <- lapply(seq_len(m), function(i) read.csv(sprintf("imp%d.csv", i)))
fits <- lapply(sets, function(d) glm(y ~ x1 + x2, family = binomial, data = d, control = ctl))
pr <- lapply(fits, function(f) predict(f, newdata = new, type = "response", se.fit = TRUE))
n <- nrow(sets[[1]])
for (j in seq_len(nrow(new))) {
  Q <- sapply(pr, function(p) p$fit[j])
  U <- sapply(pr, function(p) p$se.fit[j]^2)
  p <- pool.scalar(Q, U, n = n, k = 3)
  out(sprintf("row%d", j), c(p$qbar, p$t, p$df, p$b))
}
