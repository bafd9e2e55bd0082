# Reference values for the exact X-chromosomal Hardy-Weinberg test of
# Graffelman & Weir (2016, Heredity 116:558-568), by full enumeration in
# base R (no packages). Written for fgauge's tests; run from the
# repository root:
#
#   Rscript testdata/tools/xhwe_exact.R > testdata/expected/xhwe_grid.tsv
#
# Model (derived from the paper's null: Hardy-Weinberg proportions in
# females, allele frequency p equal in females and males). Females'
# genotype counts (fAA, fAB, fBB) are multinomial with probabilities
# (p^2, 2pq, q^2); males' allele counts (mA, mB) are binomial (p, q).
# Conditional on the total count nA = 2 fAA + fAB + mA of allele A among
# N = 2 nF + nM chromosomes (binomial(N, p)), p cancels:
#
#   P(mA, fAB | nA) = nF! nM! 2^fAB / (fAA! fAB! fBB! mA! mB!) / choose(N, nA)
#
# Every outcome (mA, fAB) with non-negative counts and the same nF, nM, nA
# is enumerated. p = sum of P over outcomes with P <= P(observed) * (1 + 1e-7)
# (relative tie tolerance); midp = p - P(observed)/2; deficit = P(fAB <=
# observed); excess = P(fAB >= observed). The total of P over the space is
# printed (it must be 1) as a check of the formula.
set.seed(20161)

xhwe <- function(fAA, fAB, fBB, mA, mB) {
  nF <- fAA + fAB + fBB; nM <- mA + mB
  nA <- 2 * fAA + fAB + mA; N <- 2 * nF + nM
  if (nF == 0 || nA == 0 || nA == N) return(c(NA, NA, NA, NA, NA, NA))
  g <- expand.grid(m = 0:nM, h = 0:(2 * nF))
  hA2 <- nA - g$m - g$h                 # twice the female A homozygotes
  ok <- hA2 >= 0 & hA2 %% 2 == 0
  g <- g[ok, ]; hA <- hA2[ok] / 2
  hB <- nF - g$h - hA
  ok <- hB >= 0
  g <- g[ok, ]; hA <- hA[ok]; hB <- hB[ok]
  lp <- lfactorial(nF) + lfactorial(nM) + g$h * log(2) -
    lfactorial(hA) - lfactorial(g$h) - lfactorial(hB) -
    lfactorial(g$m) - lfactorial(nM - g$m) - lchoose(N, nA)
  P <- exp(lp)
  iobs <- which(g$m == mA & g$h == fAB)
  pobs <- P[iobs]
  lobs <- lp[iobs]
  p <- sum(P[lp <= lobs + log1p(1e-7)])
  c(p, p - pobs / 2, sum(P[g$h <= fAB]), sum(P[g$h >= fAB]), pobs, sum(P))
}

# Random tables: sizes and frequencies drawn from several regimes.
tables <- list()
add <- function(fAA, fAB, fBB, mA, mB) tables[[length(tables) + 1]] <<- c(fAA, fAB, fBB, mA, mB)
draw <- function(nF, nM, p, fis, pm) {
  # females with inbreeding fis, males with allele frequency pm
  pr <- c(p^2 + fis * p * (1 - p), 2 * p * (1 - p) * (1 - fis), (1 - p)^2 + fis * p * (1 - p))
  pr <- pmax(pr, 0)
  f <- if (nF > 0) as.vector(rmultinom(1, nF, pr)) else c(0, 0, 0)
  mA <- if (nM > 0) rbinom(1, nM, pm) else 0
  add(f[1], f[2], f[3], mA, nM - mA)
}
regime <- c(rep("small", 300), rep("medium", 300), rep("large", 120), rep("skewed", 150),
            rep("zero_male", 80), rep("zero_female", 30), rep("mono_ish", 80), rep("deviant", 80))
for (r in regime) {
  if (r == "small") { nF <- sample(1:12, 1); nM <- sample(0:12, 1); p <- runif(1); fis <- 0; pm <- p }
  if (r == "medium") { nF <- sample(10:80, 1); nM <- sample(0:80, 1); p <- runif(1, 0.05, 0.95); fis <- 0; pm <- p }
  if (r == "large") { nF <- sample(100:400, 1); nM <- sample(0:400, 1); p <- runif(1, 0.05, 0.95); fis <- 0; pm <- p }
  if (r == "skewed") { nF <- sample(5:300, 1); nM <- sample(0:30, 1); if (runif(1) < 0.5) { t <- nM; nM <- nF; nF <- max(1, t) }
                       p <- runif(1, 0.01, 0.3); fis <- 0; pm <- p }
  if (r == "zero_male") { nF <- sample(2:150, 1); nM <- 0; p <- runif(1, 0.02, 0.98); fis <- runif(1, -0.2, 0.4); pm <- p }
  if (r == "zero_female") { nF <- 0; nM <- sample(1:60, 1); p <- runif(1, 0.1, 0.9); fis <- 0; pm <- p }
  if (r == "mono_ish") { nF <- sample(3:200, 1); nM <- sample(0:200, 1); p <- runif(1, 0, 0.01); fis <- 0; pm <- p }
  if (r == "deviant") { nF <- sample(20:200, 1); nM <- sample(5:200, 1); p <- runif(1, 0.1, 0.9)
                        fis <- runif(1, -0.4, 0.8); pm <- min(max(p + runif(1, -0.3, 0.3), 0.01), 0.99) }
  draw(nF, nM, p, fis, pm)
}
# A few hand-picked corners: single female, single male, all heterozygous.
add(0, 1, 0, 0, 0); add(1, 0, 0, 0, 1); add(0, 1, 0, 1, 1); add(0, 5, 0, 2, 3)
add(5, 0, 5, 0, 10); add(0, 20, 0, 10, 0); add(1, 2, 1, 2, 2); add(3, 0, 0, 0, 3)

cat("f_hom_a\tf_het\tf_hom_b\tm_a\tm_b\tp\tmidp\tdeficit\texcess\tp_obs\tsum_space\n")
for (t in tables) {
  v <- xhwe(t[1], t[2], t[3], t[4], t[5])
  fmt <- ifelse(is.na(v), "NA", sprintf("%.17g", v))
  cat(paste(c(t, fmt), collapse = "\t"), "\n", sep = "")
}
