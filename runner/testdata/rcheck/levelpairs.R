# Pairs of levels of the categorical predictor type in the binary logistic
# regression of housingglm.R (run first; infl a factor). For each pair
# (a, b) of type's levels, a before b in tower, apartment, atrium, terrace:
#   - the difference of average predicted probabilities of y = 1: every
#     row's type set to b, then to a, the fitted probabilities averaged
#     with weights freq; its standard error by the delta method, the
#     gradient in glm's coefficients by central differences, with vcov;
#   - the log odds ratio of b against a (the difference of the two levels'
#     coefficients) and its standard error from vcov.
# Prints "pair_a_b est se logor logorse" with 17 significant digits.
design <- function(level) {
  nd <- d
  nd$type <- factor(rep(level, nrow(d)), levels = lv)
  model.matrix(~ infl + type + cont, nd)
}
X <- lapply(lv, design)
names(X) <- lv
avg <- function(beta, level) weighted.mean(plogis(drop(X[[level]] %*% beta)), d$freq)
coefOf <- function(level) if (level == lv[1]) 0 else b[[paste0("type", level)]]
gradOf <- function(level) {
  g <- setNames(numeric(length(b)), names(b))
  if (level != lv[1]) g[[paste0("type", level)]] <- 1
  g
}
for (i in 1:3) for (j in (i + 1):4) {
  a <- lv[i]
  z <- lv[j]
  fn <- function(beta) avg(beta, z) - avg(beta, a)
  g <- sapply(seq_along(b), function(p) {
    h <- 1e-5 * max(1, abs(b[[p]]))
    bp <- b; bm <- b
    bp[p] <- b[p] + h
    bm[p] <- b[p] - h
    (fn(bp) - fn(bm)) / (2 * h)
  })
  go <- gradOf(z) - gradOf(a)
  out(sprintf("pair_%s_%s", a, z), c(fn(b), sqrt(drop(t(g) %*% V %*% g)), coefOf(z) - coefOf(a), sqrt(drop(t(go) %*% V %*% go))))
}
