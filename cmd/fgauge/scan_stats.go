package main

import (
	"flag"
	"fmt"

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

	pops  *stats.Populations // read by prepare
	panel *stats.Panel
	// panelSkipped counts panel lines with alleles longer than one base.
	panelSkipped int
	// unlisted are the selected samples absent from --populations.
	unlisted []string
}

// statsHelp is appended to the scan help.
const statsHelp = `Statistics:
  hwe_p is the exact Hardy-Weinberg test of Wigginton, Cutler & Abecasis 2005
  (Am J Hum Genet 76:887); --hwe-method chisq uses the 1-df chi-square test
  instead (large samples). Per-sample F: f_hom (excess homozygosity, method of
  moments), f_grm, f_excess_hom, f_uniting_gametes (Yang et al. 2011, Am J Hum
  Genet 88:76) and f_vanraden (VanRaden 2008, J Dairy Sci 91:4414). Allele
  frequencies come from the cohort, from each sample's population (with
  --populations), from an INFO key (--freqs-from-info) or from a panel file
  (--freqs: columns chrom pos ref alt alt_freq). With --populations (columns
  sample population), Weir & Cockerham 1984 (Evolution 38:1358) F_ST, F_IS
  and F_IT are estimated with block-jackknife standard errors over genomic
  windows of --jackknife-block-mb.
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
	return f
}

// prepare checks the options, reads the population and frequency files,
// and sets what the reader must extract (the INFO key of
// --freqs-from-info). Call it before opening the input.
func (f *statsFlags) prepare(read *vcfscan.Options) error {
	if f.hweMethod != "exact" && f.hweMethod != "chisq" {
		return usagef("--hwe-method %q: want exact or chisq", f.hweMethod)
	}
	if f.freqs != "" && f.freqsInfo != "" {
		return usagef("--freqs and --freqs-from-info exclude each other")
	}
	if !(f.minCallRate >= 0 && f.minCallRate <= 1) {
		return usagef("--min-call-rate %v: want a number in [0,1]", f.minCallRate)
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
			return &usageError{err.Error()}
		}
	}
	if f.freqs != "" && f.panel == nil {
		r, err := vcfscan.OpenText(f.freqs)
		if err != nil {
			return usagef("--freqs: %v", err)
		}
		defer r.Close()
		if f.panel, f.panelSkipped, err = stats.ReadPanel(r, f.freqs); err != nil {
			return &usageError{err.Error()}
		}
	}
	if f.freqsInfo != "" && read != nil {
		read.InfoKey = f.freqsInfo
	}
	return nil
}

// config builds the statistics configuration for the selected samples
// (in the reader's order). It calls prepare(nil) if that was not done.
func (f *statsFlags) config(samples []string) (*stats.Config, error) {
	if err := f.prepare(nil); err != nil {
		return nil, err
	}
	c := &stats.Config{
		Samples:          samples,
		HWEMethod:        f.hweMethod,
		Freqs:            stats.FreqCohort,
		JackknifeBlockBP: int64(f.blockMB*1e6 + 0.5),
		MinCallRate:      f.minCallRate,
	}
	if f.pops != nil {
		c.PopOf, f.unlisted = f.pops.Assign(samples)
		c.PopNames = f.pops.Names
		if len(f.unlisted) == len(samples) {
			return nil, usagef("--populations %s: none of the %d samples is listed", f.populations, len(samples))
		}
		c.Freqs = stats.FreqPopulation
	}
	switch {
	case f.panel != nil:
		c.Freqs, c.Panel = stats.FreqPanel, f.panel
	case f.freqsInfo != "":
		c.Freqs = stats.FreqInfo
	}
	if err := c.Validate(); err != nil {
		return nil, fmt.Errorf("scan: %w", err)
	}
	return c, nil
}
