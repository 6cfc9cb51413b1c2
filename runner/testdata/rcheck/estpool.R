# Pools glm fits of the imputed sets imp1.csv .. impM.csv with the mice
# package (general-purpose multiple imputation): summary of pool() with
# the complete-data degrees of freedom n - 3, each coefficient's t
# statistic, Barnard-Rubin degrees of freedom, p-value and 95% interval.
# Prints "name v1 v2 ..." lines (one per coefficient: (Intercept), x1, x2)
# with 17 significant digits.
suppressPackageStartupMessages(library(mice))
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
m <- as.integer(readLines("m.txt"))
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
sets <- lapply(seq_len(m), function(i) read.csv(sprintf("imp%d.csv", i)))
fits <- lapply(sets, function(d) glm(y ~ x1 + x2, family = binomial, data = d, control = ctl))
s <- summary(pool(as.mira(fits), dfcom = nrow(sets[[1]]) - 3), conf.int = TRUE, conf.level = 0.95)
for (j in seq_len(nrow(s))) out(sprintf("coef%d", j), c(s$estimate[j], s$std.error[j], s$statistic[j], s$df[j], s$p.value[j], s[["2.5 %"]][j], s[["97.5 %"]][j]))
