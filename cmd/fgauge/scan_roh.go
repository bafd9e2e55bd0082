package main

import (
	"flag"
	"strconv"
	"strings"

	"fgauge/genmap"
	"fgauge/roh"
)

// rohFlags are the scan options of runs-of-homozygosity detection.
type rohFlags struct {
	noROH      bool
	method     string
	genoError  float64
	cmPerMB    float64
	geneticMap string
	fit        bool
	prior      float64
	rate       float64
	classes    string
	species    string
	autosomes  string
	maxGapKB   float64
	maxHet     int
	maxMissing int
	minKB      float64
	minSites   int
	minSitesMb float64
	edgeSites  int
}

// rohHelp is appended to the scan help.
const rohHelp = `Runs of homozygosity:
  The default detector is a two-state hidden Markov model (autozygous or not)
  after Leutenegger et al. 2003 (Am J Hum Genet 73:516); --roh-method rules
  uses a homozygous-run scan with tolerated heterozygous and missing calls
  (thresholds --rules-*). F_ROH (McQuillan et al. 2008, Am J Hum Genet 83:359)
  divides the total length of runs at least as long as the smallest
  --roh-classes value by the autosomal length covered. Without --species or
  --autosomes, contigs with purely numeric names (1, 2, ... or chr1, chr2, ...)
  are the autosomes; sex chromosomes, MT and unplaced contigs are left out
  and counted in run.json. runs.tsv lists every run found, shorter ones too.
  The --rules-* counts are per run and do not scale with marker density: for
  sequence data raise them (for example --rules-max-het 8
  --rules-max-missing 200 --rules-min-sites 100 at one site per 4 kb); the
  HMM needs no such change.
  generations_back = 100/(2*length_cm) is only a rough expectation: run
  lengths from one ancestor vary widely.
  Caution: F_ROH and runs describe the genotyped data; they are not on their
  own a basis for mating, culling or clinical decisions about consanguinity,
  which belong to licensed practitioners under local regulations.
`

// addROHFlags registers the ROH options on fs.
func addROHFlags(fs *flag.FlagSet) *rohFlags {
	d := roh.DefaultConfig()
	f := &rohFlags{}
	fs.BoolVar(&f.noROH, "no-roh", false, "skip runs-of-homozygosity detection (no runs.tsv, no F_ROH columns)")
	fs.StringVar(&f.method, "roh-method", d.Method, "ROH detector: hmm (hidden Markov model) or rules (homozygous-run scan)")
	fs.Float64Var(&f.genoError, "genotype-error", d.GenotypeError,
		"HMM: probability that a call is wrong; lets a run survive isolated heterozygous calls (0.001 is a typical array/sequence discordance)")
	fs.Float64Var(&f.cmPerMB, "cm-per-mb", 0,
		"genetic distance per Mb where no --recombination-map applies (0: the --species value, else 1.0)")
	fs.StringVar(&f.geneticMap, "recombination-map", "",
		"`FILE` of whitespace-separated lines 'chrom pos cM' (plain or gzip); linear interpolation, ends extrapolated by the nearest slope")
	fs.BoolVar(&f.fit, "fit", false,
		"HMM: estimate each sample's autozygous fraction and transition rate by EM, per chromosome")
	fs.Float64Var(&f.prior, "hmm-autozygous-prior", d.AutozygousPrior,
		"HMM: stationary probability of the autozygous state (starting value with --fit)")
	fs.Float64Var(&f.rate, "hmm-rate", d.Rate,
		"HMM: switching rate per Morgan; mean autozygous segment = 100/(rate*(1-prior)) cM (starting value with --fit)")
	fs.StringVar(&f.classes, "roh-classes", "1,2,4,8,16",
		"run-length classes in Mb for the f_roh_gt_* columns; the smallest is also the shortest run counted in f_roh")
	fs.StringVar(&f.species, "species", "",
		"autosome names and default cM/Mb for one of: "+strings.Join(roh.SpeciesNames(), ", ")+"; human also reads contigs 23/24/26 as X/Y/MT and, without --par, recognises the GRCh37/GRCh38 PARs")
	fs.StringVar(&f.autosomes, "autosomes", "",
		"comma-separated autosome `LIST` (names with or without 'chr'); overrides --species")
	fs.Float64Var(&f.maxGapKB, "roh-max-gap-kb", d.MaxGapKB,
		"split runs where consecutive sites are further apart than this many kb (both detectors)")
	fs.IntVar(&f.maxHet, "rules-max-het", d.Rules.MaxHet,
		"rules: heterozygous calls tolerated per run (Ferenčaković et al. 2013, Genet Sel Evol 45:42: about one on medium-density arrays, none on dense data)")
	fs.IntVar(&f.maxMissing, "rules-max-missing", d.Rules.MaxMissing, "rules: missing calls tolerated per run")
	fs.Float64Var(&f.minKB, "rules-min-kb", d.Rules.MinKB, "rules: minimum run length in kb")
	fs.IntVar(&f.minSites, "rules-min-sites", d.Rules.MinSites, "rules: minimum number of sites in a run")
	fs.Float64Var(&f.minSitesMb, "rules-min-sites-per-mb", d.Rules.MinSitesPerMb,
		"rules: minimum density of a run, in sites per Mb of its length")
	fs.IntVar(&f.edgeSites, "rules-edge-hom-sites", d.Rules.EdgeHomSites,
		"rules: homozygous calls needed between a tolerated heterozygote and the run's end, else the run stops before it (0: off)")
	return f
}

// config builds the detection settings; it returns nil, nil with --no-roh.
// Threads is left for the caller to set.
func (f *rohFlags) config() (*roh.Config, error) {
	if f.noROH {
		return nil, nil
	}
	c := roh.DefaultConfig()
	c.Method = f.method
	c.GenotypeError = f.genoError
	c.CMPerMB = f.cmPerMB
	c.Fit = f.fit
	c.AutozygousPrior = f.prior
	c.Rate = f.rate
	c.Species = f.species
	c.MaxGapKB = f.maxGapKB
	c.Rules = roh.Rules{MaxHet: f.maxHet, MaxMissing: f.maxMissing, MinKB: f.minKB, MinSites: f.minSites, MinSitesPerMb: f.minSitesMb,
		EdgeHomSites: f.edgeSites}
	c.Classes = nil
	for _, s := range strings.Split(f.classes, ",") {
		if s = strings.TrimSpace(s); s == "" {
			continue
		}
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			return nil, usagef("--roh-classes: %q is not a number", s)
		}
		c.Classes = append(c.Classes, v)
	}
	if f.autosomes != "" {
		for _, s := range strings.Split(f.autosomes, ",") {
			if s = strings.TrimSpace(s); s != "" {
				c.Autosomes = append(c.Autosomes, s)
			}
		}
	}
	if f.geneticMap != "" {
		m, err := readMapFile(f.geneticMap)
		if err != nil {
			return nil, usagef("--recombination-map: %v", err)
		}
		c.Map = m
	}
	if err := c.Validate(); err != nil {
		return nil, usagef("%v", err)
	}
	return c, nil
}

func readMapFile(path string) (*genmap.Map, error) {
	return genmap.ReadFile(path)
}
