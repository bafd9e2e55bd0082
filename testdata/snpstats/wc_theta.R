# Genome-wide Weir & Cockerham (1984, Evolution 38:1358) theta, f and F on
# cohort189 split into three invented herds, written independently of the
# Go code in plain R from the paper's multi-allele formulas (eqs. 2-4,
# summed over both alleles of every site). The Debian archive used here
# has no package implementing these estimators (r-cran-hierfstat is not
# packaged), so this script is the outside check for stats/wc_test.go.
# Input: cohort189_genotypes.tsv (written by row_summary.R).
# Herds: sample i (0-based, file order) goes to herd i %% 3, except every
# sample with i %% 10 == 9, which is unassigned (as popConfig in the tests).
g <- as.matrix(read.table("cohort189_genotypes.tsv", header = TRUE, sep = "\t",
                          row.names = 1, check.names = FALSE))
i <- seq_len(nrow(g)) - 1
herd <- ifelse(i %% 10 == 9, NA, i %% 3)
A <- 0; B <- 0; C <- 0; used <- 0
for (j in seq_len(ncol(g))) {
  x <- g[, j]
  ok <- !is.na(x) & !is.na(herd)
  pops <- sort(unique(herd[ok]))
  n <- sapply(pops, function(k) sum(ok & herd == k))
  keep <- n > 0
  pops <- pops[keep]; n <- n[keep]
  r <- length(pops)
  if (r < 2) next
  nbar <- sum(n) / r
  if (nbar <= 1) next
  nc <- (r * nbar - sum(n^2) / (r * nbar)) / (r - 1)
  alt <- sapply(pops, function(k) sum(x[ok & herd == k]))
  het <- sapply(pops, function(k) sum(x[ok & herd == k] == 1))
  pbar_alt <- sum(alt) / (2 * sum(n))
  if (pbar_alt <= 0 || pbar_alt >= 1) next
  used <- used + 1
  for (u in 1:2) {               # both alleles
    p <- if (u == 1) alt / (2 * n) else 1 - alt / (2 * n)
    h <- het / n
    pbar <- sum(n * p) / (r * nbar)
    s2 <- sum(n * (p - pbar)^2) / ((r - 1) * nbar)
    hbar <- sum(n * h) / (r * nbar)
    a <- nbar / nc * (s2 - 1 / (nbar - 1) * (pbar * (1 - pbar) - (r - 1) / r * s2 - hbar / 4))
    b <- nbar / (nbar - 1) * (pbar * (1 - pbar) - (r - 1) / r * s2 - (2 * nbar - 1) / (4 * nbar) * hbar)
    cc <- hbar / 2
    A <- A + a; B <- B + b; C <- C + cc
  }
}
out <- data.frame(statistic = c("theta", "f", "F", "sites"),
                  value = c(sprintf("%.17g", A / (A + B + C)), sprintf("%.17g", B / (B + C)),
                            sprintf("%.17g", (A + B) / (A + B + C)), used))
con <- file("wc_theta.tsv", "w")
writeLines(sprintf("# R %s; plain-R Weir & Cockerham 1984 on cohort189 in three herds (wc_theta.R)", getRversion()), con)
write.table(out, con, sep = "\t", quote = FALSE, row.names = FALSE)
close(con)
