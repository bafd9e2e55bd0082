// Package sexcheck holds what fgauge needs to treat the sex chromosomes
// correctly: sexes given by the user (a sex file or a pedigree's sex
// column), the pseudo-autosomal regions (PARs) of X and Y, a mergeable
// per-sample accumulator of X and Y evidence, and the decision that turns
// it into an inferred sex.
//
// The inference is the heterozygosity-based sex check in common use
// (Anderson et al. 2010, Nature Protocols 5:1564-1573, procedure step on
// discordant sex information): on non-PAR X sites a male, hemizygous, has
// no true heterozygous calls, so his X inbreeding coefficient F_X (method
// of moments, observed against expected heterozygosity at cohort
// frequencies) is near 1, while a female's is near her X inbreeding,
// usually well below 0.5. Haploid calls ("0", "1") and diploid
// homozygous calls ("0/0", "1/1") of males give the same statistic. The
// Y call rate, relative to the sample's X call rate, is supporting
// evidence when the data have Y sites and the cohort's Y calls separate
// the sexes. Thresholds, their reasons and the "fits neither sex" rule are
// documented on Thresholds.
//
// Accumulators hold integer counts and 32.32 fixed-point sums of
// per-site terms that depend only on the site's cohort counts, so shards
// and threads merge to identical totals in any order.
//
// The package knows nothing about VCF parsing (it consumes vcfscan
// genotype codes) and does no Hardy-Weinberg testing (the X test is
// stats.HWEExactX).
//
// Caution: an inferred sex describes the genotype data. A mismatch with
// the records is a prompt to check sample handling, not a statement about
// a person's or an animal's sex or health; chromosomal findings such as
// possible aneuploidy need confirmation by a licensed laboratory under
// local regulations.
package sexcheck
