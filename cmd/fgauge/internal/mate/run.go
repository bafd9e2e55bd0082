package mate

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"time"

	"fgauge/cmd/fgauge/internal/outdir"
	"fgauge/mating"
	"fgauge/stats"
	"fgauge/stats/pedigree"
	"fgauge/vcfscan"
)

// What progeny_f, the value the plan minimises, is made of (Config.PlanOn).
const (
	PlanGenomic  = "genomic"  // coancestry_genomic
	PlanPedigree = "pedigree" // coancestry_pedigree (needs a pedigree)
	// PlanBlend is w * coancestry_genomic + (1 - w) * coancestry_pedigree
	// with w = Config.BlendWeight. The two measures have different base
	// populations (the frequencies' population and the pedigree's
	// founders), so a blend is a pragmatic compromise, not an estimate of
	// either: use it when genotypes miss recent relationships the pedigree
	// records reliably (or the reverse) and say which weight was used.
	PlanBlend = "blend"
	// PlanSegments plans on coancestry_segments (needs Segments): recent
	// shared stretches only, on the probability scale.
	PlanSegments = "segments"
)

// Config is one `fgauge mate` run.
type Config struct {
	Input string // VCF or BCF, any form vcfscan reads ("-" for stdin)

	// Candidates: a file of ids (one per line) or the ids themselves
	// (SiresFile/DamsFile win when set).
	SiresFile, DamsFile string
	Sires, Dams         []string

	OutDir string
	Force  bool // overwrite the results of an earlier run in OutDir

	SireLimit      int     // dams per sire; 0: no limit
	SireLimitsFile string  // per-sire limits (columns: sire limit); override SireLimit
	MaxProgenyF    float64 // pairs with progeny_f above it are never used; NaN: none

	PedigreeFile string
	// Pedigree is used when PedigreeFile is empty (callers such as the
	// demo that hold the pedigree in memory).
	Pedigree    *pedigree.Pedigree
	PlanOn      string  // PlanGenomic (default), PlanPedigree, PlanBlend or PlanSegments
	BlendWeight float64 // weight of the genomic coancestry in PlanBlend (0..1)

	// Segments adds coancestry_segments (mating.SharedSegments), with
	// stretches of at least SegmentMinMB megabases (0: the default 3).
	Segments     bool
	SegmentMinMB float64

	FreqsFile       string // allele-frequency panel as for the scan's --freqs
	FreqsFromInfo   string // INFO key holding the frequency
	IncludeFiltered bool   // keep records whatever their FILTER
	Threads         int    // 0: all cores

	Stdout      io.Writer // summary line; nil: none
	Stderr      io.Writer // warnings; nil: none
	CommandLine []string  // recorded in run.json
	Version     string
}

// Result is what Run returns besides the files.
type Result struct {
	Info       RunInfo
	Sires      []string
	Dams       []string
	Genomic    *mating.Matrix
	Pedigree   *mating.Matrix // nil without a pedigree
	Segments   *mating.Matrix // nil without Config.Segments
	ProgenyF   *mating.Matrix
	Allocation *mating.Allocation
}

// Run executes one mating run: it checks the lists, reads the input,
// computes the coancestries, solves the allocation and writes OutDir
// through a staged folder (nothing is left behind on error).
func Run(ctx context.Context, cfg Config) (res *Result, err error) {
	start := time.Now()
	if err := cfg.check(); err != nil {
		return nil, err
	}
	sires, dams, err := cfg.lists()
	if err != nil {
		return nil, err
	}
	sireIdx := map[string]int{}
	for i, id := range sires.ids {
		sireIdx[id] = i
	}
	limits := make([]int, len(sires.ids))
	for i := range limits {
		limits[i] = len(dams.ids)
		if cfg.SireLimit > 0 {
			limits[i] = cfg.SireLimit
		}
	}
	if cfg.SireLimitsFile != "" {
		per, err := readLimits(cfg.SireLimitsFile, sireIdx)
		if err != nil {
			return nil, err
		}
		for s, n := range per {
			limits[s] = n
		}
	}
	ped := cfg.Pedigree
	if cfg.PedigreeFile != "" {
		f, err := os.Open(cfg.PedigreeFile)
		if err != nil {
			return nil, &InputError{File: cfg.PedigreeFile, Msg: "cannot open the pedigree: " + err.Error(), Err: err}
		}
		ped, err = pedigree.Read(f, cfg.PedigreeFile)
		f.Close()
		if err != nil {
			return nil, err // *pedigree.Error: file and line; exit 2 upstream
		}
	}
	var panel *stats.Panel
	if cfg.FreqsFile != "" {
		f, err := os.Open(cfg.FreqsFile)
		if err != nil {
			return nil, &InputError{File: cfg.FreqsFile, Msg: "cannot open the frequency panel: " + err.Error(), Err: err}
		}
		panel, _, err = stats.ReadPanel(f, cfg.FreqsFile)
		f.Close()
		if err != nil {
			return nil, err // *stats.TableError: file and line
		}
	}

	// Genotypes.
	opt := vcfscan.Options{Threads: cfg.Threads, IncludeFiltered: cfg.IncludeFiltered, InfoKey: cfg.FreqsFromInfo}
	r, err := vcfscan.Open(cfg.Input, opt)
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			return nil, &InputError{File: cfg.Input, Msg: "cannot open the input: " + pe.Err.Error(), Err: err}
		}
		return nil, err
	}
	defer r.Close()
	col := map[string]int{}
	for i, s := range r.Samples() {
		col[s] = i
	}
	sireCols, err := columns(sires, col, cfg.Input)
	if err != nil {
		return nil, err
	}
	damCols, err := columns(dams, col, cfg.Input)
	if err != nil {
		return nil, err
	}
	var src mating.FreqSource = mating.CohortFreqs{}
	freqDesc := "cohort: alternate-allele frequency over all samples of the input"
	var sf *mating.StatsFreqs
	if panel != nil || cfg.FreqsFromInfo != "" {
		sc := &stats.Config{Samples: r.Samples(), Freqs: stats.FreqInfo}
		freqDesc = "info: INFO " + cfg.FreqsFromInfo
		if panel != nil {
			sc.Freqs, sc.Panel = stats.FreqPanel, panel
			freqDesc = "panel: " + cfg.FreqsFile
		}
		if sf, err = mating.NewStatsFreqs(sc, func(id int) string { return r.Header().Contigs[id].Name }); err != nil {
			return nil, err
		}
		src = sf
	}
	pk := mating.NewPacker(sireCols, damCols, src)
	var spk *mating.SegmentPacker
	if cfg.Segments {
		spk = mating.NewSegmentPacker(sireCols, damCols)
	}
	read, kept := int64(0), int64(0)
	for {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		read += b.Read
		kept += int64(len(b.Records))
		pk.Add(b)
		if spk != nil {
			spk.Add(b)
			if spk.Bytes() > mating.MaxSegmentBytes {
				return nil, inputErrorf(cfg.Input, 0, "--segments keeps one byte per candidate and site and would need more than %d MB here; use fewer candidates or sites", mating.MaxSegmentBytes>>20)
			}
		}
		r.Release(b)
	}
	sitesUsed, missing := pk.Sites(), pk.Missing()
	tRead := time.Now()
	gen, err := pk.Genomic(ctx, cfg.Threads)
	if errors.Is(err, mating.ErrNoSites) {
		return nil, &InputError{File: cfg.Input, Msg: fmt.Sprintf("no site usable for genomic coancestry (%d SNP records kept, %d without a frequency, or all monomorphic)", kept, pk.Skipped()), Err: err}
	}
	if err != nil {
		return nil, err
	}
	pk = nil // release the planes before the allocation
	tGenomic := time.Now()

	res = &Result{Sires: sires.ids, Dams: dams.ids, Genomic: gen}
	var segOpt mating.SegmentOptions
	if spk != nil {
		segOpt.MinBP = int64(math.Round(cfg.SegmentMinMB * 1e6))
		if res.Segments, err = spk.SharedSegments(ctx, cfg.Threads, segOpt); err != nil {
			if ctx.Err() != nil {
				return nil, ctx.Err()
			}
			var oe *mating.OrderError
			if errors.As(err, &oe) {
				at := fmt.Sprintf("line %d", oe.Line)
				if f := r.Format(); f == vcfscan.FormatBCF || f == vcfscan.FormatBCFPlain {
					at = fmt.Sprintf("BCF record %d", oe.Line)
				}
				return nil, &InputError{File: cfg.Input, Msg: at + ": --segments: " + oe.Msg, Err: err}
			}
			return nil, &InputError{File: cfg.Input, Msg: "--segments: " + err.Error(), Err: err}
		}
		spk = nil
	}
	var absent []string
	if ped != nil {
		if res.Pedigree, absent, err = mating.PedigreeCoancestry(ped, sires.ids, dams.ids); err != nil {
			return nil, err
		}
		if len(absent) > 0 && cfg.Stderr != nil {
			fmt.Fprintf(cfg.Stderr, "fgauge mate: warning: %d candidates are not in the pedigree and count as unrelated founders there (listed in run.json)\n", len(absent))
		}
	}
	res.ProgenyF = progenyF(cfg, gen, res.Pedigree, res.Segments)

	ao := mating.AllocOptions{Limits: limits, Ceiling: cfg.MaxProgenyF, SireIDs: sires.ids, DamIDs: dams.ids}
	alloc, err := mating.Allocate(ctx, res.ProgenyF, ao)
	if err != nil {
		var ie *mating.InfeasibleError
		if errors.As(err, &ie) {
			return nil, &InputError{Msg: err.Error() + hint(cfg), Err: err}
		}
		return nil, err
	}
	res.Allocation = alloc
	tAlloc := time.Now()

	info := RunInfo{
		Version: cfg.Version, CommandLine: cfg.CommandLine,
		Input:             InputInfo{Path: cfg.Input, Format: r.Format().String(), SamplesInFile: len(r.Samples()), RecordsRead: read, SNPsKept: kept},
		Sires:             len(sires.ids),
		Dams:              len(dams.ids),
		SitesUsed:         sitesUsed,
		SitesWithoutFreq:  kept - int64(sitesUsed),
		MissingCalls:      missing,
		Frequencies:       freqDesc,
		PlanOn:            cfg.PlanOn,
		SireLimit:         cfg.SireLimit,
		SireLimitsFile:    cfg.SireLimitsFile,
		MaxProgenyF:       jsonFloat(cfg.MaxProgenyF),
		Plan:              summarize(alloc, gen, res.Pedigree, res.ProgenyF, res.Segments),
		Random:            randomExpectation(limits, res.ProgenyF, gen, res.Pedigree),
		PedigreeAbsent:    absent,
		AllocationMoves:   alloc.Moves,
		Cautions:          cautions,
		PairsAboveCeiling: aboveCeiling(res.ProgenyF, cfg.MaxProgenyF),
	}
	if res.Segments != nil {
		mb := 3.0
		if cfg.SegmentMinMB > 0 {
			mb = cfg.SegmentMinMB
		}
		info.SegmentMinMB = &mb
	}
	if cfg.PlanOn == PlanBlend {
		info.BlendWeight = jsonFloat(cfg.BlendWeight)
	}
	if res.Pedigree != nil {
		info.PedigreePlan = pedigreePlan(ctx, res.Pedigree, gen, limits, cfg.MaxProgenyF)
	}

	sd, err := outdir.NewFor(cfg.OutDir, cfg.Force, outdir.MateNames)
	if err != nil {
		return nil, err
	}
	defer func() {
		if err != nil {
			sd.Abort()
		} else {
			sd.Close()
		}
	}()
	if err := writePairs(sd, res, cfg.MaxProgenyF); err != nil {
		return nil, err
	}
	if err := writeAllocation(sd, res); err != nil {
		return nil, err
	}
	if err := writePage(sd, res, &info); err != nil {
		return nil, err
	}
	info.WallSeconds = time.Since(start).Seconds()
	info.PhaseSeconds = PhaseSeconds{
		ReadAndPack: tRead.Sub(start).Seconds(), Genomic: tGenomic.Sub(tRead).Seconds(),
		Allocation: tAlloc.Sub(tGenomic).Seconds(), Write: time.Since(tAlloc).Seconds(),
	}
	if err := writeRunInfo(sd, &info); err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if err := sd.Commit(); err != nil {
		return nil, err
	}
	res.Info = info
	if cfg.Stdout != nil {
		fmt.Fprintln(cfg.Stdout, summaryLine(&info, cfg.OutDir))
	}
	return res, nil
}

// check validates the options that need no file.
func (c *Config) check() error {
	if c.Input == "" {
		return inputErrorf("", 0, "mate: an INPUT VCF or BCF is required")
	}
	if c.PlanOn == "" {
		c.PlanOn = PlanGenomic
	}
	switch c.PlanOn {
	case PlanGenomic:
	case PlanPedigree, PlanBlend:
		if c.PedigreeFile == "" && c.Pedigree == nil {
			return inputErrorf("", 0, "mate: --plan-on %s needs --pedigree", c.PlanOn)
		}
	case PlanSegments:
		if !c.Segments {
			return inputErrorf("", 0, "mate: --plan-on segments needs --segments")
		}
	default:
		return inputErrorf("", 0, "mate: --plan-on %q: want genomic, pedigree, blend or segments", c.PlanOn)
	}
	if !(c.BlendWeight >= 0 && c.BlendWeight <= 1) {
		return inputErrorf("", 0, "mate: --blend-weight %v: want a number in [0, 1]", c.BlendWeight)
	}
	if c.SireLimit < 0 {
		return inputErrorf("", 0, "mate: --sire-limit %d: want 0 (no limit) or more", c.SireLimit)
	}
	if math.IsInf(c.MaxProgenyF, 0) {
		return inputErrorf("", 0, "mate: --max-progeny-f must be a finite number")
	}
	if !(c.SegmentMinMB >= 0) || math.IsInf(c.SegmentMinMB, 0) {
		return inputErrorf("", 0, "mate: --segment-min-mb %v: want a positive number of megabases", c.SegmentMinMB)
	}
	if c.FreqsFile != "" && c.FreqsFromInfo != "" {
		return inputErrorf("", 0, "mate: --freqs and --freqs-from-info exclude each other")
	}
	return nil
}

// lists reads the sire and dam lists and checks them against each other.
func (c *Config) lists() (sires, dams *idList, err error) {
	if c.SiresFile != "" {
		sires, err = listFromFile(c.SiresFile, "sire")
	} else {
		sires, err = listFromIDs(c.Sires, "sires", "sire")
	}
	if err != nil {
		return nil, nil, err
	}
	if c.DamsFile != "" {
		dams, err = listFromFile(c.DamsFile, "dam")
	} else {
		dams, err = listFromIDs(c.Dams, "dams", "dam")
	}
	if err != nil {
		return nil, nil, err
	}
	at := map[string]int{}
	for i, id := range dams.ids {
		at[id] = dams.lines[i]
	}
	for i, id := range sires.ids {
		if l, both := at[id]; both {
			return nil, nil, inputErrorf(sires.file, sires.lines[i], "%q is listed both as a sire and as a dam (%s:%d)", id, dams.file, l)
		}
	}
	return sires, dams, nil
}

// columns maps listed ids to the input's sample columns.
func columns(l *idList, col map[string]int, input string) ([]int, error) {
	out := make([]int, len(l.ids))
	var missing []int
	for i, id := range l.ids {
		c, ok := col[id]
		if !ok {
			missing = append(missing, i)
			continue
		}
		out[i] = c
	}
	if len(missing) > 0 {
		i := missing[0]
		more := ""
		if len(missing) > 1 {
			more = fmt.Sprintf(" (and %d more ids of this list)", len(missing)-1)
		}
		return nil, inputErrorf(l.file, l.lines[i], "%q is not a sample of %s%s", l.ids[i], input, more)
	}
	return out, nil
}

// progenyF builds the planning values.
func progenyF(cfg Config, gen, ped, seg *mating.Matrix) *mating.Matrix {
	switch cfg.PlanOn {
	case PlanPedigree:
		return ped
	case PlanSegments:
		return seg
	case PlanBlend:
		m := &mating.Matrix{Sires: gen.Sires, Dams: gen.Dams, V: make([]float64, len(gen.V))}
		w := cfg.BlendWeight
		for i := range m.V {
			m.V[i] = w*gen.V[i] + (1-w)*ped.V[i]
		}
		return m
	}
	return gen
}

// hint suggests what to relax after an infeasible request.
func hint(cfg Config) string {
	h := ""
	if !math.IsNaN(cfg.MaxProgenyF) {
		h = "; raise --max-progeny-f"
	}
	if cfg.SireLimit > 0 || cfg.SireLimitsFile != "" {
		h += "; raise the sire limits or add sires"
	}
	return h
}
