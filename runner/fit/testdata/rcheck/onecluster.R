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
