# Pairs of levels of arm in the forward stage logit model of an invented
# four-category outcome (d.csv: y 1..4, sex F/M, arm placebo / "low dose" /
# high-dose, dose, frequency weights w) on sex in sum-to-zero coding (M 1,
# F -1), arm in treatment coding against "low dose", dose - 30 and the
# interaction of arm and dose - 30, parallel effects. The model is one base
# R glm on the expanded data (a row of category y stands for the stages m =
# 1..min(y, 3): event y = m, an intercept per stage, the same slopes,
# weights w), so P(y = k) = h_k prod_{i<k} (1 - h_i), h_m = plogis(a_m +
# x'beta). The difference of a pair (a, b) is the w-weighted mean over the
# rows of P(y = k) with every row's arm set to b less that with it set to
# a; its delta-method error with glm's vcov is delta's (slopesdelta.R, run
# first). Prints "loglik v", "pair_A_B e_1 .. e_4 se_1 .. se_4" (levels as
# P, L, H) with 17 significant digits.
d <- read.csv("d.csv")
J <- 4
X <- function(sex, arm, dose) {
  s <- ifelse(sex == "M", 1, -1)
  p <- as.numeric(arm == "placebo")
  h <- as.numeric(arm == "high-dose")
  dc <- dose - 30
  cbind(s, p, h, dc, p * dc, h * dc)
}
Xd <- X(d$sex, d$arm, d$dose)
idx <- unlist(lapply(seq_along(d$y), function(i) rep(i, min(d$y[i], J - 1))))
m <- unlist(lapply(seq_along(d$y), function(i) seq_len(min(d$y[i], J - 1))))
ev <- as.numeric(d$y[idx] == m)
Xe <- Xd[idx, ]
g <- glm(ev ~ 0 + factor(m) + Xe, family = binomial, weights = d$w[idx], control = glm.control(epsilon = 1e-15, maxit = 100))
th <- coef(g)
V <- vcov(g)
out("loglik", logLik(g))
probs <- function(th, Xr) {
  a <- th[1:(J - 1)]
  s <- drop(Xr %*% th[-(1:(J - 1))])
  P <- matrix(0, length(s), J)
  surv <- rep(1, length(s))
  for (k in 1:(J - 1)) {
    h <- plogis(a[k] + s)
    P[, k] <- surv * h
    surv <- surv * (1 - h)
  }
  P[, J] <- surv
  P
}
w <- d$w / sum(d$w)
at <- function(level) X(d$sex, rep(level, nrow(d)), d$dose)
step <- c(rep(1e-4, J - 1), 1e-4 / apply(abs(Xd), 2, max))
levels <- c(L = "low dose", P = "placebo", H = "high-dose")
for (pair in list(c("L", "P"), c("L", "H"), c("P", "H"))) {
  Xa <- at(levels[[pair[1]]])
  Xb <- at(levels[[pair[2]]])
  out(paste0("pair_", pair[1], "_", pair[2]), delta(function(t) colSums(w * (probs(t, Xb) - probs(t, Xa))), th, V, step))
}
