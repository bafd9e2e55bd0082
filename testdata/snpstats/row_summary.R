# Per-sample call rate and heterozygosity of testdata/cohort189.vcf.gz from
# Bioconductor snpStats (Debian r-bioc-snpstats), for stats/snpstats_test.go.
# Run from this folder: Rscript row_summary.R
# Site policy (as testdata/expected/ and fgauge's default with filtered
# records included): one ALT, REF and ALT single bases from ACGT; any
# missing allele makes the call missing. The VCF is parsed here in plain R
# (no VCF package), written to cohort189_genotypes.tsv (0/1/2/NA, one row
# per sample), converted to a SnpMatrix and summarised with row.summary.
suppressMessages(library(snpStats))
lines <- readLines(gzfile("../cohort189.vcf.gz"))
hdr <- strsplit(lines[grepl("^#CHROM", lines)], "\t")[[1]]
samples <- hdr[-(1:9)]
body <- lines[!grepl("^#", lines)]
fields <- strsplit(body, "\t")
bases <- c("A", "C", "G", "T")
keep <- vapply(fields, function(f) f[4] %in% bases && f[5] %in% bases, logical(1))
fields <- fields[keep]
code <- function(s) {
  gt <- sub(":.*", "", s)
  al <- strsplit(gt, "[/|]")[[1]]
  if (length(al) != 2 || any(al == ".")) return(NA_integer_)
  sum(as.integer(al))
}
g <- sapply(fields, function(f) vapply(f[-(1:9)], code, integer(1)))
# g: samples x sites, alt-allele counts
rownames(g) <- samples
colnames(g) <- vapply(fields, function(f) paste(f[1], f[2], sep = ":"), character(1))
write.table(g, "cohort189_genotypes.tsv", sep = "\t", quote = FALSE, na = "NA", col.names = NA)
raw <- g + 1L
raw[is.na(raw)] <- 0L
sm <- new("SnpMatrix", matrix(as.raw(raw), nrow = nrow(g), dimnames = dimnames(g)))
rs <- row.summary(sm)
out <- data.frame(sample = rownames(rs),
                  call_rate = sprintf("%.17g", rs$Call.rate),
                  heterozygosity = sprintf("%.17g", rs$Heterozygosity))
con <- file("row_summary.tsv", "w")
writeLines(sprintf("# R %s, snpStats %s; row.summary of %d samples x %d sites",
                   getRversion(), packageVersion("snpStats"), nrow(g), ncol(g)), con)
write.table(out, con, sep = "\t", quote = FALSE, row.names = FALSE)
close(con)
