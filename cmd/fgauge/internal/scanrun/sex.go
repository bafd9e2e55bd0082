package scanrun

import (
	"fmt"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/stats"
	"fgauge/stats/pedigree"
	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

// SexSettings are the sex-chromosome options of a scan, files already read.
type SexSettings struct {
	// List is the --sex file (nil: none). Every sample it names must be
	// in the input file (else exit 2 naming the line); samples of the
	// data it does not list have no given sex.
	List *sexcheck.List
	// PAR is the --par region list (nil: none); PARSource names it.
	PAR       []vcfscan.Region
	PARSource string
	// Human: --species human, so 23/24/26 name X/Y/MT and, without
	// --par, the PARs of GRCh37 or GRCh38 are recognised from the X length.
	Human bool
}

// sexConfig resolves the settings against the input's samples and
// contigs. samplesInFile are all of the input's samples, samples the
// selected ones.
func (s *SexSettings) sexConfig(samplesInFile, samples []string, contigs []vcfscan.Contig, ped *pedigree.Pedigree, pedFile string) (stats.SexConfig, error) {
	human := s.Human
	c := stats.SexConfig{
		Kind:       func(name string) sexcheck.Kind { return sexcheck.KindByName(name, human) },
		Thresholds: sexcheck.DefaultThresholds(),
	}
	switch {
	case s.PAR != nil:
		c.PAR = sexcheck.NewPAR(s.PAR, fmt.Sprintf("from --par %s", s.PARSource))
	case human:
		c.PAR, _ = sexcheck.HumanPAR(contigs)
	default:
		c.PAR = sexcheck.NewPAR(nil, "no --par and --species is not human: no PAR, every site on X and Y is treated as sex-linked")
	}
	c.PARReason = c.PAR.Reason
	c.PARRegions = []string{}
	for _, r := range c.PAR.Regions() {
		c.PARRegions = append(c.PARRegions, fmt.Sprintf("%s:%d-%d", r.Chrom, r.Start, r.End))
	}
	for _, ct := range contigs {
		if c.Kind(ct.Name) == sexcheck.ChromX {
			c.XColumns = true
		}
	}
	switch {
	case s.List != nil:
		m, err := s.List.ForSamples(samplesInFile, sexcheck.AbsentIsError)
		if err != nil {
			return c, badinput.Wrap(fmt.Errorf("--sex: %w", err))
		}
		byName := make(map[string]sexcheck.Sex, len(samplesInFile))
		for i, n := range samplesInFile {
			byName[n] = m.Sexes[i]
		}
		c.Given = make([]sexcheck.Sex, len(samples))
		for i, n := range samples {
			c.Given[i] = byName[n]
		}
		c.GivenSource = "--sex " + s.List.Name
	case ped != nil:
		if given, ok := sexcheck.FromPedigree(ped, samples); ok {
			c.Given, c.GivenSource = given, "pedigree "+pedFile
		}
	}
	return c, nil
}
