# Per-unit marginal effects of age in the forward stage logit model of the
# five-category srh (testdata/slopes/srh.csv) on a raw cubic in age (age,
# age^2, age^3: columns up to 6e5) and female, parallel effects. The model
# is one base R glm on the expanded data (a row of category y stands for
# the stages m = 1..min(y, 4): event y = m, an intercept per stage, the
# same slopes), so P(y = k) = h_k prod_{i<k} (1 - h_i), h_m = plogis(a_m +
# x'beta). dP/dage is written out (the derivative of each h through the
# chain rule, with dx/dage = (1, 2 age, 3 age^2, 0)); its delta-method
# standard error with glm's vcov is delta's (slopesdelta.R, run first), the
# step of each coefficient scaled to its column (1e-4 / max |column|, 1e-4
# for the intercepts). Averaged over
# the rows, at the means of age and female, and at age 70, female 1. Prints
# "kind_age e_1 .. e_5 se_1 .. se_5" with 17 significant digits.
d <- read.csv("srh.csv")
lev <- c("poor", "fair", "good", "verygood", "excellent")
J <- 5
y <- match(d$srh, lev)
X <- function(age, female) cbind(age, age^2, age^3, female)
dX <- function(age) cbind(1, 2 * age, 3 * age^2, 0 * age)
Xd <- X(d$age, d$female)
idx <- unlist(lapply(seq_along(y), function(i) rep(i, min(y[i], J - 1))))
m <- unlist(lapply(seq_along(y), function(i) seq_len(min(y[i], J - 1))))
ev <- as.numeric(y[idx] == m)
Xe <- Xd[idx, ]
g <- glm(ev ~ 0 + factor(m) + Xe, family = binomial, control = glm.control(epsilon = 1e-15, maxit = 100))
th <- coef(g)
V <- vcov(g)
dprobs <- function(th, Xr, dXr) {
  a <- th[1:(J - 1)]
  b <- th[-(1:(J - 1))]
  s <- drop(Xr %*% b)
  ds <- drop(dXr %*% b)
  dP <- matrix(0, length(s), J)
  surv <- rep(1, length(s))
  dsurv <- rep(0, length(s))
  for (k in 1:(J - 1)) {
    h <- plogis(a[k] + s)
    dh <- h * (1 - h) * ds
    dP[, k] <- dsurv * h + surv * dh
    dsurv <- dsurv * (1 - h) - surv * dh
    surv <- surv * (1 - h)
  }
  dP[, J] <- dsurv
  colMeans(dP)
}
step <- c(rep(1e-4, J - 1), 1e-4 / apply(abs(Xd), 2, max))
effect <- function(age, female) delta(function(t) dprobs(t, X(age, female), dX(age)), th, V, step)
out("average_age", effect(d$age, d$female))
out("means_age", effect(mean(d$age), mean(d$female)))
out("profile_age", effect(70, 1))
