# Per-unit marginal effects of income (dollars) and age in the logistic
# regression (base R glm) of sat == "yes" on income, age and their product
# (sat.csv of testdata/slopes): at every row the derivative of P(yes) in a
# variable v is p (1 - p) s with s = dx/dv' beta (dx the derivative of the
# model row: for income (0, 1, 0, age), for age (0, 0, 1, income)); its
# gradient in beta, written out, is p (1 - p) ((1 - 2p) s x + dx), and the
# delta-method standard error is sqrt(G' V G) with glm's vcov V. Averaged
# over the rows, at the means of income and age, and at the profile
# income 80000, age 30. Prints "kind_variable effect se" with 17
# significant digits.
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
d <- read.csv("sat.csv")
y <- as.numeric(d$sat == "yes")
ctl <- glm.control(epsilon = 1e-15, maxit = 100)
g <- glm(y ~ income * age, family = binomial, data = d, control = ctl)
b <- coef(g)
V <- vcov(g)
rows <- function(income, age) cbind(1, income, age, income * age)
slope <- function(income, age, v) {
  X <- rows(income, age)
  z <- 0 * income
  dX <- if (v == "income") cbind(z, 1 + z, z, age) else cbind(z, z, 1 + z, income)
  p <- plogis(drop(X %*% b))
  s <- drop(dX %*% b)
  G <- colMeans(p * (1 - p) * (1 - 2 * p) * s * X + p * (1 - p) * dX)
  c(mean(p * (1 - p) * s), sqrt(drop(t(G) %*% V %*% G)))
}
for (v in c("income", "age")) {
  out(paste0("average_", v), slope(d$income, d$age, v))
  out(paste0("means_", v), slope(mean(d$income), mean(d$age), v))
  out(paste0("profile_", v), slope(80000, 30, v))
}
