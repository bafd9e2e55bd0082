package htmlreport

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fgauge/cmd/fgauge/internal/runsummary"
	"fgauge/internal/numfmt"
	"fgauge/roh"
	"fgauge/stats"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"github.com/klauspost/compress/gzip"
)

// runInfo is run.json as scan and merge write it (runsummary.Run), with
// its optional sections replaced by empty ones when absent so that the
// report can read them unconditionally. Unknown keys are ignored; missing
// ones stay zero.
type runInfo struct {
	runsummary.Run
	sitesPresent bool // run.json has a "sites" section
}

// fillAbsent replaces absent optional sections by empty ones.
func (ri *runInfo) fillAbsent() {
	ri.sitesPresent = ri.Sites != nil
	if ri.Sites == nil {
		ri.Sites = &stats.SitesSummary{Lambda: numfmt.JSONFloat(math.NaN()), MeanFSite: numfmt.JSONFloat(math.NaN())}
	}
	if ri.ROH == nil {
		ri.ROH = &roh.Summary{}
	}
}

// rohRun is one row of runs.tsv.
type rohRun struct {
	chrom      string
	start, end int64
	lengthBP   float64
	lengthCM   float64
	nSites     float64
	nHet       float64
	meanPost   float64
	genBack    float64
}

// contig is one chromosome seen in sites.tsv.gz (or runs.tsv), in file order.
type contig struct {
	name   string
	maxPos int64
	nSites int64
}

// fSiteBins is the number of histogram bins for f_site over [-1, 1].
const fSiteBins = 80

// siteSummary is what the report keeps from streaming sites.tsv.gz.
type siteSummary struct {
	present  bool
	rows     int64
	fSite    [fSiteBins]int64 // counts over [-1,1]
	fSiteN   int64
	fSiteNA  int64
	contigs  []contig
	contigIx map[string]int
}

// data is everything read from one scan output folder.
type data struct {
	dir         string
	samples     *table
	info        runInfo
	infoPresent bool
	runsPresent bool
	runs        map[string][]rohRun // by sample name
	runLenMb    []float64
	pops        *table // populations.tsv, nil when absent
	pairs       *table // populations_pairwise.tsv, nil when absent
	sites       siteSummary
}

// load reads an output folder. samples.tsv is required; every other file
// is optional.
func load(dir string) (*data, error) {
	d := &data{dir: dir, runs: map[string][]rohRun{}}
	var err error
	d.samples, err = readTable(filepath.Join(dir, "samples.tsv"), false, "sample")
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	if err := d.loadInfo(filepath.Join(dir, "run.json")); err != nil {
		return nil, err
	}
	if err := d.loadRuns(filepath.Join(dir, "runs.tsv")); err != nil {
		return nil, err
	}
	if d.pops, err = readTable(filepath.Join(dir, "populations.tsv"), true, "population"); err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	if d.pairs, err = readTable(filepath.Join(dir, "populations_pairwise.tsv"), true, "population_a", "population_b", "f_st"); err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	if err := d.loadSites(filepath.Join(dir, "sites.tsv.gz")); err != nil {
		return nil, err
	}
	return d, nil
}

func (d *data) loadInfo(path string) error {
	defer d.info.fillAbsent()
	b, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	if err := json.Unmarshal(b, &d.info); err != nil {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			line := 1 + bytes.Count(b[:min(int(se.Offset), len(b))], []byte{'\n'})
			return fmt.Errorf("report: %s:%d: %v: %w", path, line, err, ErrMalformed)
		}
		return fmt.Errorf("report: %s: %v: %w", path, err, ErrMalformed)
	}
	d.infoPresent = true
	return nil
}

func (d *data) loadRuns(path string) error {
	t, err := readTable(path, true, "sample", "chrom", "start", "end")
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	if t == nil {
		return nil
	}
	d.runsPresent = true
	for r := range t.rows {
		run := rohRun{
			chrom:    t.str(r, "chrom"),
			lengthBP: t.num(r, "length_bp"),
			lengthCM: t.num(r, "length_cm"),
			nSites:   t.num(r, "n_sites"),
			nHet:     t.num(r, "n_het"),
			meanPost: t.num(r, "mean_posterior_autozygous"),
			genBack:  t.num(r, "generations_back"),
		}
		s, e := t.num(r, "start"), t.num(r, "end")
		if math.IsNaN(s) || math.IsNaN(e) {
			return fmt.Errorf("report: %s:%d: start or end is not a number: %w", path, r+2, ErrMalformed)
		}
		run.start, run.end = int64(s), int64(e)
		if math.IsNaN(run.lengthBP) {
			run.lengthBP = float64(run.end - run.start + 1)
		}
		name := t.str(r, "sample")
		d.runs[name] = append(d.runs[name], run)
		d.runLenMb = append(d.runLenMb, run.lengthBP/1e6)
	}
	return nil
}

// loadSites streams sites.tsv.gz (BGZF or plain gzip, multi-member) and
// keeps contig extents and the f_site histogram.
func (d *data) loadSites(path string) error {
	f, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(bufio.NewReaderSize(f, 1<<16))
	if err != nil {
		return fmt.Errorf("report: %s: %v: %w", path, err, ErrMalformed)
	}
	defer zr.Close()
	s, err := scanSites(path, zr)
	if err != nil {
		return err
	}
	d.sites = s
	return nil
}

// scanSites reads the sites table from r without allocating per row.
func scanSites(path string, r io.Reader) (siteSummary, error) {
	s := siteSummary{present: true, contigIx: map[string]int{}}
	br := bufio.NewReaderSize(r, 1<<16)
	line := 0
	iChrom, iPos, iF := -1, -1, -1
	var fields [][]byte
	for {
		b, err := br.ReadSlice('\n')
		if err == bufio.ErrBufferFull {
			// a very long line: collect it whole
			long := append([]byte(nil), b...)
			for err == bufio.ErrBufferFull {
				b, err = br.ReadSlice('\n')
				long = append(long, b...)
			}
			b = long
		}
		if len(b) == 0 && err != nil {
			if err == io.EOF {
				break
			}
			return s, fmt.Errorf("report: %s:%d: %w", path, line+1, err)
		}
		line++
		b = bytes.TrimRight(b, "\r\n")
		fields = splitTabs(fields[:0], b)
		if line == 1 {
			for i, h := range fields {
				switch string(h) {
				case "chrom":
					iChrom = i
				case "pos":
					iPos = i
				case "f_site":
					iF = i
				}
			}
			if iChrom < 0 || iPos < 0 {
				return s, fmt.Errorf("report: %s:1: no chrom or pos column: %w", path, ErrMalformed)
			}
			continue
		}
		if len(b) == 0 {
			continue
		}
		if len(fields) <= iChrom || len(fields) <= iPos || (iF >= 0 && len(fields) <= iF) {
			return s, fmt.Errorf("report: %s:%d: too few fields: %w", path, line, ErrMalformed)
		}
		s.rows++
		ci, ok := s.contigIx[string(fields[iChrom])]
		if !ok {
			ci = len(s.contigs)
			name := string(fields[iChrom])
			s.contigIx[name] = ci
			s.contigs = append(s.contigs, contig{name: name})
		}
		pos, perr := strconv.ParseInt(string(fields[iPos]), 10, 64) // no alloc: conversion in call is optimised
		if perr != nil {
			return s, fmt.Errorf("report: %s:%d: pos %q: %w", path, line, fields[iPos], ErrMalformed)
		}
		c := &s.contigs[ci]
		c.nSites++
		if pos > c.maxPos {
			c.maxPos = pos
		}
		if iF >= 0 {
			v := fields[iF]
			if string(v) == "NA" {
				s.fSiteNA++
			} else if x, ferr := strconv.ParseFloat(string(v), 64); ferr == nil && !math.IsNaN(x) {
				s.fSite[fSiteBin(x)]++
				s.fSiteN++
			} else {
				s.fSiteNA++
			}
		}
		if err == io.EOF {
			break
		}
	}
	return s, nil
}

// fSiteBin maps f in [-1,1] (clamped) to its histogram bin.
func fSiteBin(x float64) int {
	x = math.Max(-1, math.Min(1, x))
	i := int((x + 1) / 2 * fSiteBins)
	return max(0, min(fSiteBins-1, i))
}

// splitTabs splits b on tabs into dst without copying.
func splitTabs(dst [][]byte, b []byte) [][]byte {
	for {
		i := bytes.IndexByte(b, '\t')
		if i < 0 {
			return append(dst, b)
		}
		dst = append(dst, b[:i])
		b = b[i+1:]
	}
}
