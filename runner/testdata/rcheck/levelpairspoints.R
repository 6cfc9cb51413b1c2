# Pairs of levels of the categorical predictor type at one point in the
# binary logistic regression of housingglm.R (run first; infl the numeric
# score 1, 2, 3). Two points: "means" (infl at its weighted mean, cont at
# its first level low) and "profile" (infl 2.5, cont high). For each pair (a, b) of type's
# levels, a before b in tower, apartment, atrium, terrace, the difference
# p_b - p_a of the fitted probabilities of y = 1 at the point with type at
# b and at a, p = plogis(x'beta); its standard error by the delta method
# written out: the gradient p_b (1 - p_b) x_b - p_a (1 - p_a) x_a, with
# vcov. Prints "means_a_b est se" and "profile_a_b est se" with 17
# significant digits, and "mean_infl" (the point's infl).
row <- function(infl, type, cont) {
  nd <- data.frame(infl = infl, type = factor(type, levels = lv), cont = factor(cont, levels = c("low", "high")))
  drop(model.matrix(~ infl + type + cont, nd))
}
mi <- weighted.mean(d$infl, d$freq)
out("mean_infl", mi)
points <- list(means = list(infl = mi, cont = "low"), profile = list(infl = 2.5, cont = "high"))
for (pn in names(points)) {
  pt <- points[[pn]]
  for (i in 1:3) for (j in (i + 1):4) {
    xa <- row(pt$infl, lv[i], pt$cont)
    xb <- row(pt$infl, lv[j], pt$cont)
    pa <- plogis(sum(xa * b))
    pb <- plogis(sum(xb * b))
    g <- pb * (1 - pb) * xb - pa * (1 - pa) * xa
    out(sprintf("%s_%s_%s", pn, lv[i], lv[j]), c(pb - pa, sqrt(drop(t(g) %*% V %*% g))))
  }
}
