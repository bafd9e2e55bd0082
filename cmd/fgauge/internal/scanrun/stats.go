package scanrun

import (
	"fmt"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/stats"
)

// StatsSettings are the statistics options of a scan, with the population
// and frequency files already read.
type StatsSettings struct {
	HWEMethod        string              // "exact" or "chisq"
	Populations      *stats.Populations  // nil: no populations
	PopulationsFile  string              // named in messages
	Panel            *stats.Panel        // nil: no frequency panel
	InfoKey          string              // INFO key of alternate-allele frequencies ("" : none)
	MinCallRate      float64             // flag samples below this call rate
	JackknifeBlockMB float64             // width of the jackknife windows in Mb
	LikFreqs         stats.LikFreqSource // site frequencies of f_lik
	NoLikelihoods    bool                // ignore PL/GL and DP
}

// check validates the settings; the messages name the scan options.
func (s *StatsSettings) check() error {
	if s.HWEMethod != "exact" && s.HWEMethod != "chisq" {
		return badinput.Errorf("--hwe-method %q: want exact or chisq", s.HWEMethod)
	}
	if s.Panel != nil && s.InfoKey != "" {
		return badinput.Errorf("--freqs and --freqs-from-info exclude each other")
	}
	if !(s.MinCallRate >= 0 && s.MinCallRate <= 1) {
		return badinput.Errorf("--min-call-rate %v: want a number in [0,1]", s.MinCallRate)
	}
	if !(s.JackknifeBlockMB > 0) || s.JackknifeBlockMB*1e6 > 1e15 {
		return badinput.Errorf("--jackknife-block-mb %v: want a positive number", s.JackknifeBlockMB)
	}
	return nil
}

// config builds the statistics configuration for the selected samples
// (in the reader's order) and returns the samples absent from the
// populations.
func (s *StatsSettings) config(samples []string) (*stats.Config, []string, error) {
	if err := s.check(); err != nil {
		return nil, nil, err
	}
	c := &stats.Config{
		Samples:          samples,
		HWEMethod:        s.HWEMethod,
		Freqs:            stats.FreqCohort,
		JackknifeBlockBP: int64(s.JackknifeBlockMB*1e6 + 0.5),
		MinCallRate:      s.MinCallRate,
		LikFreqs:         s.LikFreqs,
		NoLikelihoods:    s.NoLikelihoods,
	}
	var unlisted []string
	if s.Populations != nil {
		c.PopOf, unlisted = s.Populations.Assign(samples)
		c.PopNames = s.Populations.Names
		if len(unlisted) == len(samples) {
			return nil, nil, badinput.Errorf("--populations %s: none of the %d samples is listed", s.PopulationsFile, len(samples))
		}
		c.Freqs = stats.FreqPopulation
	}
	switch {
	case s.Panel != nil:
		c.Freqs, c.Panel = stats.FreqPanel, s.Panel
	case s.InfoKey != "":
		c.Freqs = stats.FreqInfo
	}
	if err := c.Validate(); err != nil {
		return nil, nil, fmt.Errorf("scan: %w", err)
	}
	return c, unlisted, nil
}
