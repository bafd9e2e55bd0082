# Worked exact-test and chi-square p-values from R package genetics (HWE.exact), written
# to hwe_worked.tsv for stats/hwe_test.go. Run: Rscript hwe_worked.R
suppressMessages(library(genetics))
triples <- rbind(c(10, 45, 45), c(57, 14, 50), c(0, 100, 0), c(3, 40, 157),
                 c(120, 60, 20), c(1000, 300, 400), c(2, 2, 96), c(700, 1200, 100))
out <- data.frame()
for (i in seq_len(nrow(triples))) {
  a <- triples[i, 1]; h <- triples[i, 2]; b <- triples[i, 3]
  g <- genotype(c(rep("A/A", a), rep("A/B", h), rep("B/B", b)))
  p <- HWE.exact(g)$p.value
  # 1-df Pearson chi-square without continuity correction
  pc <- suppressWarnings(HWE.chisq(g, correct = FALSE, simulate.p.value = FALSE)$p.value)
  out <- rbind(out, data.frame(n_hom_ref = a, n_het = h, n_hom_alt = b,
                               hwe_exact_p = sprintf("%.17g", p),
                               hwe_chisq_p = sprintf("%.17g", pc)))
}
cat(sprintf("# R %s, genetics %s\n", getRversion(), packageVersion("genetics")), file = stderr())
write.table(out, "hwe_worked.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
