# Tests of each term of a binary logistic regression with base R's glm:
# housing2.csv (y 0/1, infl, type, cont, frequency weights freq), the model
# y ~ infl + type + cont + infl:cont. For each term, the likelihood-ratio
# statistic of dropping it (with the interactions containing it) is the
# difference of the two fits' deviances, on the difference of their
# numbers of coefficients; the Wald statistic is b' V^-1 b over the
# dropped coefficients, from coef() and vcov() of the full fit.
# Prints "name chi2 df" lines with 17 significant digits.
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
d <- read.csv("housing2.csv")
d$infl <- factor(d$infl, levels = c("low", "medium", "high"))
d$type <- factor(d$type, levels = c("tower", "apartment", "atrium", "terrace"))
d$cont <- factor(d$cont, levels = c("low", "high"))
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
fitted <- function(f) glm(f, family = binomial, weights = freq, data = d, control = ctl)
full <- fitted(y ~ infl + type + cont + infl:cont)
b <- coef(full)
V <- vcov(full)
term <- function(name, reduced, pattern) {
  r <- fitted(reduced)
  out(paste0("lr_", name), c(deviance(r) - deviance(full), length(coef(full)) - length(coef(r))))
  k <- grep(pattern, names(b))
  out(paste0("wald_", name), c(t(b[k]) %*% solve(V[k, k], b[k]), length(k)))
}
term("infl", y ~ type + cont, "infl")
term("type", y ~ infl + cont + infl:cont, "type")
term("cont", y ~ infl + type, "cont")
term("infl_cont", y ~ infl + type + cont, ":")
# The joint test of a whole constraint group with two categories: the
# model y ~ infl + type + cont, the group type and cont. With one boundary
# there is no common factor, so the constrained model is this logistic
# regression, and the group's tests are the difference of the deviances
# of y ~ infl and the model, and b' V^-1 b over the type and cont
# coefficients.
main <- fitted(y ~ infl + type + cont)
r <- fitted(y ~ infl)
bm <- coef(main)
k <- grep("type|cont", names(bm))
out("lr_group", c(deviance(r) - deviance(main), length(bm) - length(coef(r))))
out("wald_group", c(t(bm[k]) %*% solve(vcov(main)[k, k], bm[k]), length(k)))
