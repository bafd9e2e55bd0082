package roh

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"fgauge/genmap"
)

// ErrConfig is wrapped by every configuration error.
var ErrConfig = errors.New("invalid ROH configuration")

// Method names accepted in Config.Method.
const (
	MethodHMM   = "hmm"
	MethodRules = "rules"
)

// Config controls detection. The zero value is not usable; start from
// DefaultConfig and change fields.
type Config struct {
	// Method is MethodHMM (default) or MethodRules.
	Method string

	// GenotypeError is the probability that a call is wrong (the true
	// genotype reported as one of the two others, equally often). It lets
	// the HMM keep a run through an isolated heterozygous call.
	GenotypeError float64
	// CMPerMB converts physical to genetic distance where no map applies;
	// 0 means the species preset's value, else 1.0.
	CMPerMB float64
	// Map, when not nil, gives genetic positions (rules in package genmap;
	// "chr7" and "7" match); chromosomes absent from it fall back to
	// CMPerMB (counted in the summary).
	Map *genmap.Map
	// Fit estimates, per sample and chromosome, the autozygous fraction and
	// the transition rate by expectation-maximisation instead of using
	// AutozygousPrior and Rate.
	Fit bool
	// AutozygousPrior is the stationary probability of the autozygous state.
	AutozygousPrior float64
	// Rate is the rate (per Morgan) of the continuous-time chain; the mean
	// autozygous segment is 100/(Rate*(1-AutozygousPrior)) cM long.
	Rate float64
	// FitIterations bounds the EM rounds of Fit.
	FitIterations int

	// Classes are the run-length thresholds, in Mb, of the f_roh_gt_* columns.
	// The smallest class is also the minimum length of a run counted in
	// n_runs, roh_total_bp and f_roh; shorter runs are still written to
	// runs.tsv.
	Classes []float64

	// Species selects a preset of autosome names and CMPerMB (see Species).
	// Empty means numeric contig names are autosomes.
	Species string
	// Autosomes, when not nil, overrides the autosome list (names with or
	// without "chr").
	Autosomes []string

	// MaxGapKB splits runs (both detectors) where two consecutive sites are
	// further apart than this.
	MaxGapKB float64

	// Rules holds the thresholds of the rule-based detector.
	Rules Rules

	// Threads is the number of detection workers; 0 or less means 1.
	Threads int

	// MemoryBudget bounds, in bytes, the memory held for the chromosomes
	// in detection (calls, per-site data and tables, sweep checkpoints):
	// about N*3/4 + 52 bytes a site for N samples with the HMM, N/4 + 28
	// with the rules, plus 3*N where likelihoods are stored. Beyond it,
	// windows of sites are written to a temporary file in TempDir and read
	// back twice; results do not change. 0 means DefaultMemoryBudget. The
	// fitted HMM (Fit) and the rules detector still join each chromosome
	// in memory for detection, whatever the budget.
	MemoryBudget int64
	// Ages, when not nil, fits the age-class model (ages.go) per sample
	// and chromosome after the HMM's runs are found, for the
	// f_within_<G>g columns of samples.tsv and the age class of each run.
	// Its GenotypeError and MaxGapBP are taken from GenotypeError and
	// MaxGapKB. The rules detector writes NA for them.
	Ages *AgeConfig
	// AgeMarginCM widens each run by this many cM on both sides to make
	// the windows the age model is fitted in (see AgeWindows).
	AgeMarginCM float64
	// AgeWholeChromosome fits the age model on whole chromosomes instead
	// of windows around runs: slower (every site of every sample, about
	// 6 to 20 EM rounds of a 9-state chain), and it sees autozygosity the
	// two-state detector missed.
	AgeWholeChromosome bool
	// AgeWholeShare: a sample whose windows cover at least this share of
	// a chromosome's genetic length is fitted on that whole chromosome
	// (its cost is then at most 1/AgeWholeShare times the windowed one).
	// Outside windows everything counts as non-autozygous, which
	// underestimates heavily inbred animals; this repairs most of it. 0
	// turns it off.
	AgeWholeShare float64

	// TempDir is the folder of those temporary files; "" means the
	// system's (os.TempDir). Files are removed from the folder as soon as
	// they are created, so none is left behind, even on interrupt.
	TempDir string
}

// Rules are the thresholds of the rule-based detector.
type Rules struct {
	MaxHet        int     // heterozygous calls tolerated inside one run
	MaxMissing    int     // missing calls tolerated inside one run
	MinKB         float64 // minimum run length, kb
	MinSites      int     // minimum number of sites in a run
	MinSitesPerMb float64 // minimum density of a run: sites per Mb of its length
	// EdgeHomSites: a tolerated heterozygous call needs at least this many
	// homozygous calls between it and the end of the run; otherwise the
	// run ends before it (see trimEdges). 0 disables.
	EdgeHomSites int
}

// DefaultConfig returns the defaults documented in the command help.
//
// Defaults and where they come from:
//   - GenotypeError 0.001: a typical discordance rate of SNP-array and
//     high-depth sequence calls (common practice; value from memory).
//   - CMPerMB 0, meaning the species preset or else 1.0 cM/Mb, the usual
//     rough conversion for mammals (common practice).
//   - AutozygousPrior 0.05 and Rate 20 per Morgan: a mean autozygous
//     segment of about 5 cM and a non-autozygous stretch of about 100 cM
//     between runs before any data are seen; chosen by us, --fit estimates
//     them instead.
//   - Classes 1,2,4,8,16 Mb, the usual F_ROH length classes; runs under
//     1 Mb are not counted in F_ROH because at array density they mostly
//     reflect linkage disequilibrium rather than recent inbreeding (common
//     practice).
//   - Rules: one heterozygous and two missing calls tolerated per run
//     (Ferenčaković et al. 2013, Genet Sel Evol 45:42, recommend allowing
//     about one heterozygote per run on medium-density arrays and none on
//     dense ones), 1000 kb minimum length, 30 sites, at least 10 sites per Mb
//     of run length, at least 10 homozygous calls between a tolerated
//     heterozygote and the run's end, and runs split at gaps over 1000 kb
//     (chosen by us).
func DefaultConfig() *Config {
	return &Config{
		Method:          MethodHMM,
		GenotypeError:   0.001,
		AutozygousPrior: 0.05,
		Rate:            20,
		FitIterations:   20,
		Classes:         []float64{1, 2, 4, 8, 16},
		MaxGapKB:        1000,
		Ages:            DefaultAgeConfig(),
		AgeMarginCM:     1,
		AgeWholeShare:   0.25,
		Rules: Rules{
			MaxHet:        1,
			MaxMissing:    2,
			MinKB:         1000,
			MinSites:      30,
			MinSitesPerMb: 10,
			EdgeHomSites:  10,
		},
		Threads: 1,
	}
}

// SpeciesPreset is the autosome list and a genome-wide average
// recombination rate for one species.
type SpeciesPreset struct {
	Name      string
	Autosomes []string
	CMPerMB   float64
	Note      string
}

func numbered(from, to int, skip ...int) []string {
	var out []string
	for i := from; i <= to; i++ {
		skipped := false
		for _, s := range skip {
			skipped = skipped || s == i
		}
		if !skipped {
			out = append(out, strconv.Itoa(i))
		}
	}
	return out
}

// Species returns the preset for name (human, cattle, pig, sheep, goat,
// horse, dog, chicken). Autosome counts are the standard karyotypes of the
// current reference assemblies; the cM/Mb values are genome-wide,
// sex-averaged approximations recalled from published linkage maps (from
// memory, rounded: good enough for the transition rate, not for fine
// mapping). Supply --recombination-map for accurate distances.
func Species(name string) (SpeciesPreset, bool) {
	switch strings.ToLower(name) {
	case "human":
		return SpeciesPreset{"human", numbered(1, 22), 1.2, "about 3,500 cM over 2.9 Gb (from memory)"}, true
	case "cattle":
		return SpeciesPreset{"cattle", numbered(1, 29), 1.0, "about 2,600 cM over 2.5 Gb (from memory)"}, true
	case "pig":
		return SpeciesPreset{"pig", numbered(1, 18), 0.9, "about 2,200 cM over 2.3 Gb (from memory)"}, true
	case "sheep":
		return SpeciesPreset{"sheep", numbered(1, 26), 1.2, "about 3,000 cM over 2.5 Gb (from memory)"}, true
	case "goat":
		return SpeciesPreset{"goat", numbered(1, 29), 1.0, "about 2,600 cM over 2.6 Gb (from memory, weakest of these)"}, true
	case "horse":
		return SpeciesPreset{"horse", numbered(1, 31), 1.1, "about 2,700 cM over 2.4 Gb (from memory)"}, true
	case "dog":
		return SpeciesPreset{"dog", numbered(1, 38), 1.0, "about 2,100 cM over 2.2 Gb (from memory)"}, true
	case "chicken":
		// Chicken assemblies have no chromosome 29; micro-chromosome names
		// up to 39 appear in recent assemblies.
		return SpeciesPreset{"chicken", numbered(1, 39, 29), 3.0, "about 3,000 cM over 1.0 Gb, higher on micro-chromosomes (from memory)"}, true
	}
	return SpeciesPreset{}, false
}

// SpeciesNames lists the presets.
func SpeciesNames() []string {
	return []string{"human", "cattle", "pig", "sheep", "goat", "horse", "dog", "chicken"}
}

// normName strips a leading "chr" (any case) so that "chr7" and "7" match.
func normName(s string) string {
	if len(s) > 3 && strings.EqualFold(s[:3], "chr") {
		return s[3:]
	}
	return s
}

// autosomeSet decides which contig names are autosomes.
type autosomeSet struct {
	names   map[string]bool // normalised names; nil means "numeric names"
	numeric bool
}

func (a autosomeSet) is(name string) bool {
	n := normName(name)
	if a.numeric {
		v, err := strconv.Atoi(n)
		return err == nil && v > 0 && strconv.Itoa(v) == n
	}
	return a.names[n]
}

// Validate checks the configuration and fills species defaults. It returns
// an error wrapping ErrConfig.
func (c *Config) Validate() error {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%w: %s", ErrConfig, fmt.Sprintf(format, a...))
	}
	switch c.Method {
	case "":
		c.Method = MethodHMM
	case MethodHMM, MethodRules:
	default:
		return bad("method %q: want %q or %q", c.Method, MethodHMM, MethodRules)
	}
	if !(c.GenotypeError > 0 && c.GenotypeError < 0.5) {
		return bad("genotype error %g: want a value in (0, 0.5)", c.GenotypeError)
	}
	if c.Species != "" {
		if _, ok := Species(c.Species); !ok {
			return bad("species %q: want one of %s", c.Species, strings.Join(SpeciesNames(), ", "))
		}
	}
	if c.CMPerMB == 0 {
		c.CMPerMB = 1.0
		if p, ok := Species(c.Species); ok {
			c.CMPerMB = p.CMPerMB
		}
	}
	if !(c.CMPerMB > 0) || math.IsInf(c.CMPerMB, 0) {
		return bad("cM per Mb %g: want a positive number", c.CMPerMB)
	}
	if !(c.AutozygousPrior > 0 && c.AutozygousPrior < 1) {
		return bad("autozygous prior %g: want a value in (0, 1)", c.AutozygousPrior)
	}
	if !(c.Rate > 0) || math.IsInf(c.Rate, 0) {
		return bad("rate %g: want a positive number", c.Rate)
	}
	if c.FitIterations <= 0 {
		c.FitIterations = 20
	}
	if len(c.Classes) == 0 {
		return bad("no length classes")
	}
	cl := append([]float64(nil), c.Classes...)
	sort.Float64s(cl)
	for i, v := range cl {
		if !(v > 0) || math.IsInf(v, 0) {
			return bad("length class %g Mb: want a positive number", v)
		}
		if i > 0 && cl[i-1] == v {
			return bad("length class %g Mb given twice", v)
		}
	}
	c.Classes = cl
	if !(c.MaxGapKB > 0) {
		return bad("maximum gap %g kb: want a positive number", c.MaxGapKB)
	}
	r := c.Rules
	if r.MaxHet < 0 || r.MaxMissing < 0 || r.MinSites < 1 || r.MinKB < 0 || !(r.MinSitesPerMb > 0) || r.EdgeHomSites < 0 {
		return bad("rule thresholds: want max het >= 0, max missing >= 0, min sites >= 1, min kb >= 0, sites per Mb > 0, edge sites >= 0")
	}
	if c.Threads < 1 {
		c.Threads = 1
	}
	if c.Ages != nil {
		a := *c.Ages
		a.Rates = append([]float64(nil), a.Rates...)
		a.Start = append([]float64(nil), a.Start...)
		if len(a.Start) == 0 {
			a.Start = nil
		}
		a.GenotypeError = c.GenotypeError
		a.MaxGapBP = int64(c.MaxGapKB * 1000)
		if err := a.Validate(); err != nil {
			return bad("%v", err)
		}
		c.Ages = &a
		if !(c.AgeMarginCM >= 0) || math.IsInf(c.AgeMarginCM, 0) {
			return bad("age window margin %g cM: want a number >= 0", c.AgeMarginCM)
		}
		if !(c.AgeWholeShare >= 0 && c.AgeWholeShare <= 1) {
			return bad("age whole-chromosome share %g: want a value in [0, 1]", c.AgeWholeShare)
		}
	}
	if c.MemoryBudget < 0 {
		return bad("memory budget %d bytes: want a positive number (0 for the default)", c.MemoryBudget)
	}
	if c.MemoryBudget == 0 {
		c.MemoryBudget = DefaultMemoryBudget
	}
	return nil
}

func (c *Config) autosomes() autosomeSet {
	list := c.Autosomes
	if list == nil && c.Species != "" {
		p, _ := Species(c.Species)
		list = p.Autosomes
	}
	if list == nil {
		return autosomeSet{numeric: true}
	}
	m := make(map[string]bool, len(list))
	for _, s := range list {
		m[normName(strings.TrimSpace(s))] = true
	}
	return autosomeSet{names: m}
}
