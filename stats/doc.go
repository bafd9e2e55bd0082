// Package stats turns variant batches into per-site equilibrium statistics,
// population F-statistics and per-sample genomic inbreeding estimators.
//
// Every quantity that feeds an output is held in a mergeable accumulator:
// integer counts, and float sums kept in 128-bit fixed point (Sum128), so
// that the totals of any split of the input (threads, shards) merge to
// byte-identical output whatever the order of merging. A Worker consumes
// batches on one goroutine; Workers' Totals are merged with Totals.Merge.
//
// Sums are exact on a grid of 2^-32 per summed term, so values derived
// from them (means, ratios, estimators) carry a rounding of about 1e-10:
// printed digits beyond the tenth decimal place are not significant.
//
// Methods implemented, each cited where it is coded:
//   - exact Hardy-Weinberg test (Wigginton, Cutler & Abecasis 2005) with
//     mid-p (Graffelman & Moreno 2013) and one-sided variants;
//   - exact X-chromosomal Hardy-Weinberg test (Graffelman & Weir 2016),
//     over a per-site tally of female genotypes and male alleles (XTally);
//     sex inference and pseudo-autosomal regions live in stats/sexcheck;
//   - expected heterozygosity with Nei's (1978) small-sample correction;
//   - Weir & Cockerham (1984) F-statistics with a block jackknife;
//   - per-sample F estimators of Yang et al. (2011) and VanRaden (2008),
//     and a method-of-moments excess-homozygosity F.
//
// The package reads nothing from disk except the optional frequency panel
// and population file handed to it as io.Readers; it knows nothing about
// VCF parsing (package vcfscan) or runs of homozygosity (package roh).
//
// Caution: these estimates describe a genotyped sample. They are not, on
// their own, grounds for mating, culling or clinical decisions about
// consanguinity; such decisions belong to licensed practice under local
// regulations.
package stats
