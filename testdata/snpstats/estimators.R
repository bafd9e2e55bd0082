# Per-sample genomic F of cohort189 computed in plain R, independently of
# the Go code, from the published formulas, for stats/estimators_test.go.
# Input: cohort189_genotypes.tsv (written by row_summary.R): samples x
# sites, alternate-allele counts 0/1/2 or NA. Cohort frequencies p from the
# called samples of each site; a site counts for a sample when 0 < p < 1
# and the sample is called.
#   f_hom (Li & Horvitz 1953, Am J Hum Genet 5:107, summed over sites):
#     1 - (heterozygous calls) / (heterozygous calls expected), the
#     expectation sum(2p(1-p) * 2n/(2n-1)), n called at the site
#   diagnostics: polymorphic_sites_called (sites used), homozygous_share
#     (homozygous calls / sites used), homozygous_share_under_hwe
#     (mean of 1 - 2p(1-p) * 2n/(2n-1))
#   Yang, Lee, Goddard & Visscher 2011 (Am J Hum Genet 88:76):
#     f_grm = mean((x-2p)^2/(2p(1-p)) - 1)
#     f_excess_hom = mean(1 - x(2-x)/(2p(1-p)))
#     f_uniting_gametes = mean((x^2 - (1+2p)x + 2p^2)/(2p(1-p)))
#   VanRaden 2008 (J Dairy Sci 91:4414): sum((x-2p)^2) / sum(2p(1-p)) - 1
g <- as.matrix(read.table("cohort189_genotypes.tsv", header = TRUE, sep = "\t",
                          row.names = 1, check.names = FALSE))
n <- colSums(!is.na(g))
p <- colSums(g, na.rm = TRUE) / (2 * n)
d <- 2 * p * (1 - p)
inf <- p > 0 & p < 1
res <- t(sapply(seq_len(nrow(g)), function(i) {
  x <- g[i, ]
  k <- inf & !is.na(x)
  xs <- x[k]; ps <- p[k]; ds <- d[k]; ns <- n[k]
  N <- sum(k)
  het_seen <- sum(xs == 1)
  het_hwe <- sum(ds * 2 * ns / (2 * ns - 1))
  c(polymorphic_sites_called = N, homozygous_share = (N - het_seen) / N,
    homozygous_share_under_hwe = (N - het_hwe) / N,
    f_hom = 1 - het_seen / het_hwe,
    f_grm = mean((xs - 2 * ps)^2 / ds - 1),
    f_excess_hom = mean(1 - xs * (2 - xs) / ds),
    f_uniting_gametes = mean((xs^2 - (1 + 2 * ps) * xs + 2 * ps^2) / ds),
    f_vanraden = sum((xs - 2 * ps)^2) / sum(ds) - 1)
}))
out <- data.frame(sample = rownames(g), apply(res, 2, function(v) sprintf("%.17g", v)))
con <- file("estimators.tsv", "w")
writeLines(sprintf("# R %s; plain-R per-sample F of cohort189 (estimators.R)", getRversion()), con)
write.table(out, con, sep = "\t", quote = FALSE, row.names = FALSE)
close(con)
