package main

import (
	"flag"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/stats"
	"fgauge/vcfscan"
)

// statsFlags are the scan options of per-site, population and per-sample
// statistics.
type statsFlags struct {
	hweMethod   string
	populations string
	freqs       string
	freqsInfo   string
	minCallRate float64
	blockMB     float64
	likFreqs    string
	noLik       bool

	pops  *stats.Populations // read by prepare
	panel *stats.Panel
	// panelSkipped counts panel lines with alleles longer than one base.
	panelSkipped int
}

// statsHelp is appended to the scan help.
const statsHelp = `Statistics:
  hwe_p is the exact Hardy-Weinberg test of Wigginton, Cutler & Abecasis 2005
  (Am J Hum Genet 76:887); --hwe-method chisq uses the 1-df chi-square test
  instead (large samples); hwe_p_fewer_het and hwe_p_more_het are its
  one-sided tails (fewer or more heterozygotes than expected). Per-sample F:
  f_hom (method of moments, Li & Horvitz 1953, Am J Hum Genet 5:107), f_grm,
  f_excess_hom, f_uniting_gametes (Yang et al. 2011, Am J Hum Genet 88:76) and
  f_vanraden (VanRaden 2008, J Dairy Sci 91:4414); polymorphic_sites_called,
  homozygous_share and homozygous_share_under_hwe follow them as diagnostics.
  Allele frequencies come from the cohort, from each sample's population
  (with --populations), from an INFO key (--freqs-from-info) or from a panel
  file (--freqs: columns chrom pos ref alt alt_freq). With --populations (columns
  sample population), Weir & Cockerham 1984 (Evolution 38:1358) F_ST, F_IS
  and F_IT are estimated with block-jackknife standard errors over genomic
  windows of --jackknife-block-mb.

Low depth (genotype likelihoods):
  When records carry PL (or GL), f_lik is the maximum-likelihood F from the
  likelihoods (Vieira et al. 2013, Genome Res 23:1852), at site frequencies
  estimated from the likelihoods by EM (alt_freq_lik in sites.tsv.gz; Kim et
  al. 2011, BMC Bioinformatics 12:231; Li 2011, Bioinformatics 27:2987).
  --f-lik-freqs chooses them: auto (default) uses --freqs/--freqs-from-info
  frequencies when given, else the likelihood EM frequency (per population
  with --populations); likelihood always the EM frequency; estimators the
  very frequencies of the hard-call estimators (hard-call frequencies are
  biased at low depth). With likelihoods, sites.tsv.gz's het_expected and
  f_site use alt_freq_lik; the genotype counts, het_observed and the HWE
  tests stay on hard calls. depth_mean in samples.tsv comes from FORMAT DP,
  else from the likelihoods (depth_source). Below a cohort mean depth of 10
  hard-call estimators overstate F (heterozygotes seen on one allele look
  homozygous): run.json, the console and the report then warn (low_depth);
  read f_lik and f_roh. --no-likelihood-f ignores PL/GL and DP.
`

// addStatsFlags registers the statistics options on fs.
func addStatsFlags(fs *flag.FlagSet) *statsFlags {
	f := &statsFlags{}
	fs.StringVar(&f.hweMethod, "hwe-method", "exact", "Hardy-Weinberg test: exact (Wigginton et al. 2005) or chisq (1-df chi-square, for very large samples)")
	fs.StringVar(&f.populations, "populations", "", "`FILE` of lines 'sample population' (header optional); enables per-population rows and Weir & Cockerham F-statistics; unlisted samples are left out of population statistics")
	fs.StringVar(&f.freqs, "freqs", "", "`FILE` of allele frequencies 'chrom pos ref alt alt_freq' for the per-sample estimators; data sites absent from it are left out of the estimators and counted")
	fs.StringVar(&f.freqsInfo, "freqs-from-info", "", "INFO `KEY` (e.g. AF) holding the alternate-allele frequency for the per-sample estimators")
	fs.Float64Var(&f.minCallRate, "min-call-rate", 0.9, "flag samples whose call rate is below this (low_call_rate)")
	fs.Float64Var(&f.blockMB, "jackknife-block-mb", 5, "width in Mb of the genomic windows used as jackknife blocks for F-statistic standard errors")
	fs.StringVar(&f.likFreqs, "f-lik-freqs", "auto", "site frequencies of f_lik: auto, likelihood or estimators (see Low depth below)")
	fs.BoolVar(&f.noLik, "no-likelihood-f", false, "ignore PL/GL and DP for the statistics: no f_lik, alt_freq_lik or depth_mean, hard-call He and f_site (the ROH HMM still uses PL)")
	return f
}

// prepare checks the options and reads the population and frequency
// files.
func (f *statsFlags) prepare() error {
	if f.hweMethod != "exact" && f.hweMethod != "chisq" {
		return usagef("--hwe-method %q: want exact or chisq", f.hweMethod)
	}
	if f.freqs != "" && f.freqsInfo != "" {
		return usagef("--freqs and --freqs-from-info exclude each other")
	}
	if !(f.minCallRate >= 0 && f.minCallRate <= 1) {
		return usagef("--min-call-rate %v: want a number in [0,1]", f.minCallRate)
	}
	if _, ok := likFreqSource(f.likFreqs); !ok {
		return usagef("--f-lik-freqs %q: want auto, likelihood or estimators", f.likFreqs)
	}
	if !(f.blockMB > 0) || f.blockMB*1e6 > 1e15 {
		return usagef("--jackknife-block-mb %v: want a positive number", f.blockMB)
	}
	if f.populations != "" && f.pops == nil {
		r, err := vcfscan.OpenText(f.populations)
		if err != nil {
			return usagef("--populations: %v", err)
		}
		defer r.Close()
		if f.pops, err = stats.ReadPopulations(r, f.populations); err != nil {
			return badinput.Wrap(err)
		}
	}
	if f.freqs != "" && f.panel == nil {
		r, err := vcfscan.OpenText(f.freqs)
		if err != nil {
			return usagef("--freqs: %v", err)
		}
		defer r.Close()
		if f.panel, f.panelSkipped, err = stats.ReadPanel(r, f.freqs); err != nil {
			return badinput.Wrap(err)
		}
	}
	return nil
}

// settings checks the options, reads the population and frequency files
// (prepare) and returns them for scanrun.
func (f *statsFlags) settings() (scanrun.StatsSettings, error) {
	if err := f.prepare(); err != nil {
		return scanrun.StatsSettings{}, err
	}
	lf, _ := likFreqSource(f.likFreqs)
	return scanrun.StatsSettings{HWEMethod: f.hweMethod, Populations: f.pops, PopulationsFile: f.populations,
		Panel: f.panel, InfoKey: f.freqsInfo, MinCallRate: f.minCallRate, JackknifeBlockMB: f.blockMB,
		LikFreqs: lf, NoLikelihoods: f.noLik}, nil
}

// likFreqSource maps a --f-lik-freqs value to its source.
func likFreqSource(v string) (stats.LikFreqSource, bool) {
	for i, n := range stats.LikFreqNames {
		if n == v {
			return stats.LikFreqSource(i), true
		}
	}
	return 0, false
}
