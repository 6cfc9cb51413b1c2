# Marginal effects of a numeric column that takes two values, 1 and 2
# (sex12 of tv.csv, invented data written by TestTwoValuedEffectsAgainstGlm),
# in the logistic regression (base R glm) of y == "yes" on sex12 and age:
# the change of P(yes) from sex12 = 1 to sex12 = 2, p2 - p1 with p1, p2 the
# fitted probabilities at each value; its gradient in beta is
# p2 (1 - p2) x2 - p1 (1 - p1) x1 and its delta-method standard error
# sqrt(G' V G) with glm's vcov V. Averaged over the rows (each row's own
# age), at the mean age, and at age 30. Also exp(b) of sex12, its odds
# ratio of 2 against 1. Prints "name effect se" with 17 significant digits.
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
d <- read.csv("tv.csv")
d$yes <- as.numeric(d$y == "yes")
ctl <- glm.control(epsilon = 1e-15, maxit = 100)
g <- glm(yes ~ sex12 + age, family = binomial, data = d, control = ctl)
b <- coef(g)
V <- vcov(g)
change <- function(age) {
  X1 <- cbind(1, 1, age)
  X2 <- cbind(1, 2, age)
  p1 <- plogis(drop(X1 %*% b))
  p2 <- plogis(drop(X2 %*% b))
  G <- colMeans(p2 * (1 - p2) * X2 - p1 * (1 - p1) * X1)
  c(mean(p2 - p1), sqrt(drop(t(G) %*% V %*% G)))
}
out("average", change(d$age))
out("means", change(mean(d$age)))
out("profile", change(30))
out("or", exp(b[["sex12"]]))
