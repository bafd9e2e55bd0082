package mate

// Help explains the method, the base population of each measure and the
// cautions; `fgauge mate --help` prints it after the options.
const Help = `Reads the genotypes of the candidate sires and dams from INPUT (any VCF/BCF
the scan reads), computes the coancestry of every sire x dam pair and
chooses the mating plan with the lowest mean expected progeny F: every dam
gets exactly one sire, no sire more dams than its limit (--sire-limit,
--sire-limits), and no pair above --max-progeny-f is used.

Measures (one row per pair in OUTDIR/pairs.tsv):
  coancestry_genomic   VanRaden (2008, J Dairy Sci 91:4414) method-1 genomic
                       relationship divided by two. Base population: the one
                       whose allele frequencies are used - by default every
                       sample of INPUT (not only the candidates); --freqs FILE
                       (chrom pos ref alt alt_freq) or --freqs-from-info KEY
                       as in the scan. Its average over that population is 0,
                       so negative values are normal (less related than
                       average). Missing calls are imputed by the site mean.
  coancestry_pedigree  with --pedigree: the kinship of Meuwissen & Luo (1992,
                       Genet Sel Evol 24:305), as in 'fgauge pedigree --pairs'.
                       Base population: the pedigree's founders, taken as
                       unrelated and not inbred; candidates not in the
                       pedigree count as founders.
  coancestry_segments  with --segments: shared-segment coancestry on the
                       probability scale (0 to 1): the chance that a random
                       allele of each parent lies in a long stretch the two
                       share identical by descent. Stretches: no opposite
                       homozygote over at least --segment-min-mb (default 3)
                       and 50 sites; inside, windows of 32 sites count 1/4
                       (one copy shared), 1/2 (both copies, or one parent
                       autozygous) or 1 (both autozygous). Base population:
                       ancestors recent enough to leave such stretches
                       (roughly the last 15 generations at 3 Mb); older
                       relatedness counts 0. Needs input sorted by position.
  progeny_f            the value the plan minimises: the expected F of a
                       progeny of the pair, which equals its parents'
                       coancestry. --plan-on genomic (default), pedigree, or
                       blend: w * genomic + (1 - w) * pedigree with
                       w = --blend-weight. The two measures have different
                       bases, so a blend is a pragmatic compromise.
                       --plan-on segments (with --segments) plans on
                       coancestry_segments: it avoids recent shared
                       stretches only.

Checked against simulated truth: in a simulated closed herd the genomic
coancestry follows the realized coancestry (share of the genome identical by
descent from the founders) more closely than the pedigree does (correlation
about 0.99 against 0.88), because it sees Mendelian sampling; the
shared-segment coancestry correlates 0.998 and lies on the truth's scale
(mean absolute difference below 0.01).

The plan is optimal, not greedy: a transportation problem solved exactly by
successive shortest paths. A request that cannot be met (too few places, a
dam whose every pair is above the ceiling) is an error naming the dams.

Outputs: OUTDIR/pairs.tsv, allocation.tsv (dam sire progeny_f ...), run.json
(mean and highest progeny F of the plan, the expected mean of a random
allocation, and with --pedigree the pedigree-only plan measured genomically)
and mate.html. 'fgauge columns --file pairs.tsv' explains every column.
Lists: one id per line ('#' lines and blank lines skipped); --sire-limits:
lines 'sire limit'.

Cautions: a plan is advice. Genetic merit, health, fertility, welfare and the
breeding programme's rules also decide which matings are made, and local
regulations (herd book, breed society, animal-breeding and welfare law) come
first; ask a breeding adviser or veterinarian where required. Expected F is
an average over possible offspring. Genomic values depend on the frequency
base (plans made with different --freqs are not comparable), marker density
and genotype quality; pedigree values miss unrecorded or wrong parentage.
`
