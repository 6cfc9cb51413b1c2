# The binary logistic regression (base R glm) of y on infl, type and cont
# in the housing data collapsed to two categories (d.csv), with frequency
# weights freq: infl as a factor of low, medium, high when the file writes
# those levels, else as the numeric score it holds; type and cont as
# factors, the first level the reference. Defines out (prints "name v1
# v2 ..." with 17 significant digits), d, lv (type's levels), f, b (the
# coefficients) and V (their vcov) for the script run after it.
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
d <- read.csv("d.csv", stringsAsFactors = FALSE)
lv <- c("tower", "apartment", "atrium", "terrace")
if (is.character(d$infl)) d$infl <- factor(d$infl, levels = c("low", "medium", "high"))
d$type <- factor(d$type, levels = lv)
d$cont <- factor(d$cont, levels = c("low", "high"))
f <- glm(y ~ infl + type + cont, family = binomial, weights = freq, data = d, control = ctl)
for (k in 1:5) f <- glm(y ~ infl + type + cont, family = binomial, weights = freq, data = d, control = ctl, start = coef(f))
b <- coef(f)
V <- vcov(f)
