# Columns whose rows lie in one cluster (TestOneClusterAgainstR):
# onecluster.csv, written by the Go test (oneClusterData, seeded), has a
# binary outcome y (1, 2), predictors x, z, site dummies s1, s2, s3 (each
# site's rows all in one cluster: clusters 1, 2 and 3; the other nine
# clusters are the reference site) and xs1 = x * s1, and clusters g. The
# binary model P(y = 1) = F(tau - x'b) is glm's logit (binfit in
# common.R); the clustered sandwich is computed by hand (sandwich in
# common.R): its rows for tau, x and z are what the program must print,
# and those of s1, s2, s3 and xs1 come out near 0 (the summed scores of
# a cluster vanish on a column whose rows lie in it).
d <- read.csv("onecluster.csv")
Z <- cbind(1, as.matrix(d[, c("x", "z", "s1", "s2", "s3", "xs1")]))
sgn <- c(1, -1, -1, -1, -1, -1, -1)
b <- binfit(Z, sgn, as.numeric(d$y == 1), rep(1, nrow(d)), "logit")
out("oc.theta", b$theta)
out("oc.clustered", sandwich(b, FALSE, d$g))
# The delete-one-cluster jackknife of tau, x and z by hand: glm refitted
# without each cluster in turn on the columns that still vary there (s1
# and xs1 are 0 on every row left without cluster 1, s2 without cluster 2,
# s3 without cluster 3: glm cannot estimate them, and they do not enter
# tau, x or z's maximum), V = (G-1)/G sum_g (t_g - t_mean)(t_g - t_mean)'
# over those three, with its references (printclusterwald: x and z).
e <- as.numeric(d$y == 1)
ids <- sort(unique(d$g))
Th <- t(sapply(ids, function(g) {
  k <- d$g != g
  keep <- which(colSums(abs(Z[k, , drop = FALSE])) > 0)
  binfit(Z[k, keep, drop = FALSE], sgn[keep], e[k], rep(1, sum(k)), "logit")$theta[1:3]
}))
G <- length(ids)
Dv <- sweep(Th, 2, colMeans(Th))
Vj <- (G - 1) / G * crossprod(Dv)
out("oc.jackknife", Vj)
printclusterwald("oc.jk", b$theta[1:3], Vj, G, 2:3)
