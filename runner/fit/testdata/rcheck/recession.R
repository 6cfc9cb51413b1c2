# Directions of recession found by R's general-purpose linear-programming
# package lpSolve (Debian r-cran-lpsolve), for the tiny studies that
# recession_test.go writes to rows.csv (y in 1..3, x, b, gv, gw, w) and
# adj.csv (the same columns). Prints one line a model: its name and the
# programme's value, maximize 1'A d subject to A d >= 0 and |d_j| <= 1,
# which is positive exactly when some direction d keeps every row's
# observed category and raises some (separation), 0 when none does.
suppressMessages(library(lpSolve))
recession <- function(A) {
  P <- ncol(A); A2 <- cbind(A, -A)
  r <- lp("max", colSums(A2), rbind(A2, diag(2 * P)),
          c(rep(">=", nrow(A2)), rep("<=", 2 * P)), c(rep(0, nrow(A2)), rep(1, 2 * P)))
  r$objval
}
# Stage (forward) models as binary glm designs on the expanded rows: the
# response of equation m is y = m among the rows with y >= m; a row's sign
# is +1 for a response of 1 and -1 for 0 (A = s * X).
d <- read.csv("rows.csv"); d <- d[d$w > 0, ]; q <- max(d$y) - 1
e <- do.call(rbind, lapply(seq_len(nrow(d)), function(i) {
  r <- d[i, ]; ms <- seq_len(min(r$y, q))
  data.frame(eq = factor(ms, levels = seq_len(q)), resp = as.integer(ms == r$y), x = r$x, b = r$b, gv = r$gv, gw = r$gw)
}))
forms <- list(stage_parallel = ~ 0 + eq + x + b + gv + gw,
              stage_b_nonparallel = ~ 0 + eq + x + b:eq + gv + gw,
              stage_nonparallel = ~ 0 + eq + x:eq + b:eq + gv:eq + gw:eq)
for (n in names(forms)) {
  X <- model.matrix(forms[[n]], e)
  cat(n, sprintf("%.10g", recession((2 * e$resp - 1) * X)), "\n")
}
# The adjacent logit with b's slopes free across the two equations:
# P(c) is proportional to exp(sum_{m >= c} L_m), L_m = tau_m - x'b_m, so a
# direction keeps the observed category c when every other category's
# partial sum gains nothing on it: sum_{m=c}^{k-1} dL_m >= 0 for k > c and
# -sum_{m=k}^{c-1} dL_m >= 0 for k < c. Coordinates (tau1, tau2, x, b1,
# b2, gv, gw).
a <- read.csv("adj.csv"); a <- a[a$w > 0, ]
A <- NULL
for (i in seq_len(nrow(a))) {
  c <- a$y[i]; X <- c(a$x[i], a$b[i], a$gv[i], a$gw[i])
  dL <- rbind(c(1, 0, -X[1], -X[2], 0, -X[3], -X[4]), c(0, 1, -X[1], 0, -X[2], -X[3], -X[4]))
  for (k in 1:3) if (k != c) {
    A <- rbind(A, if (k > c) colSums(dL[c:(k - 1), , drop = FALSE]) else -colSums(dL[k:(c - 1), , drop = FALSE]))
  }
}
cat("adjacent_b_nonparallel", sprintf("%.10g", recession(A)), "\n")
# The tiny study of TestFlatMaximumIsFinite (flat.csv: y in 1..4, x1, x2,
# x3; tinyStudy(42) in the Go tests), whose nonparallel probit fits were
# once reported as separated. The stage model as a binary probit glm on
# the expanded rows (its log-likelihood the stage model's), and the
# programme's value for the stage design and for the cumulative
# comparison's inequalities (a row of category c: dL_c >= 0 for c <= q,
# -dL_{c-1} >= 0 for c >= 2; L_m = tau_m - x'b_m, every slope by equation).
f <- read.csv("flat.csv"); q <- max(f$y) - 1
e <- do.call(rbind, lapply(seq_len(nrow(f)), function(i) {
  r <- f[i, ]; ms <- seq_len(min(r$y, q))
  data.frame(eq = factor(ms, levels = seq_len(q)), resp = as.integer(ms == r$y), x1 = r$x1, x2 = r$x2, x3 = r$x3)
}))
X <- model.matrix(~ 0 + eq + x1:eq + x2:eq + x3:eq, e)
g <- suppressWarnings(glm(resp ~ 0 + X, family = binomial("probit"), data = e,
                          control = glm.control(epsilon = 1e-14, maxit = 100)))
cat("flat_stage_loglik", sprintf("%.17g", as.numeric(logLik(g))), "\n")
cat("flat_stage_nonparallel", sprintf("%.10g", recession((2 * e$resp - 1) * X)), "\n")
cumulative <- function(f) {
  q <- max(f$y) - 1; K <- ncol(f) - 1; A <- NULL
  for (i in seq_len(nrow(f))) {
    c <- f$y[i]; x <- as.numeric(f[i, -1])
    dL <- function(m) { v <- numeric((K + 1) * q); v[m] <- 1; v[q + (seq_len(K) - 1) * q + m] <- -x; v }
    if (c <= q) A <- rbind(A, dL(c))
    if (c >= 2) A <- rbind(A, -dL(c - 1))
  }
  recession(A)
}
cat("flat_cumulative_nonparallel", sprintf("%.10g", cumulative(f)), "\n")
# tinyStudySpread(155, 4) (flat155.csv: y in 1..4, x1, x2), whose
# cumulative nonparallel probit and cloglog fits were once reported as
# separated: the programme's value for the same inequalities.
cat("flat155_cumulative_nonparallel", sprintf("%.10g", cumulative(read.csv("flat155.csv"))), "\n")
