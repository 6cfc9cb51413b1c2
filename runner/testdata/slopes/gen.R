# Generator of the two invented data sets of the per-unit marginal-effect
# checks (runner/slopes_r_test.go). Make them again with
#   cd runner/testdata/slopes && Rscript --vanilla gen.R
# (R's default random number generators; the files are kept as made).

# sat.csv: a yes/no satisfaction by household income in dollars (a column
# of size 5e4, its product with age of size 2.5e6) and age in years.
set.seed(777)
n <- 1500
income <- round(pmax(5000, rnorm(n, 52000, 18000)))
age <- round(runif(n, 20, 80))
eta <- -1 + 0.00003*(income-50000) + 0.01*(age-50) + 4e-7*(income-50000)*(age-50)
y <- rbinom(n, 1, plogis(eta))
d <- data.frame(sat=ifelse(y==1, "yes", "no"), income, age)
write.csv(d, "sat.csv", row.names=FALSE, quote=FALSE)

# srh.csv: a five-category self-rating by age in years (a raw cubic in age
# reaches 6e5), region, income, bmi and a 0/1 column.
set.seed(20261204)
n <- 900
region <- sample(c("north","south","east","west"), n, replace=TRUE, prob=c(.35,.35,.28,.02))
age <- round(runif(n, 20, 85), 1)
income <- round(exp(rnorm(n, log(30), 0.6)), 2)
bmi <- round(rnorm(n, 26, 4), 1)
female <- rbinom(n, 1, 0.5)
eta <- -0.03*(age-50) + 0.5*log(income) - 0.02*(bmi-25)^2 + 0.3*female +
  ifelse(region=="north", 0.3, ifelse(region=="east", -0.2, ifelse(region=="west", 0.5, 0))) +
  ifelse(region=="north", 0.01*(age-50), 0) + 0.004*(age-50)*log(income)
cuts <- c(-1.5, 0, 1.2, 2.5) + 1.7
u <- rlogis(n)
y <- 1 + rowSums(outer(eta + u, cuts, ">"))
lev <- c("poor","fair","good","verygood","excellent")
d <- data.frame(srh=lev[y], age, region, income, bmi, female)
write.csv(d, "srh.csv", row.names=FALSE, quote=FALSE)

# pain.csv: a four-category pain relief by dose (0 to 40; log(dose + 1), a
# raw square of dose and its product with centred age reach 8e4), age,
# drug and a 0/1 column, drawn from adjacent-category logits.
set.seed(4242)
n <- 700
dose <- sample(c(0, 5, 10, 20, 40), n, replace=TRUE)
age <- round(runif(n, 12, 80))
drug <- sample(c("alpha","beta","gamma"), n, replace=TRUE)
sex <- rbinom(n, 1, .5)
eta <- 0.6*log(dose+1) - 0.0004*dose^2 - 0.01*(age-45) + 0.0005*dose*(age-45) + ifelse(drug=="beta", 0.4, ifelse(drug=="gamma", -0.3, 0))
lev <- c("none","slight","moderate","complete")
sc <- sapply(1:4, function(j) (j-1)*eta + c(0, 0.3, 0.2, -0.8)[j])
p <- exp(sc); p <- p/rowSums(p)
y <- apply(p, 1, function(pp) sample(1:4, 1, prob=pp))
d <- data.frame(relief=lev[y], dose, age, drug, sex)
write.csv(d, "pain.csv", row.names=FALSE, quote=FALSE)
