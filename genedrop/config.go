package genedrop

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"fgauge/genmap"
	"fgauge/stats/pedigree"
)

// ErrConfig is wrapped by errors about an invalid Config or design string.
var ErrConfig = errors.New("invalid simulation settings")

// MaxSites bounds the expected number of sites of one simulation (genome
// length / site spacing), which sets its memory use.
const MaxSites = 20_000_000

// Chromosome is one simulated chromosome: physical length in bp and
// genetic length in centiMorgans (ignored when a GeneticMap covers it).
type Chromosome struct {
	Name     string
	LengthBP int64
	LengthCM float64
}

// DefaultChromosomes returns three chromosomes of 100, 80 and 60 Mb at
// 1 cM/Mb, a small genome that still shows long and short runs.
func DefaultChromosomes() []Chromosome {
	return []Chromosome{{"1", 100_000_000, 100}, {"2", 80_000_000, 80}, {"3", 60_000_000, 60}}
}

// ParseChromosomes parses "name:length_bp:length_cm,..." (length_cm
// optional, default 1 cM per Mb). Lengths accept forms like 1e8.
func ParseChromosomes(s string) ([]Chromosome, error) {
	var out []Chromosome
	for _, part := range strings.Split(s, ",") {
		f := strings.Split(strings.TrimSpace(part), ":")
		if len(f) < 2 || len(f) > 3 || f[0] == "" {
			return nil, fmt.Errorf("%w: chromosome %q: want name:length_bp[:length_cm]", ErrConfig, part)
		}
		bp, err := strconv.ParseFloat(f[1], 64)
		if err != nil || !(bp >= 1 && bp <= 1e10) { // also refuses NaN
			return nil, fmt.Errorf("%w: chromosome %q: length_bp %q is not a positive number", ErrConfig, part, f[1])
		}
		c := Chromosome{Name: f[0], LengthBP: int64(bp), LengthCM: bp / 1e6}
		if len(f) == 3 {
			cm, err := strconv.ParseFloat(f[2], 64)
			if err != nil || !(cm > 0 && cm < 1e6) { // also refuses NaN and Inf
				return nil, fmt.Errorf("%w: chromosome %q: length_cm %q is not a positive number", ErrConfig, part, f[2])
			}
			c.LengthCM = cm
		}
		out = append(out, c)
	}
	return out, nil
}

// Spectrum is the distribution of ancestral allele frequencies.
type Spectrum int

// Allele frequency spectra.
const (
	// SpectrumUShaped draws p from Beta(1/2, 1/2): many common variants,
	// like a SNP array ascertained for polymorphism.
	SpectrumUShaped Spectrum = iota
	// SpectrumNeutral draws the derived-allele frequency from the neutral
	// 1/x density (log-uniform), with many rare variants, like sequence.
	SpectrumNeutral
)

// Config describes one simulation. Zero values take the documented defaults.
type Config struct {
	Seed        uint64
	Chromosomes []Chromosome // default DefaultChromosomes()
	Map         *genmap.Map  // optional genetic map (rules in package genmap)
	// SiteSpacing is the mean distance between sites in bp (default
	// 30,000, array-like; use ~1,000 or less for sequence-like data).
	SiteSpacing float64
	Spectrum    Spectrum
	// MinMAF drops sites whose minor allele frequency in the ancestral pool
	// is below it (default 0: keep every polymorphic site).
	MinMAF float64
	// AncestralHaplotypes is the size of the pool founders are built from
	// (default 40); AncestralSegmentCM the mean length of the pieces
	// (default 0.5 cM). Smaller pools and longer pieces make unrelated
	// founders share more by state.
	AncestralHaplotypes int
	AncestralSegmentCM  float64
	// NoSites skips sites and genotypes: only the identity-by-descent
	// truth is simulated (fast, for gene-drop checks).
	NoSites bool
	// AncestralEpochs adds layers of old shared ancestry behind the
	// founders (see Epoch); it changes the founder mosaics and implies
	// Ages. Empty by default (outputs as without it).
	AncestralEpochs []Epoch
	// Ages records the common ancestor of every autozygous stretch
	// (Result.AgedSegments, Result.Ages; see AgedSegment).
	Ages bool

	// Pedigree to drop genomes through; Designs are built-in pedigrees
	// added to it. At least one of them is needed.
	Pedigree *pedigree.Pedigree
	Designs  []Design
	// Replicates repeats the whole pedigree with fresh founders; ids get
	// a suffix "_r1", "_r2", ... when Replicates > 1 (default 1).
	Replicates int

	// GenotypeError is the chance a call is replaced by one of the two
	// other genotypes; MissingRate the chance it is set missing.
	GenotypeError float64
	MissingRate   float64
	// Depth > 0 simulates reads (Poisson depth with this mean, base error
	// ReadError, default 0.01) and writes GT:DP:PL; GT is the most likely
	// genotype and GenotypeError is not applied on top.
	Depth     float64
	ReadError float64
}

func (c *Config) normalize() error {
	if len(c.Chromosomes) == 0 {
		c.Chromosomes = DefaultChromosomes()
	}
	// Own copy: lengths taken from a map must not change the caller's slice.
	c.Chromosomes = append([]Chromosome(nil), c.Chromosomes...)
	if c.SiteSpacing == 0 {
		c.SiteSpacing = 30_000
	}
	if c.AncestralHaplotypes == 0 {
		c.AncestralHaplotypes = 40
	}
	if c.AncestralSegmentCM == 0 {
		c.AncestralSegmentCM = 0.5
	}
	if c.Replicates == 0 {
		c.Replicates = 1
	}
	if c.ReadError == 0 {
		c.ReadError = 0.01
	}
	switch {
	case c.Pedigree == nil && len(c.Designs) == 0:
		return fmt.Errorf("%w: no pedigree and no design", ErrConfig)
	case c.SiteSpacing < 1:
		return fmt.Errorf("%w: site spacing %v bp is below 1", ErrConfig, c.SiteSpacing)
	case c.AncestralHaplotypes < 2 || c.AncestralHaplotypes > 30000:
		return fmt.Errorf("%w: ancestral pool of %d haplotypes (want 2..30000)", ErrConfig, c.AncestralHaplotypes)
	case c.AncestralSegmentCM < 0:
		return fmt.Errorf("%w: negative ancestral segment length", ErrConfig)
	case c.Replicates < 0:
		return fmt.Errorf("%w: negative replicate count", ErrConfig)
	case c.GenotypeError < 0 || c.GenotypeError > 1, c.MissingRate < 0 || c.MissingRate > 1:
		return fmt.Errorf("%w: genotype error and missing rates must lie in [0, 1]", ErrConfig)
	case c.MinMAF < 0 || c.MinMAF >= 0.5:
		return fmt.Errorf("%w: minimum MAF %v outside [0, 0.5)", ErrConfig, c.MinMAF)
	case c.Depth < 0 || c.ReadError < 0 || c.ReadError >= 0.5:
		return fmt.Errorf("%w: depth must be >= 0 and read error in [0, 0.5)", ErrConfig)
	}
	if err := c.checkEpochs(); err != nil {
		return err
	}
	var genome float64
	for _, ch := range c.Chromosomes {
		genome += float64(ch.LengthBP)
	}
	if !c.NoSites && genome/c.SiteSpacing > MaxSites {
		return fmt.Errorf("%w: about %.3g sites (genome %.4g bp / spacing %v bp) exceed the limit of %d; raise the site spacing",
			ErrConfig, genome/c.SiteSpacing, genome, c.SiteSpacing, MaxSites)
	}
	seen := map[string]bool{}
	for i := range c.Chromosomes {
		ch := &c.Chromosomes[i]
		if seen[ch.Name] {
			return fmt.Errorf("%w: chromosome %q listed twice", ErrConfig, ch.Name)
		}
		seen[ch.Name] = true
		if ch.LengthBP < 1 {
			return fmt.Errorf("%w: chromosome %q has length %d bp", ErrConfig, ch.Name, ch.LengthBP)
		}
		if m := c.Map.Chrom(ch.Name); m != nil {
			ch.LengthCM = mapLengthCM(m, ch)
		}
		if !(ch.LengthCM > 0) {
			return fmt.Errorf("%w: chromosome %q has genetic length %v cM", ErrConfig, ch.Name, ch.LengthCM)
		}
	}
	return nil
}
