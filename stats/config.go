package stats

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"strconv"
)

// FreqSource says where the allele frequencies used by the per-sample
// estimators come from.
type FreqSource int

// Frequency sources.
const (
	// FreqCohort: from the selected samples' diploid calls at the site.
	FreqCohort FreqSource = iota
	// FreqPopulation: from the calls of the sample's own population
	// (samples outside every population use the cohort frequency).
	FreqPopulation
	// FreqInfo: from an INFO key (vcfscan.Record.InfoValue).
	FreqInfo
	// FreqPanel: from an external panel file (Config.Panel).
	FreqPanel
)

func (f FreqSource) String() string {
	return [...]string{"cohort", "population", "info", "panel"}[f]
}

// Config selects what a Worker computes.
type Config struct {
	// Samples are the selected samples, in the order of the batches' calls.
	Samples []string
	// PopOf gives, per selected sample, its population index into PopNames
	// or -1; nil without populations.
	PopOf    []int
	PopNames []string
	// HWEMethod is "exact" (default) or "chisq".
	HWEMethod string
	Freqs     FreqSource
	// Panel holds the external frequencies when Freqs is FreqPanel.
	Panel *Panel
	// JackknifeBlockBP is the width of the genomic windows used as
	// jackknife blocks (default 5,000,000).
	JackknifeBlockBP int64
	// MinCallRate flags samples below it (low_call_rate).
	MinCallRate float64
	// LikFreqs chooses the site frequencies of f_lik.
	LikFreqs LikFreqSource
	// NoLikelihoods leaves PL/GL and DP unused: no f_lik, alt_freq_lik
	// or depth (and He, f_site from hard calls).
	NoLikelihoods bool
	// Sex is the treatment of the sex chromosomes (zero: none).
	Sex SexConfig
}

// DefaultJackknifeBlockBP is the default jackknife window: 5 Mb.
const DefaultJackknifeBlockBP = 5_000_000

// Validate checks the configuration.
func (c *Config) Validate() error {
	if c.HWEMethod != "" && c.HWEMethod != "exact" && c.HWEMethod != "chisq" {
		return fmt.Errorf("stats: HWE method %q: want exact or chisq", c.HWEMethod)
	}
	if c.PopOf != nil && len(c.PopOf) != len(c.Samples) {
		return fmt.Errorf("stats: %d population assignments for %d samples", len(c.PopOf), len(c.Samples))
	}
	for i, p := range c.PopOf {
		if p < -1 || p >= len(c.PopNames) {
			return fmt.Errorf("stats: sample %s: population index %d out of range", c.Samples[i], p)
		}
	}
	if c.Freqs == FreqPopulation && c.PopOf == nil {
		return errors.New("stats: population frequencies need populations")
	}
	if c.Freqs == FreqPanel && c.Panel == nil {
		return errors.New("stats: panel frequencies need a panel")
	}
	if c.LikFreqs < 0 || int(c.LikFreqs) >= len(LikFreqNames) {
		return fmt.Errorf("stats: f_lik frequency source %d out of range", c.LikFreqs)
	}
	if c.Sex.Given != nil && len(c.Sex.Given) != len(c.Samples) {
		return fmt.Errorf("stats: %d given sexes for %d samples", len(c.Sex.Given), len(c.Samples))
	}
	if c.JackknifeBlockBP < 0 {
		return fmt.Errorf("stats: jackknife block %d bp: must be positive", c.JackknifeBlockBP)
	}
	return nil
}

// ErrBadTable is wrapped by errors in the population and panel files.
var ErrBadTable = errors.New("bad table")

// TableError locates a problem in a population or panel file.
type TableError struct {
	File string
	Line int
	What string
	Err  error
}

func (e *TableError) Error() string { return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.What) }
func (e *TableError) Unwrap() error { return e.Err }

// Populations is a parsed population file.
type Populations struct {
	Names []string       // in order of first appearance
	Of    map[string]int // sample -> index into Names
}

// ReadPopulations reads a population file: two whitespace-separated
// columns, sample and population, one sample per line; a first line
// "sample population" is taken as a header; blank lines and lines starting
// with '#' are ignored. A sample listed twice is an error.
func ReadPopulations(r io.Reader, name string) (*Populations, error) {
	p := &Populations{Of: map[string]int{}}
	idx := map[string]int{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), 16<<20)
	line := 0
	for sc.Scan() {
		line++
		b := bytes.TrimSpace(sc.Bytes())
		if len(b) == 0 || b[0] == '#' {
			continue
		}
		f := bytes.Fields(b)
		if len(f) != 2 {
			return nil, &TableError{name, line, fmt.Sprintf("want 2 columns (sample population), got %d", len(f)), ErrBadTable}
		}
		s, pop := string(f[0]), string(f[1])
		if line == 1 && s == "sample" && pop == "population" {
			continue
		}
		if _, dup := p.Of[s]; dup {
			return nil, &TableError{name, line, fmt.Sprintf("sample %q listed twice", s), ErrBadTable}
		}
		i, ok := idx[pop]
		if !ok {
			i = len(p.Names)
			idx[pop] = i
			p.Names = append(p.Names, pop)
		}
		p.Of[s] = i
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if len(p.Names) == 0 {
		return nil, &TableError{name, line, "no samples listed", ErrBadTable}
	}
	return p, nil
}

// Assign maps the selected samples to population indices (-1 when not
// listed) and returns the unlisted samples.
func (p *Populations) Assign(samples []string) (popOf []int, unlisted []string) {
	popOf = make([]int, len(samples))
	for i, s := range samples {
		if j, ok := p.Of[s]; ok {
			popOf[i] = j
		} else {
			popOf[i] = -1
			unlisted = append(unlisted, s)
		}
	}
	return popOf, unlisted
}

// Panel holds external alternate-allele frequencies keyed by site.
type Panel struct {
	sites map[panelKey]int32 // -> index into Freq
	Ref   []byte
	Alt   []byte
	Freq  []float64
}

type panelKey struct {
	chrom string
	pos   int64
}

// Len is the number of panel sites.
func (p *Panel) Len() int { return len(p.Freq) }

// lookup returns the frequency of alt at (chrom,pos,ref,alt), the panel
// index, and whether it matched. Swapped alleles give 1-p.
func (p *Panel) lookup(chrom string, pos int64, ref, alt byte) (float64, int, panelMatch) {
	i, ok := p.sites[panelKey{chromKey(chrom), pos}]
	if !ok {
		return 0, -1, panelAbsent
	}
	switch {
	case p.Ref[i] == ref && p.Alt[i] == alt:
		return p.Freq[i], int(i), panelFound
	case p.Ref[i] == alt && p.Alt[i] == ref:
		return 1 - p.Freq[i], int(i), panelFound
	}
	return 0, int(i), panelMismatch
}

type panelMatch int

const (
	panelFound panelMatch = iota
	panelAbsent
	panelMismatch
)

// ReadPanel reads a frequency panel: whitespace-separated columns chrom,
// pos, ref, alt, alt_freq; an optional header line starting with "chrom";
// '#' lines ignored. Only single-base alleles are kept (others are
// counted in skipped). alt_freq must lie in [0,1]. Chromosome names match
// the data's with or without a leading "chr"; a site whose REF and ALT are
// swapped relative to the data is used with frequency 1 - alt_freq.
func ReadPanel(r io.Reader, name string) (p *Panel, skipped int, err error) {
	p = &Panel{sites: map[panelKey]int32{}}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), 16<<20)
	line := 0
	for sc.Scan() {
		line++
		b := bytes.TrimSpace(sc.Bytes())
		if len(b) == 0 || b[0] == '#' {
			continue
		}
		f := bytes.Fields(b)
		if line == 1 && string(f[0]) == "chrom" {
			continue
		}
		if len(f) != 5 {
			return nil, 0, &TableError{name, line, fmt.Sprintf("want 5 columns (chrom pos ref alt alt_freq), got %d", len(f)), ErrBadTable}
		}
		pos, e := strconv.ParseInt(string(f[1]), 10, 64)
		if e != nil || pos < 1 {
			return nil, 0, &TableError{name, line, fmt.Sprintf("pos %q is not a positive integer", f[1]), ErrBadTable}
		}
		q, e := strconv.ParseFloat(string(f[4]), 64)
		if e != nil || !(q >= 0 && q <= 1) {
			return nil, 0, &TableError{name, line, fmt.Sprintf("alt_freq %q is not a number in [0,1]", f[4]), ErrBadTable}
		}
		if len(f[2]) != 1 || len(f[3]) != 1 {
			skipped++
			continue
		}
		k := panelKey{chromKey(string(f[0])), pos}
		if _, dup := p.sites[k]; dup {
			return nil, 0, &TableError{name, line, fmt.Sprintf("site %s:%d listed twice", f[0], pos), ErrBadTable}
		}
		p.sites[k] = int32(len(p.Freq))
		p.Ref = append(p.Ref, upper(f[2][0]))
		p.Alt = append(p.Alt, upper(f[3][0]))
		p.Freq = append(p.Freq, q)
	}
	if err := sc.Err(); err != nil {
		return nil, 0, fmt.Errorf("%s: %w", name, err)
	}
	return p, skipped, nil
}

// chromKey drops a leading "chr" (any case) so that "chr7" and "7" name
// the same chromosome in the panel and the data.
func chromKey(c string) string {
	if len(c) > 3 && (c[0] == 'c' || c[0] == 'C') && (c[1] == 'h' || c[1] == 'H') && (c[2] == 'r' || c[2] == 'R') {
		return c[3:]
	}
	return c
}

func upper(c byte) byte {
	if c >= 'a' && c <= 'z' {
		return c - 'a' + 'A'
	}
	return c
}
