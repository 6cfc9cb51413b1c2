# Predictors far from zero: a binary outcome whose predictor x1 lies near
# 1e6 with a spread of about 1 (far.csv, written by the Go test: seeded
# simulation, simFarFromZero).
#
# 1. Every link: glm (binfit, common.R) on z = x1 - 1e6 (exact in floating
#    point: x1 and 1e6 are within a factor 2), mapped by the identity
#    tau - b1 x1 - b2 x2 = (tau - 1e6 b1) - b1 z - b2 x2: tau = tau_z + 1e6 b1,
#    V = G V_z G' with G the identity plus G[1, 2] = 1e6. glm's own errors
#    (vcov, the inverse expected information; observed for the logit) and the
#    observed information by hand.
# 2. The logit also straight on x1: glm's QR decomposition of the design keeps
#    its digits however far the column lies from zero, but the deviance there
#    moves by rounding at 1e-14, so glm stops at epsilon 1e-10 (the logit's
#    Newton steps converge quadratically, and five of them leave the
#    coefficients good to about 1e-11).
far <- read.csv("far.csv")
z <- far$x1 - 1e6
Z <- cbind(1, z, far$x2)
sgn <- c(1, -1, -1)
G <- diag(3)
G[1, 2] <- 1e6
for (link in links) {
  b <- binfit(Z, sgn, as.numeric(far$y == 1), rep(1, nrow(far)), link)
  th <- b$theta
  th[1] <- th[1] + 1e6 * th[2]
  out(paste0("far.", link, ".theta"), th)
  out(paste0("far.", link, ".ll"), b$ll)
  out(paste0("far.", link, ".se_glm"), sqrt(diag(G %*% b$V_glm %*% t(G))))
  out(paste0("far.", link, ".se_obs"), sqrt(diag(G %*% b$V_obs %*% t(G))))
}
e <- as.numeric(far$y == 1)
raw <- glm(e ~ x1 + x2, family = binomial, data = far, control = glm.control(epsilon = 1e-10, maxit = 100))
if (!raw$converged) stop("glm on x1 as it is did not converge")
out("far.raw_logit.theta", coef(raw) * sgn)
out("far.raw_logit.ll", as.numeric(logLik(raw)))
out("far.raw_logit.se_glm", sqrt(diag(vcov(raw))))
