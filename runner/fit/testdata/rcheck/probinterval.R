# The interval of a predicted probability on its log-odds scale, from R's
# binary glm: for the logit link the log odds of P(y = 1) is glm's linear
# predictor, so the interval is plogis(eta -/+ z se(eta)) with eta and its
# standard error from predict(type = "link", se.fit = TRUE). Prints, for
# each row of new.csv, the probability, its delta-method standard error
# (type = "response") and the two bounds, with 17 significant digits.
d <- read.csv("data.csv")
new <- read.csv("new.csv")
level <- as.numeric(readLines("level.txt"))
f <- glm(y ~ x1 + x2, family = binomial, data = d, control = glm.control(epsilon = 1e-14, maxit = 100))
link <- predict(f, newdata = new, type = "link", se.fit = TRUE)
resp <- predict(f, newdata = new, type = "response", se.fit = TRUE)
z <- qnorm(0.5 + level / 2)
for (j in seq_len(nrow(new))) {
  cat(sprintf("row%d", j), sprintf("%.17g", c(resp$fit[j], resp$se.fit[j],
    plogis(link$fit[j] - z * link$se.fit[j]), plogis(link$fit[j] + z * link$se.fit[j]))), "\n")
}
