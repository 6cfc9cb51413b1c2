# Rubin's rules under a cluster-robust covariance, by base R's glm and the
# general-purpose multiple-imputation package mitml: a binary logistic
# regression y ~ x + g (g with levels a, b, c) fitted with glm on each
# imputed set imp1.csv .. impM.csv, whose column site holds the clusters;
# on each set the cluster-robust sandwich computed here by hand, the
# inverse information times the summed outer products of the clusters'
# score sums times G/(G-1) (N-1)/(N-P). Pooled by mitml with the
# complete-data degrees of freedom of clustered errors: testEstimates
# with df.com = G-1 (each slope's t, Barnard-Rubin df and p, relative
# increase in variance and fraction of missing information; lambda = (1 +
# 1/m) B/T computed here), and
# testConstraints (D1) of the two slopes of g with df.com = G-2, whose F
# is then multiplied by (G-2)/(G-1) and referred to F(2, df2) here.
# Prints "name v1 v2 ..." lines with 17 significant digits.
suppressPackageStartupMessages(library(mitml))
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
m <- as.integer(readLines("m.txt"))
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
qhat <- list()
uhat <- list()
G <- NA
for (i in seq_len(m)) {
  d <- read.csv(sprintf("imp%d.csv", i))
  d$g <- factor(d$g, levels = c("a", "b", "c"))
  f <- glm(y ~ x + g, family = binomial, data = d, control = ctl)
  X <- model.matrix(f)
  s <- X * (d$y - fitted(f))
  sums <- rowsum(s, d$site)
  G <- nrow(sums)
  N <- nrow(X)
  P <- ncol(X)
  bread <- vcov(f)
  V <- bread %*% crossprod(sums) %*% bread * G / (G - 1) * (N - 1) / (N - P)
  b <- coef(f)
  names(b) <- c("int", "x", "gb", "gc")
  dimnames(V) <- list(names(b), names(b))
  qhat[[i]] <- b
  uhat[[i]] <- V
}
out("clusters", G)
te <- testEstimates(qhat = qhat, uhat = uhat, df.com = G - 1)$estimates
for (p in c("x", "gb", "gc")) {
  # lambda = (1 + 1/m) B / T by hand from the sets' estimates and variances.
  q <- sapply(qhat, function(b) b[[p]])
  u <- sapply(uhat, function(V) V[p, p])
  B <- var(q)
  lambda <- (1 + 1 / m) * B / (mean(u) + (1 + 1 / m) * B)
  out(p, c(te[p, c("Estimate", "Std.Error", "t.value", "df", "P(>|t|)", "RIV", "FMI")], lambda))
}
tc <- testConstraints(qhat = qhat, uhat = uhat, constraints = c("gb", "gc"), method = "D1", df.com = G - 2)$test
F <- tc[1, "F.value"] * (G - 2) / (G - 1)
df2 <- tc[1, "df2"]
out("d1", c(F, 2, df2, pf(F, 2, df2, lower.tail = FALSE), tc[1, "RIV"]))
