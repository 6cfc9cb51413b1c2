# Reads the completed imputed sets a run wrote (sets.csv, the long table
# of data.imputation.write_sets) as a user would, with read.csv, splits
# them by imputed_set and prints, per set, the outcome's labels, x, and
# g's level as its position among levels.txt (0 for the first), each as
# "name v1 v2 ..." with 17 significant digits.
out <- function(name, v) cat(name, sprintf("%.17g", as.numeric(v)), "\n")
d <- read.csv("sets.csv", colClasses = c(y = "character", g = "character"))
levels <- readLines("levels.txt")
sets <- split(d, d$imputed_set)
out("sets", length(sets))
for (s in names(sets)) {
  e <- sets[[s]]
  out(paste0("line", s), e$data_line)
  out(paste0("y", s), as.numeric(e$y))
  out(paste0("x", s), e$x)
  out(paste0("g", s), match(e$g, levels) - 1)
}
