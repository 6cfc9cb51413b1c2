# Per-unit marginal effects of dose and age in the adjacent-category
# nonparallel logit model of the four-category relief (testdata/slopes/
# pain.csv, rows with age >= 18) on log(dose + 1), dose, dose^2, age
# centred at its mean, drug (reference gamma), sex and dose x centred age,
# dose^2 x centred age. That model is the baseline-category logit
# (log P(y = k)/P(y = 1) = x'c_k, every slope free), so it is fitted by
# nnet::multinom and refined by Newton steps on the multinomial
# log-likelihood with its score and information written out; V is the
# inverse information. dP(y = k)/dv = P_k (e_k - sum_j P_j e_j) with
# e_k = dx/dv' c_k; its delta-method standard error is delta's
# (slopesdelta.R, run first), each coefficient's step scaled to its column
# (1e-4 / max |column|). Averaged over the rows, at
# the means (dose, age and sex at their means, drug gamma) and at the
# profile dose 20, age 30, drug beta, sex 0. Prints "kind_variable e_1 ..
# e_4 se_1 .. se_4" with 17 significant digits.
library(nnet)
d0 <- read.csv("pain.csv")
d <- d0[d0$age >= 18, ]
lev <- c("none", "slight", "moderate", "complete")
J <- 4
y <- match(d$relief, lev)
agebar <- mean(d$age)
X <- function(dose, age, drug, sex) {
  ac <- age - agebar
  cbind(1, log(dose + 1), dose, dose^2, ac, as.numeric(drug == "alpha"), as.numeric(drug == "beta"), sex, dose * ac, dose^2 * ac)
}
dX <- function(v, dose, age) {
  z <- 0 * dose
  ac <- age - agebar
  if (v == "dose") cbind(z, 1 / (dose + 1), 1 + z, 2 * dose, z, z, z, z, ac, 2 * dose * ac)
  else cbind(z, z, z, z, 1 + z, z, z, z, dose, dose^2)
}
Xd <- X(d$dose, d$age, d$drug, d$sex)
p <- ncol(Xd)
Y <- outer(y, 1:J, "==") * 1
fit <- multinom(Y ~ 0 + Xd, maxit = 2000, reltol = 1e-14, trace = FALSE)
B <- t(coef(fit))
probs <- function(B, Xr) {
  E <- cbind(0, Xr %*% B)
  E <- exp(E - apply(E, 1, max))
  E / rowSums(E)
}
for (it in 1:50) {
  P <- probs(B, Xd)
  S <- as.vector(t(Xd) %*% (Y - P)[, -1])
  I <- matrix(0, p * (J - 1), p * (J - 1))
  for (a in 2:J) for (b in 2:J) {
    w <- P[, a] * ((a == b) - P[, b])
    I[(a - 2) * p + 1:p, (b - 2) * p + 1:p] <- t(Xd) %*% (Xd * w)
  }
  st <- solve(I, S)
  B <- B + matrix(st, p)
  if (max(abs(st)) < 1e-13) break
}
V <- solve(I)
th <- as.vector(B)
step <- rep(1e-4 / apply(abs(Xd), 2, max), J - 1)
slope <- function(v, dose, age, drug, sex) function(t) {
  Bt <- matrix(t, p)
  P <- probs(Bt, X(dose, age, drug, sex))
  E <- cbind(0, dX(v, dose, age) %*% Bt)
  colMeans(P * (E - rowSums(P * E)))
}
effect <- function(f) delta(f, th, V, step)
for (v in c("dose", "age")) {
  out(paste0("average_", v), effect(slope(v, d$dose, d$age, d$drug, d$sex)))
  out(paste0("means_", v), effect(slope(v, mean(d$dose), mean(d$age), "gamma", mean(d$sex))))
  out(paste0("profile_", v), effect(slope(v, 20, 30, "beta", 0)))
}
