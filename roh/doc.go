// Package roh finds runs of homozygosity (ROH) in the genotypes of each
// sample and turns them into the genomic inbreeding coefficient F_ROH,
// overall and by run-length class.
//
// Two detectors are offered:
//
//   - "hmm" (default): a two-state hidden Markov model along each
//     chromosome, autozygous versus not, after Leutenegger et al. (2003,
//     Am J Hum Genet 73:516-523). Emissions come from the site's allele
//     frequency and a genotype error rate (or from phred-scaled genotype
//     likelihoods when the input has them); transitions come from genetic
//     distance. Runs are the Viterbi segments in the autozygous state;
//     each run's mean_posterior_autozygous is the mean forward-backward
//     posterior of autozygosity over its sites.
//   - "rules": a homozygous-run scan that tolerates a set number of
//     heterozygous and missing calls per run (as recommended for SNP
//     arrays by Ferenčaković et al. 2013, Genet Sel Evol 45:42) and applies
//     minimum length, minimum site count, maximum gap and minimum density.
//
// F_ROH follows McQuillan et al. (2008, Am J Hum Genet 83:359-372): the
// total length of a sample's runs over the autosomal length covered.
//
// The package consumes batches from vcfscan in input order through a
// Collector, keeps the genotypes of one chromosome at a time (2 bits per
// call, plus 3 bytes per call where phred likelihoods are present), and
// detects runs on a bounded pool of goroutines while reading continues.
// It does not read files itself (a genetic map comes read by package
// genmap, the same reader the gene-drop simulator uses) and it computes no
// per-site or per-sample statistics other than ROH.
//
// Memory: for a chromosome of S sites and N samples, N*S/4 bytes of packed
// calls (at most twice that while the slices grow), 3 bytes per call where
// likelihoods are present, about 70 bytes per site of shared tables, and
// 84 bytes per site per worker during detection; at most two chromosomes
// are held at once. BenchmarkCollect measures 0.36 heap bytes per
// sample-site at 1,000 samples.
//
// Speed (CPU time per call, 1,000 samples, BenchmarkDetect and
// BenchmarkDetectLongChrom): storing calls about 2 ns; the HMM about 11 ns
// more on a 5,000-site chromosome and 15 ns on a 200,000-site one (two
// samples per sweep, so the per-site tables are read once per pair); the
// rule-based detector about 5 ns. BenchmarkScanRatio compares with reading
// the same file without detection.
//
// Results of disjoint whole chromosomes merge exactly (Result.Merge), so a
// genome split into per-chromosome shards gives the same tables as one
// pass.
//
// Caution: runs of homozygosity and F_ROH describe shared ancestry in the
// genotyped data; they are not by themselves a basis for mating, culling or
// clinical decisions about consanguinity. Such decisions belong to
// licensed practitioners following local regulations.
package roh
