package scanrun

import (
	"fmt"
	"slices"
	"strings"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/cmd/fgauge/internal/plan"
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
func (s *SexSettings) sexConfig(input string, samplesInFile, samples []string, contigs []vcfscan.Contig, ped *pedigree.Pedigree, pedFile string) (stats.SexConfig, error) {
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
	c.XColumns = xInData(input, contigs, c.Kind)
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

// SexThresholdsText describes the sex check's thresholds, with their
// sources, for --help.
func SexThresholdsText() string { return sexcheck.DefaultThresholds().Describe() }

// ReadSexSettings reads the --sex file and the --par value (@FILE, a
// region file, or CHROM:START-END,...); species "human" (any case) turns
// on the human contig numbers and PAR recognition. Problems with the
// files are bad input (exit 2), named by file and line.
func ReadSexSettings(sexFile, par, species string) (SexSettings, error) {
	s := SexSettings{Human: strings.EqualFold(species, "human")}
	if sexFile != "" {
		r, err := vcfscan.OpenText(sexFile)
		if err != nil {
			return s, err
		}
		defer r.Close()
		if s.List, err = sexcheck.ReadList(r, sexFile); err != nil {
			return s, badinput.Wrap(fmt.Errorf("--sex: %w", err))
		}
	}
	if par == "" {
		return s, nil
	}
	s.PARSource = par
	if file, ok := strings.CutPrefix(par, "@"); ok {
		regs, err := vcfscan.ReadRegionList(file)
		if err != nil {
			return s, err
		}
		if len(regs) == 0 {
			return s, badinput.Errorf("--par %s: no regions in the file", par)
		}
		s.PAR = regs
		return s, nil
	}
	for _, spec := range strings.Split(par, ",") {
		r, err := vcfscan.ParseRegion(strings.TrimSpace(spec))
		if err != nil {
			return s, badinput.Errorf("--par: %v", err)
		}
		s.PAR = append(s.PAR, r)
	}
	return s, nil
}

// xInData decides whether sites.tsv.gz carries the male-count columns of
// non-PAR X rows: when the header declares an X contig and, if the input
// has an index, the index holds records on it. Every shard of one input
// decides alike (header and index, never the shard's regions), so their
// tables join.
func xInData(input string, contigs []vcfscan.Contig, kind func(string) sexcheck.Kind) bool {
	var xs []string
	for _, ct := range contigs {
		if kind(ct.Name) == sexcheck.ChromX {
			xs = append(xs, ct.Name)
		}
	}
	if len(xs) == 0 {
		return false
	}
	if input == "-" {
		return true
	}
	refs, err := plan.ReadIndexRefs(input, &vcfscan.Header{Contigs: contigs})
	if err != nil {
		return true // no usable index: the header decides
	}
	for _, r := range refs {
		if slices.Contains(xs, r.Name) {
			return true
		}
	}
	return false
}
