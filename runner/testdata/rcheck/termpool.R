# The pooled Wald test (D1) of a three-level factor in binary logistic
# regressions fitted with base R's glm on each imputed set imp1.csv ..
# impM.csv (y 0/1, x numeric, g with levels a, b, c), by the
# general-purpose multiple-imputation package mitml: testModels(method =
# "D1") of y ~ x + g against y ~ x, with the complete-data degrees of
# freedom the rows less the parameters of the full model (df.com: the
# small-sample denominator). Prints "d1 F df1 df2 p RIV" with 17
# significant digits.
suppressPackageStartupMessages(library(mitml))
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
m <- as.integer(readLines("m.txt"))
ctl <- glm.control(epsilon = 1e-14, maxit = 100)
sets <- lapply(seq_len(m), function(i) {
  d <- read.csv(sprintf("imp%d.csv", i))
  d$g <- factor(d$g, levels = c("a", "b", "c"))
  d
})
imp <- as.mitml.list(sets)
full <- with(imp, glm(y ~ x + g, family = binomial, control = ctl))
null <- with(imp, glm(y ~ x, family = binomial, control = ctl))
tm <- testModels(full, null, method = "D1", df.com = df.residual(full[[1]]))
out("d1", tm$test[1, c("F.value", "df1", "df2", "P(>F)", "RIV")])
