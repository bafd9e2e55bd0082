package roh

import (
	"bufio"
	"fgauge/internal/numfmt"
	"fmt"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
)

// Run is one run of homozygosity of one sample.
type Run struct {
	Sample         int     // index into Result.Samples
	Start, End     int64   // positions of the first and last site (1-based, inclusive)
	StartCM, EndCM float64 // genetic positions of those sites
	NSites         int     // sites in the run, including heterozygous and missing calls
	NHet, NMissing int     // heterozygous and missing calls inside the run
	Quality        float64 // runs.tsv mean_posterior_autozygous: mean posterior of autozygosity over the run's sites (HMM); NaN for rules
	// AgeClass is 1 + the index (in Result.AgeRates) of the autozygous
	// age class with the highest mean posterior over the run's sites, 0
	// when the age classes were not fitted; AgePosterior is that mean.
	AgeClass     int
	AgePosterior float64
}

// LengthBP is End-Start+1.
func (r Run) LengthBP() int64 { return r.End - r.Start + 1 }

// ChromResult holds the runs and coverage of one autosome.
type ChromResult struct {
	Name              string
	Length            int64 // from the header; 0 when unknown
	FirstPos, LastPos int64
	NSites            int
	MapSource         string // "genetic_map" or "cm_per_mb"
	Runs              []Run  // sample-major, by start within a sample
	FitF, FitRate     []float64
	// AgeBP holds, per sample (K+1 entries each, sample-major), the
	// per-class posterior lengths of the age-class model in units of
	// 1/AgeUnit bp (AgeFit.ClassBP); nil when not fitted.
	AgeBP []int64
}

// Result is the outcome of detection over a whole input (or a shard of
// whole chromosomes). Its fields are exported and plain so that it
// encodes with encoding/gob; Merge combines results of disjoint
// chromosomes.
type Result struct {
	Method        string
	Samples       []string
	Classes       []float64 // Mb, increasing
	GenotypeError float64
	CMPerMB       float64
	Fit           bool
	MapUsed       bool             // a genetic map was given (see ChromResult.MapSource)
	AgeRates      []float64        // rates of the autozygous age classes (per Morgan); nil when the age classes are off
	AgeMarginCM   float64          // Config.AgeMarginCM
	AgeWhole      bool             // Config.AgeWholeChromosome
	AgeWholeShare float64          // Config.AgeWholeShare
	Chroms        []ChromResult    // autosomes with at least one site, in input order
	Excluded      map[string]int64 // non-autosomal contigs -> sites seen
}

// Merge appends the chromosomes of o, which must come from the same
// samples and settings and share no chromosome with r. Merging shards in
// input order gives the output of one pass.
func (r *Result) Merge(o *Result) error {
	if r.Method != o.Method || !slices.Equal(r.Samples, o.Samples) || !slices.Equal(r.Classes, o.Classes) ||
		r.GenotypeError != o.GenotypeError || r.CMPerMB != o.CMPerMB || r.Fit != o.Fit || !slices.Equal(r.AgeRates, o.AgeRates) ||
		r.AgeMarginCM != o.AgeMarginCM || r.AgeWhole != o.AgeWhole || r.AgeWholeShare != o.AgeWholeShare {
		return fmt.Errorf("roh: cannot merge results of different samples or settings")
	}
	have := map[string]bool{}
	for _, c := range r.Chroms {
		have[c.Name] = true
	}
	for _, c := range o.Chroms {
		if have[c.Name] {
			return fmt.Errorf("roh: chromosome %s present in two shards", c.Name)
		}
	}
	r.Chroms = append(r.Chroms, o.Chroms...)
	r.MapUsed = r.MapUsed || o.MapUsed
	if r.Excluded == nil {
		r.Excluded = map[string]int64{}
	}
	for k, v := range o.Excluded {
		r.Excluded[k] += v
	}
	return nil
}

// Covered returns the autosomal length F_ROH divides by and where it came
// from: the sum of header lengths of the autosomes with sites
// ("contig_lengths"), or, when any of them lacks a length, the sum of the
// spans from first to last site ("site_span").
func (r *Result) Covered() (int64, string) {
	var byLen, bySpan int64
	all := len(r.Chroms) > 0
	for _, c := range r.Chroms {
		if c.NSites == 0 {
			continue
		}
		if c.Length <= 0 {
			all = false
		}
		byLen += c.Length
		bySpan += c.LastPos - c.FirstPos + 1
	}
	if all {
		return byLen, "contig_lengths"
	}
	return bySpan, "site_span"
}

// minCountBP is the shortest run counted in F_ROH: the smallest class.
func (r *Result) minCountBP() int64 { return int64(math.Ceil(r.Classes[0] * 1e6)) }

// ClassColumn names the column of a class, e.g. 1 -> "f_roh_gt_1mb",
// 0.5 -> "f_roh_gt_0p5mb".
func ClassColumn(mb float64) string {
	return "f_roh_gt_" + strings.ReplaceAll(strconv.FormatFloat(mb, 'g', -1, 64), ".", "p") + "mb"
}

// ColumnClass returns the class length in Mb named by a column of
// ClassColumn, e.g. "f_roh_gt_0p5mb" -> 0.5; ok is false for any other
// name.
func ColumnClass(col string) (mb float64, ok bool) {
	rest, found := strings.CutPrefix(col, "f_roh_gt_")
	if !found {
		return 0, false
	}
	rest, found = strings.CutSuffix(rest, "mb")
	if !found {
		return 0, false
	}
	v, err := strconv.ParseFloat(strings.ReplaceAll(rest, "p", "."), 64)
	if err != nil || ClassColumn(v) != col {
		return 0, false
	}
	return v, true
}

func fmtF(x float64) string { return numfmt.Float(x) }

// appendF appends fmtF(x) to b without allocating.
func appendF(b []byte, x float64) []byte { return numfmt.AppendFloat(b, x) }

// WriteRuns writes runs.tsv: a header line and one line per run, grouped
// by sample (in sample order), then chromosome (input order), then start.
func (r *Result) WriteRuns(w io.Writer) error {
	bw := bufio.NewWriterSize(w, 64*1024)
	head := columnNames("runs.tsv")
	if r.AgeRates != nil {
		head = append(head, AgeRunColumns...)
	}
	bw.WriteString(strings.Join(head, "\t") + "\n")
	// index runs by sample
	type ref struct{ c, i int }
	bySample := make([][]ref, len(r.Samples))
	for ci, c := range r.Chroms {
		for i, run := range c.Runs {
			bySample[run.Sample] = append(bySample[run.Sample], ref{ci, i})
		}
	}
	var buf []byte
	for s, refs := range bySample {
		sort.SliceStable(refs, func(a, b int) bool {
			if refs[a].c != refs[b].c {
				return refs[a].c < refs[b].c
			}
			return r.Chroms[refs[a].c].Runs[refs[a].i].Start < r.Chroms[refs[b].c].Runs[refs[b].i].Start
		})
		for _, x := range refs {
			run := r.Chroms[x.c].Runs[x.i]
			lcm := run.EndCM - run.StartCM
			gen := math.NaN()
			if lcm > 0 {
				gen = 100 / (2 * lcm)
			}
			buf = buf[:0]
			buf = append(buf, r.Samples[s]...)
			buf = append(buf, '\t')
			buf = append(buf, r.Chroms[x.c].Name...)
			buf = append(buf, '\t')
			buf = strconv.AppendInt(buf, run.Start, 10)
			buf = append(buf, '\t')
			buf = strconv.AppendInt(buf, run.End, 10)
			buf = append(buf, '\t')
			buf = strconv.AppendInt(buf, run.LengthBP(), 10)
			buf = append(buf, '\t')
			buf = appendF(buf, lcm)
			buf = append(buf, '\t')
			buf = strconv.AppendInt(buf, int64(run.NSites), 10)
			buf = append(buf, '\t')
			buf = strconv.AppendInt(buf, int64(run.NHet), 10)
			buf = append(buf, '\t')
			buf = strconv.AppendInt(buf, int64(run.NMissing), 10)
			buf = append(buf, '\t')
			buf = appendF(buf, run.Quality)
			buf = append(buf, '\t')
			buf = appendF(buf, gen)
			if r.AgeRates != nil {
				buf = r.appendAge(buf, run)
			}
			buf = append(buf, '\n')
			if _, err := bw.Write(buf); err != nil {
				return fmt.Errorf("writing runs: %w", err)
			}
		}
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("writing runs: %w", err)
	}
	return nil
}

// SampleStats are one sample's F_ROH figures.
type SampleStats struct {
	NRuns   int       // runs at least the smallest class long
	TotalBP int64     // their total length
	FROH    float64   // TotalBP / covered length (NaN when nothing is covered)
	ByClass []float64 // share of the covered length in runs at least Classes[k] Mb long
}

// Samples returns the per-sample figures in sample order. A run counts
// toward a class when its length is at least the class length (the
// f_roh_gt_* column names read "at least").
func (r *Result) SampleStats() []SampleStats {
	cov, _ := r.Covered()
	out := make([]SampleStats, len(r.Samples))
	lens := make([][]int64, len(r.Samples))
	for _, c := range r.Chroms {
		for _, run := range c.Runs {
			lens[run.Sample] = append(lens[run.Sample], run.LengthBP())
		}
	}
	minBP := r.minCountBP()
	for s := range out {
		st := SampleStats{ByClass: make([]float64, len(r.Classes))}
		cls := make([]int64, len(r.Classes))
		for _, L := range lens[s] {
			if L >= minBP {
				st.NRuns++
				st.TotalBP += L
			}
			for k, mb := range r.Classes {
				if float64(L) >= mb*1e6 {
					cls[k] += L
				}
			}
		}
		st.FROH = math.NaN()
		for k := range cls {
			st.ByClass[k] = math.NaN()
		}
		if cov > 0 {
			st.FROH = float64(st.TotalBP) / float64(cov)
			for k := range cls {
				st.ByClass[k] = float64(cls[k]) / float64(cov)
			}
		}
		out[s] = st
	}
	return out
}

// SampleTable returns the columns appended to samples.tsv and one row per
// sample in sample order.
func (r *Result) SampleTable() (header []string, rows [][]string) {
	header, part := r.SampleRows()
	return header, part(0, len(r.Samples))
}

// SampleRows is SampleTable in parts: rows(lo, hi) formats the rows of
// samples lo to hi-1.
func (r *Result) SampleRows() (header []string, rows func(lo, hi int) [][]string) {
	header = columnNames("samples.tsv")
	for _, mb := range r.Classes {
		header = append(header, ClassColumn(mb))
	}
	var within [][]float64
	if r.AgeRates != nil {
		for _, g := range AgeGenerations {
			header = append(header, AgeColumn(g))
		}
		within = r.FWithin()
	}
	stats := r.SampleStats()
	return header, func(lo, hi int) [][]string {
		rows := make([][]string, 0, hi-lo)
		for s := lo; s < hi; s++ {
			st := &stats[s]
			row := []string{strconv.Itoa(st.NRuns), strconv.FormatInt(st.TotalBP, 10), fmtF(st.FROH)}
			for _, v := range st.ByClass {
				row = append(row, fmtF(v))
			}
			for _, v := range within {
				row = append(row, fmtF(v[s]))
			}
			rows = append(rows, row)
		}
		return rows
	}
}

// Summary is the "roh" object of run.json: the detector and its settings,
// the autosomal length F_ROH divides by and where it came from, the
// contigs used and left out, the length classes of the f_roh_gt_*
// columns, and counts of sites and runs. Fields are in the order run.json
// lists them; the optional ones are present only where they apply.
type Summary struct {
	AutosomesUsed []string `json:"autosomes_used"`
	// ChromsWithoutMap are the chromosomes the genetic map did not cover
	// (distances from cm_per_mb); present only with a map.
	ChromsWithoutMap *[]string        `json:"chroms_without_map,omitempty"`
	ClassesMB        []float64        `json:"classes_mb"` // the f_roh_gt_* classes; the first is the shortest run counted
	CMPerMB          float64          `json:"cm_per_mb"`
	CoveredBP        int64            `json:"covered_bp"`
	CoveredSource    string           `json:"covered_source"` // "contig_lengths" or "site_span"
	ExcludedContigs  map[string]int64 `json:"excluded_contigs"`
	Fit              *bool            `json:"fit,omitempty"`            // HMM only
	GenotypeError    *float64         `json:"genotype_error,omitempty"` // HMM only
	// MeanFittedFraction and MeanFittedRate average the per-sample,
	// per-chromosome EM estimates (HMM with Fit only).
	MeanFittedFraction *float64 `json:"mean_fitted_autozygous_fraction,omitempty"`
	MeanFittedRate     *float64 `json:"mean_fitted_rate_per_morgan,omitempty"`
	Method             string   `json:"method"`
	MinCountedBP       int64    `json:"min_counted_bp"`
	RunsCounted        int      `json:"runs_counted"`
	RunsWritten        int      `json:"runs_written"`
	SitesUsed          int      `json:"sites_used"`
	// AgeClasses describes the age-class model (absent when it is off).
	AgeClasses *AgeSummary `json:"age_classes,omitempty"`
}

// ClassColumns returns the samples.tsv column of each length class, in
// the order of ClassesMB.
func (s *Summary) ClassColumns() []string {
	out := make([]string, len(s.ClassesMB))
	for i, mb := range s.ClassesMB {
		out[i] = ClassColumn(mb)
	}
	return out
}

// Summary returns the "roh" object of run.json.
func (r *Result) Summary() *Summary {
	cov, src := r.Covered()
	used := []string{}
	var sites, nruns, counted int
	var mapMissing []string
	minBP := r.minCountBP()
	for _, c := range r.Chroms {
		used = append(used, c.Name)
		sites += c.NSites
		nruns += len(c.Runs)
		for _, run := range c.Runs {
			if run.LengthBP() >= minBP {
				counted++
			}
		}
		if c.MapSource == "cm_per_mb" {
			mapMissing = append(mapMissing, c.Name)
		}
	}
	excl := map[string]int64{}
	for k, v := range r.Excluded {
		excl[k] = v
	}
	m := &Summary{
		Method:          r.Method,
		CoveredBP:       cov,
		CoveredSource:   src,
		AutosomesUsed:   used,
		ExcludedContigs: excl,
		SitesUsed:       sites,
		RunsWritten:     nruns,
		RunsCounted:     counted,
		MinCountedBP:    minBP,
		ClassesMB:       r.Classes,
		CMPerMB:         r.CMPerMB,
	}
	m.AgeClasses = r.ageSummary()
	if r.MapUsed {
		if mapMissing == nil {
			mapMissing = []string{}
		}
		m.ChromsWithoutMap = &mapMissing
	}
	if r.Method == MethodHMM {
		ge, fit := r.GenotypeError, r.Fit
		m.GenotypeError, m.Fit = &ge, &fit
		if r.Fit {
			var sf, sa float64
			var n int
			for _, c := range r.Chroms {
				for i := range c.FitF {
					sf += c.FitF[i]
					sa += c.FitRate[i]
					n++
				}
			}
			if n > 0 {
				f, a := sf/float64(n), sa/float64(n)
				m.MeanFittedFraction, m.MeanFittedRate = &f, &a
			}
		}
	}
	return m
}

// ColumnDoc explains one output column.
type ColumnDoc struct {
	File, Column, Meaning string
}

// columns are the columns this package writes, each with its
// explanation; the header lines are built from them. The f_roh_gt_*
// columns follow, one per length class (ClassColumnDoc).
var columns = []ColumnDoc{
	{"runs.tsv", "sample", "sample name"},
	{"runs.tsv", "chrom", "chromosome (autosomes only)"},
	{"runs.tsv", "start", "position of the run's first site (1-based)"},
	{"runs.tsv", "end", "position of the run's last site (inclusive)"},
	{"runs.tsv", "length_bp", "end - start + 1"},
	{"runs.tsv", "length_cm", "genetic length from the map or --cm-per-mb"},
	{"runs.tsv", "n_sites", "sites in the run, heterozygous and missing calls included"},
	{"runs.tsv", "n_het", "heterozygous calls inside the run (tolerated as errors)"},
	{"runs.tsv", "n_missing", "missing calls inside the run"},
	{"runs.tsv", "mean_posterior_autozygous", "HMM: mean over the run's sites of the forward-backward posterior probability that the site is autozygous (0 to 1); NA for the rule-based detector"},
	{"runs.tsv", "generations_back", "rough age of the common ancestor, 100/(2*length_cm) generations (common practice; a wide-spread expectation, not an estimate for this run)"},
	{"samples.tsv", "n_runs", "runs at least as long as the smallest length class (default 1 Mb)"},
	{"samples.tsv", "roh_total_bp", "total length of those runs"},
	{"samples.tsv", "f_roh", "F_ROH (McQuillan et al. 2008): roh_total_bp over the autosomal length covered (see run.json roh.covered_source)"},
}

// columnNames returns the names of file's columns in order.
func columnNames(file string) []string {
	var out []string
	for _, d := range columns {
		if d.File == file {
			out = append(out, d.Column)
		}
	}
	return out
}

// ClassColumnDoc explains the f_roh_gt_* column of a length class.
func ClassColumnDoc(mb float64) ColumnDoc {
	return ColumnDoc{"samples.tsv", ClassColumn(mb),
		fmt.Sprintf("share of the covered autosomal length in runs at least %g Mb long", mb)}
}

// ColumnDocs documents the columns this package writes, for the default
// length classes; other classes follow the f_roh_gt_1mb pattern
// (ClassColumnDoc). The age-class columns (ageColumns, AgeColumnDoc)
// follow the other columns of their file.
func ColumnDocs() []ColumnDoc {
	var d []ColumnDoc
	for _, c := range columns {
		if c.File == "runs.tsv" {
			d = append(d, c)
		}
	}
	d = append(d, ageColumns...)
	for _, c := range columns {
		if c.File != "runs.tsv" {
			d = append(d, c)
		}
	}
	for _, mb := range DefaultConfig().Classes {
		d = append(d, ClassColumnDoc(mb))
	}
	for _, g := range AgeGenerations {
		d = append(d, AgeColumnDoc(g))
	}
	return d
}
