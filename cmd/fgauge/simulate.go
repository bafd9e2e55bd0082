package main

import (
	"context"
	"errors"
	"fmt"
	"sort"
	"strings"

	"fgauge/genedrop"
	"fgauge/genmap"
	"fgauge/vcfscan"
)

func simulateHelp() string {
	var b strings.Builder
	b.WriteString(`Drops genomes through a pedigree and writes, to the output folder:
  simulated.vcf.gz (+ .tbi)  BGZF VCF of the observed calls (GT:DP:PL with --depth)
  truth_genotypes.vcf.gz     with --depth: the true genotypes (GT only, + .tbi), to check
                             estimators at low depth (scan both and compare)
  truth_samples.tsv          sample replicate design class f_pedigree f_realized autozygous_bp n_segments
  truth_segments.tsv         sample chrom start end length_bp start_cm end_cm n_sites, one line per
                             autozygous segment (both copies from the same founder chromosome copy)
  pedigree.tsv               id sire dam sex of every simulated animal
  truth_pairs.tsv            with --pairs or --herd-candidates: sire dam coancestry_pedigree
                             coancestry_realized coancestry_total, one line per pair
  candidate_sires.txt, candidate_dams.txt
                             with --herd-candidates: the males and the females of the last
                             generation of each replicate's closed herd, one id a line

Founder chromosomes are mosaics of a small ancestral haplotype pool, so
unrelated founders share short old segments by state; only segments that
trace to the same founder copy count as autozygous in the truth.
Crossovers follow Haldane's no-interference model along the genetic map.
The same --seed gives byte-identical files.

Ages of autozygosity (--ages, implied by --ancestral-epochs): every autozygous
stretch is traced to its common ancestor; truth_segments.tsv then lists one
line per stretch with one common ancestor (a merged segment is split where the
ancestor changes; n_segments still counts merged segments) and
truth_samples.tsv gains the shares by age. The age is
(m_sire + m_dam) / 2, the meioses from the ancestor's copy down to the animal's
two copies: selfing 1, full sibs 2, first cousins 3, sire x daughter 1.5. A
stretch of age g has an exponential length of mean 100/(2g) cM. Without these
options every file is as before.

Ancestral epochs (--ancestral-epochs g:haplotypes:share,...): layers of old
shared ancestry behind the founders. In each epoch a share of every founder
copy copies one of a few old haplotypes, in pieces of mean 100/g cM, so two
founder copies holding the same old haplotype share a stretch of mean
100/(2g) cM and age g (plus the pedigree meioses below the founders). An
unrelated founder's ancient autozygosity from an epoch is about
share^2/haplotypes; e.g. 16:20:0.3,64:10:0.3,256:5:0.3 gives about 0.03.
The epochs change the founders' genotypes (not the pedigree truth).

Realized coancestry (--pairs FILE, two ids a line as in pedigree.tsv; a first
line of two unknown ids is a header): the mean over the four pairings of the
two animals' copies of the genome share (bp) where both descend from the same
founder copy, i.e. the expected realized F of their offspring; base: the
simulated founders. --herd-candidates lists every male x female pair of the
last closed-herd generation of each replicate (design closed_herd).

Columns added by these options:
`)
	for _, c := range genedrop.TruthColumns() {
		fmt.Fprintf(&b, "  %s  %s\n", c.File, c.Name)
		line := "     "
		for _, w := range strings.Fields(c.Doc) {
			if len(line)+1+len(w) > 80 {
				b.WriteString(line + "\n")
				line = "     "
			}
			line += " " + w
		}
		b.WriteString(line + "\n")
	}
	b.WriteString(`
Built-in designs (--design, comma-separated or repeated; kind[:generations[:herd_size[:sires]]]):
`)
	kinds := make([]string, 0, len(genedrop.DesignKinds))
	for k := range genedrop.DesignKinds {
		kinds = append(kinds, k)
	}
	sort.Strings(kinds)
	for _, k := range kinds {
		fmt.Fprintf(&b, "  %-17s %s\n", k, genedrop.DesignKinds[k])
	}
	return b.String()
}

// runSimulate simulates a pedigree's genomes and writes VCF and truth.
func runSimulate(ctx context.Context, env *runEnv, args []string) error {
	fs := newFlagSet(env.stderr, "simulate", "simulate [options] [-o DIR]", simulateHelp())
	var designs listFlag
	outDir := fs.String("o", "fgauge_simulated", "output `DIR`ectory (created if needed)")
	seed := fs.Uint64("seed", 1, "random seed; the same seed gives the same files")
	pedFile := fs.String("pedigree", "", "pedigree `FILE` (id sire dam [sex]) to drop genomes through")
	fs.Var(&designs, "design", "built-in `DESIGN` to add (see below); repeatable or comma-separated")
	reps := fs.Int("replicates", 1, "independent copies of the whole pedigree, ids suffixed _r1, _r2, ...")
	chroms := fs.String("chromosomes", "1:100e6:100,2:80e6:80,3:60e6:60", "chromosomes as `name:length_bp:length_cm,...`")
	mapFile := fs.String("recombination-map", "", "genetic map `FILE` (chrom pos cM) replacing the linear maps")
	spacing := fs.Float64("site-spacing", 30000, "mean distance between sites in `bp` (array-like ~20000-50000, sequence-like ~1000)")
	spectrum := fs.String("spectrum", "u_shaped", "ancestral allele frequencies: u_shaped (Beta(1/2,1/2), array-like) or neutral (1/x, sequence-like)")
	minMAF := fs.Float64("min-maf", 0, "drop sites with ancestral-pool minor allele frequency below this")
	pool := fs.Int("ancestral-haplotypes", 40, "size of the ancestral haplotype pool founders are built from")
	pieceCM := fs.Float64("ancestral-segment-cm", 0.5, "mean length in cM of the ancestral pieces of founder chromosomes")
	gErr := fs.Float64("genotype-error", 0, "chance a call is replaced by another genotype")
	miss := fs.Float64("missing-rate", 0, "chance a call is set missing")
	depth := fs.Float64("depth", 0, "mean read depth; > 0 simulates Poisson reads with --read-error and writes GT:DP:PL (GT the most likely genotype, PL by the binomial read model) and truth_genotypes.vcf.gz")
	readErr := fs.Float64("read-error", 0.01, "per-base error of simulated reads (with --depth)")
	truthOnly := fs.Bool("truth-only", false, "skip sites and the VCF; write only the truth tables and the pedigree")
	ages := fs.Bool("ages", false, "record the common ancestor and age of every autozygous stretch (see below)")
	epochs := fs.String("ancestral-epochs", "", "old shared ancestry behind the founders as `g:haplotypes:share,...` (implies --ages)")
	pairsFile := fs.String("pairs", "", "`FILE` of id pairs (sire dam, two a line) whose realized coancestry to write to truth_pairs.tsv")
	herdCands := fs.Bool("herd-candidates", false, "write the last closed-herd generation's males and females as candidates and all their pairs to truth_pairs.tsv")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 0 {
		return usagef("simulate: unexpected argument %q (run 'fgauge simulate --help')", pos[0])
	}
	cfg := genedrop.Config{
		Seed: *seed, SiteSpacing: *spacing, MinMAF: *minMAF,
		AncestralHaplotypes: *pool, AncestralSegmentCM: *pieceCM,
		Replicates: *reps, GenotypeError: *gErr, MissingRate: *miss,
		Depth: *depth, ReadError: *readErr, NoSites: *truthOnly, Ages: *ages,
	}
	if *epochs != "" {
		if cfg.AncestralEpochs, err = genedrop.ParseEpochs(*epochs); err != nil {
			return usagef("simulate: --ancestral-epochs: %v", err)
		}
	}
	if *reps < 1 {
		return usagef("simulate: --replicates must be at least 1")
	}
	if *pool < 2 || *pieceCM <= 0 || *spacing < 1 {
		return usagef("simulate: --ancestral-haplotypes must be >= 2, --ancestral-segment-cm and --site-spacing positive")
	}
	switch *spectrum {
	case "u_shaped":
		cfg.Spectrum = genedrop.SpectrumUShaped
	case "neutral":
		cfg.Spectrum = genedrop.SpectrumNeutral
	default:
		return usagef("simulate: --spectrum %q: want u_shaped or neutral", *spectrum)
	}
	if cfg.Chromosomes, err = genedrop.ParseChromosomes(*chroms); err != nil {
		return usagef("simulate: --chromosomes: %v", err)
	}
	for _, list := range designs {
		for _, s := range strings.Split(list, ",") {
			d, err := genedrop.ParseDesign(s)
			if err != nil {
				return usagef("simulate: --design: %v", err)
			}
			cfg.Designs = append(cfg.Designs, d)
		}
	}
	if *pedFile != "" {
		if cfg.Pedigree, err = readPedigreeFile(*pedFile); err != nil {
			return err
		}
	}
	if cfg.Pedigree == nil && len(cfg.Designs) == 0 {
		return usagef("simulate: give --pedigree FILE or at least one --design (run 'fgauge simulate --help')")
	}
	if *mapFile != "" {
		var err error
		if cfg.Map, err = genmap.ReadFile(*mapFile); err != nil {
			return usagef("simulate: %v", err)
		}
	}
	res, err := genedrop.Run(cfg)
	if errors.Is(err, genedrop.ErrConfig) {
		return usagef("simulate: %v", err)
	}
	if err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	var pairs [][2]int
	if *pairsFile != "" {
		if pairs, err = readSimulatedPairs(res, *pairsFile); err != nil {
			return err
		}
	}
	if *herdCands {
		pairs = append(pairs, res.HerdPairs()...)
	}
	paths, err := genedrop.WriteFiles(*outDir, res)
	if err != nil {
		return err
	}
	if *pairsFile != "" || *herdCands {
		more, err := genedrop.WritePairFiles(*outDir, res, pairs, *herdCands)
		if err != nil {
			return err
		}
		paths = append(paths, more...)
	}
	var nsites int
	if !*truthOnly {
		for c := range res.Chromosomes {
			nsites += res.NumSites(c)
		}
	}
	fmt.Fprintf(env.stderr, "fgauge simulate: %d animals, %d sites, %d autozygous segments; wrote %s\n",
		len(res.Samples), nsites, len(res.Segments), strings.Join(paths, ", "))
	return nil
}

// readSimulatedPairs reads a pairs file against the simulated pedigree;
// bad lines are input errors naming file and line.
func readSimulatedPairs(res *genedrop.Result, path string) ([][2]int, error) {
	f, err := vcfscan.OpenText(path)
	if err != nil {
		return nil, usagef("simulate: %v", err)
	}
	defer f.Close()
	pairs, err := res.Pedigree.ReadPairs(f, path)
	if err != nil {
		return nil, pedigreeInputError(err)
	}
	return pairs, nil
}
