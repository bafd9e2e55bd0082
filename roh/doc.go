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
// Collector, gathers each chromosome's sites in windows of at most 1,024
// sites (2 bits per call, plus 3 bytes per call where phred likelihoods
// are present), and detects runs on a bounded pool of goroutines while
// reading continues: the HMM runs as three sweeps over the windows
// (window.go, sweep.go), the first while the next window is read. It does
// not read files itself (a genetic map comes read by package genmap, the
// same reader the gene-drop simulator uses; it reads back only the pieces
// files and temporary files it writes) and it computes no per-site or
// per-sample statistics other than ROH.
//
// Memory is bounded by Config.MemoryBudget (DefaultMemoryBudget, 256 MiB,
// when 0) whatever the chromosome length and the cohort size: windows
// take about N*3/4 + 52 bytes a site for N samples with the HMM (calls,
// Viterbi flags, forward and backward checkpoints every 128 sites,
// per-site data), and those beyond the budget go to an unlinked temporary
// file in Config.TempDir, written once and read back twice. Results do
// not depend on the budget. Pieces of split chromosomes (PieceCollector)
// are kept the same way, and WritePieces / JoinAndDetectPieces join them
// within the budget. Exceptions: the fitted HMM (Fit) and the rules
// detector join each chromosome in memory for detection (N/4 bytes a
// site plus 50 to 84 bytes a site per worker).
//
// The age classes (Config.Ages, agesweep.go) add 96 bytes per sample to
// each window (the EM's forward checkpoint, spilled with the window),
// keep the chromosome's windows until their fit is done (two sweeps per
// EM round, read back from disk when spilled), and take per worker one
// window's scratch (about 90 bytes a site of one window) and per sample
// O(classes + runs): nothing grows with the chromosome length.
//
// Speed: see BenchmarkSweeps (each sweep alone), BenchmarkDetect,
// BenchmarkShapes (100 x 1 M against 1,000 x 100 k) and
// BenchmarkBoundedMemory (the two memory-target shapes).
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
