# Shared by slopesstage.R and slopesadjacent.R (run before them): the
# printing of a value list, and a quantity with its delta-method standard
# error.
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
# delta gives f(th) and the delta-method standard errors sqrt(diag(G V G'))
# of the vector function f of the coefficients th with covariance V. G,
# the gradient of f, is taken by central differences refined by
# Richardson's extrapolation over steps h and h/2, h = step[k] for
# coefficient k (each script scales the steps to its columns).
delta <- function(f, th, V, step) {
  G <- sapply(seq_along(th), function(k) {
    d1 <- function(h) {
      e <- rep(0, length(th))
      e[k] <- h
      (f(th + e) - f(th - e)) / (2 * h)
    }
    a <- d1(step[k])
    b <- d1(step[k] / 2)
    b + (b - a) / 3
  })
  c(f(th), sqrt(diag(G %*% V %*% t(G))))
}
