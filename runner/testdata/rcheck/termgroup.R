# The joint test of a whole constraint group with two categories, with
# base R's glm: housing2.csv (y 0/1, infl, type, cont, frequency weights
# freq), the model y ~ infl + type + cont. With two categories there is one
# boundary and no common factor, so the constrained model is this logistic
# regression, and the test that type and cont (the group) have no effect is
# the difference of the deviances of y ~ infl and the full model, on the
# difference of their numbers of coefficients, and the Wald statistic
# b' V^-1 b over the type and cont coefficients from coef() and vcov().
# Prints "name chi2 df" lines with 17 significant digits.
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
d <- read.csv("housing2.csv")
d$infl <- factor(d$infl, levels = c("low", "medium", "high"))
d$type <- factor(d$type, levels = c("tower", "apartment", "atrium", "terrace"))
d$cont <- factor(d$cont, levels = c("low", "high"))
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
fitted <- function(f) glm(f, family = binomial, weights = freq, data = d, control = ctl)
full <- fitted(y ~ infl + type + cont)
r <- fitted(y ~ infl)
b <- coef(full)
V <- vcov(full)
k <- grep("type|cont", names(b))
out("lr_group", c(deviance(r) - deviance(full), length(coef(full)) - length(coef(r))))
out("wald_group", c(t(b[k]) %*% solve(V[k, k], b[k]), length(k)))
