// Package mating computes the coancestry of candidate sire x dam pairs and
// the allocation of dams to sires that minimises the mean coancestry of the
// matings, which is the expected inbreeding coefficient (F) of their
// progeny.
//
// Four pieces, each usable on its own:
//
//   - Genomic coancestry (Packer, Genomic): VanRaden (2008, Journal of Dairy
//     Science 91:4414-4423) method-1 genomic relationship divided by two,
//     from genotypes read with vcfscan and allele frequencies chosen per
//     site (cohort frequencies over every sample of the input, or any
//     per-site source such as the scan's --freqs panel or an INFO key, see
//     FreqSource). Its base population is the one whose allele frequencies
//     are used: values are relative to that population's average, and
//     negative values mean less related than average.
//   - Pedigree coancestry (PedigreeCoancestry): the kinship of Meuwissen &
//     Luo (1992) as computed by stats/pedigree; its base population is the
//     pedigree's founders, taken as unrelated and not inbred.
//   - Shared-segment coancestry (SegmentPacker, SharedSegments): the
//     coancestry counted over long stretches without opposite homozygotes,
//     on the probability scale; its base population is the recent
//     ancestry that leaves such stretches (see SegmentOptions).
//   - Optimal allocation (Allocate): every dam exactly once, no sire above
//     its limit, pairs above a ceiling never used, minimum total (hence
//     mean) cost, solved exactly as a transportation problem by successive
//     shortest paths (see Allocate).
//
// The package reads no files besides what it is handed, writes nothing, and
// knows nothing of the command line: cmd/fgauge/internal/mate does that. A
// plan is advice: genetic merit, health, welfare and the breeding
// programme's rules also decide, and local regulations come first.
package mating
