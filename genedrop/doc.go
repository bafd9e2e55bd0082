// Package genedrop drops genomes through a pedigree (gene dropping) and
// records the truth: which stretches of each animal's two genome copies
// descend from the same founder chromosome (autozygous, identical by
// descent within the individual), next to the genotypes an array or a
// sequencer would report.
//
// The model, in order:
//
//   - Sites: positions at a chosen mean spacing (a Poisson process), an
//     ancestral allele frequency per site from a U-shaped Beta(1/2, 1/2)
//     spectrum (array-like ascertainment) or a neutral 1/x spectrum
//     (sequence-like), kept only when polymorphic in the ancestral pool.
//   - Founders: every founder chromosome copy is a mosaic of a small pool of
//     ancestral haplotypes, switching at exponential genetic distances, so
//     unrelated founders share short old segments by state. Each founder
//     copy carries a unique label; only shared labels count as autozygous.
//   - Meiosis: crossovers form a Poisson process along the genetic map
//     (no interference; Haldane 1919, J Genet 8:299-309), on a linear map
//     or a supplied piecewise-linear map (chrom, pos, cM).
//   - Observation: genotype error and missing rates, or low-depth reads
//     with phred-scaled genotype likelihoods (PL).
//   - Optional truth (ages.go, coancestry.go): ancestral epochs that give
//     founders old shared stretches of controlled age (Epoch), the common
//     ancestor and age of every autozygous stretch (AgedSegment,
//     SampleAges), and the realized coancestry of pairs (PairTruth).
//
// Run is deterministic for a given Config.Seed. Results stay in memory
// (Result) and are written by WriteVCF, WriteVCFBGZF and the truth writers.
// The package is for testing and demonstrating estimators whose truth we
// control; it is not a population-genetic history simulator.
package genedrop
