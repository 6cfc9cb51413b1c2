# The test of a data column that makes two terms, with base R's glm:
# pneumo2.csv (y 0/1: normal against mild or severe, exposure in years,
# frequency weights count), the model y ~ exposure + log(exposure). The
# column's test drops both terms: the likelihood-ratio statistic is the
# difference of the deviances of y ~ 1 and the model, on 2 degrees of
# freedom, the Wald statistic b' V^-1 b over both slopes from coef() and
# vcov(). Each term's own test drops it alone. Prints "name chi2 df" lines
# with 17 significant digits.
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
d <- read.csv("pneumo2.csv")
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
fitted <- function(f) glm(f, family = binomial, weights = count, data = d, control = ctl)
full <- fitted(y ~ exposure + log(exposure))
b <- coef(full)
V <- vcov(full)
test <- function(name, reduced, k) {
  r <- fitted(reduced)
  out(paste0("lr_", name), c(deviance(r) - deviance(full), length(b) - length(coef(r))))
  out(paste0("wald_", name), c(t(b[k]) %*% solve(V[k, k], b[k]), length(k)))
}
test("column", y ~ 1, 2:3)
test("exposure", y ~ log(exposure), 2)
test("lexp", y ~ exposure, 3)
