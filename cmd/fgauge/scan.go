package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"runtime"
	"runtime/pprof"
	"strings"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"

	"fgauge/cmd/fgauge/htmlreport"
	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/cmd/fgauge/internal/shard"
	"fgauge/vcfscan"
)

const scanHelp = `Outputs (see 'fgauge columns' for every column):
  OUTDIR/sites.tsv.gz              one row per kept site (BGZF, indexable)
  OUTDIR/sites.tsv.gz.tbi          its tabix index (e.g. tabix OUTDIR/sites.tsv.gz 1:1-1000000)
  OUTDIR/sites_by_population.tsv.gz  per site and population (with --populations)
  OUTDIR/samples.tsv               one row per sample: counts, genomic F, F_ROH
  OUTDIR/runs.tsv                  one row per run of homozygosity
  OUTDIR/populations.tsv, populations_pairwise.tsv  (with --populations)
  OUTDIR/run.json                  what was read, kept, skipped and why
Files are written to a temporary folder inside OUTDIR and moved into place
only when the whole run succeeds.

Site policy: biallelic SNPs (REF and ALT one of A, C, G, T) with FILTER PASS
or "." are kept; every other record is skipped and counted by reason in
run.json. Calls below --min-gq or --min-dp are set to missing. Haploid calls
are counted apart (n_haploid) and left out of diploid statistics; they do
count as calls for call_rate.

Regions: --region takes CHROM, CHROM:POS, CHROM:START-END or CHROM:START-
(1-based, inclusive; repeatable), or @FILE for a list read from FILE (plain,
gzip or BGZF). A list holds one region per line in the same syntax, or is
BED (0-based, half-open; "chrom<TAB>start<TAB>end", extra columns ignored):
BED when FILE ends in .bed or .bed.gz or its first line is a track/browser
line or three tab-separated fields with whole-number start and end. Empty
lines and lines starting with '#' are skipped. Regions need a BGZF input
with a .tbi or .csi index.

Input guards (--guard-*) are safety limits against damaged or hostile input,
not filters: a file that exceeds one aborts the run with exit 2 and writes
nothing; raise the guard if the file is genuine.

The flags column of samples.tsv ("." when none):
  no_calls             the sample has no diploid call at any kept site
  low_call_rate        call_rate below --min-call-rate
  het_rate_outlier     het_rate more than 3 SD from the cohort mean (possible
                       contamination, sample mix-up or another population)
  estimators_disagree  f_hom > 0.1 while f_uniting_gametes < 0, or the
                       reverse: check frequencies and data quality first
  sex_mismatch         given and inferred sex both known and different
  sex_fits_neither     the X (and Y) pattern fits neither sex

Cautions: genomic F estimates depend on marker density, the allele-frequency
reference and genotyping quality; they are not a diagnosis. Decisions about
mating or culling animals follow the breeding programme's rules and local
regulations; any reading of human consanguinity or its clinical consequences
belongs to licensed genetic counselling or medical practice.
`

// scanOptions are the engine, output and pipeline options of fgauge scan.
type scanOptions struct {
	input       string
	out         string
	force       bool
	threads     int
	regions     listFlag
	report      bool
	pedigree    string
	noProgress  bool
	cpuProfile  string
	read        vcfscan.Options
	samplesFile string
	excludeFile string
	stats       *statsFlags
	roh         *rohFlags
	sex         *sexFlags
	shard       *shardFlags
	mem         *memoryFlags
}

func runScan(ctx context.Context, env *runEnv, args []string) error {
	o := &scanOptions{}
	fs := newFlagSet(env.stderr, "scan", "scan INPUT.vcf[.gz]|INPUT.bcf|- -o OUTDIR [options]", scanHelp+"\n"+statsHelp+"\n"+sexHelp()+"\n"+rohHelp+"\n"+memoryHelp)
	fs.StringVar(&o.out, "o", "", "output folder (created if absent)")
	fs.StringVar(&o.out, "out", "", "same as -o")
	fs.BoolVar(&o.force, "force", false, "overwrite results already in OUTDIR")
	fs.IntVar(&o.threads, "threads", runtime.NumCPU(), "worker threads for decompression, parsing and statistics")
	fs.Var(&o.regions, "region", "restrict to `REGION`: CHROM or CHROM:START-END (1-based, inclusive), or @FILE for the regions listed in FILE (see Regions above); repeatable; needs a .tbi or .csi index")
	fs.BoolVar(&o.read.IncludeFiltered, "include-filtered", false, "keep records whatever their FILTER (default keeps PASS and '.')")
	fs.IntVar(&o.read.MinGQ, "min-gq", 0, "set calls with GQ below this to missing (0: off)")
	fs.IntVar(&o.read.MinDP, "min-dp", 0, "set calls with DP below this to missing (0: off)")
	fs.StringVar(&o.samplesFile, "samples", "", "file with the sample names to keep, one per line")
	fs.StringVar(&o.excludeFile, "exclude-samples", "", "file with sample names to leave out, one per line")
	fs.BoolVar(&o.report, "report", false, "also write OUTDIR/report.html")
	fs.StringVar(&o.pedigree, "pedigree", "", "pedigree TSV (id sire dam); adds f_pedigree to samples.tsv")
	fs.BoolVar(&o.noProgress, "no-progress", false, "never draw the progress bar")
	fs.StringVar(&o.cpuProfile, "cpu-profile", "", "write a Go CPU profile of the run to this file (for developers)")
	lim := scanrun.DefaultLimits()
	fs.IntVar(&o.read.Limits.MaxLineBytes, "guard-line-bytes", lim.MaxLineBytes, "safety limit: abort the run (exit 2) on a text line, header or BCF record longer than this; not a filter")
	fs.IntVar(&o.read.Limits.MaxSamples, "guard-samples", lim.MaxSamples, "safety limit: abort the run (exit 2) on an input naming more samples than this (each costs about 1.6 kB of memory); not a filter")
	fs.IntVar(&o.read.Limits.MaxAlleles, "guard-alleles", lim.MaxAlleles, "safety limit: abort the run (exit 2) on a record with more alleles (REF + ALT) than this; not a site filter (records with 3 or more alleles are skipped anyway)")
	fs.IntVar(&o.read.Limits.MaxBlockExpand, "guard-block-bytes", lim.MaxBlockExpand, "safety limit: abort the run (exit 2) on a compressed block that expands beyond this many bytes; not a filter")
	o.stats = addStatsFlags(fs)
	o.roh = addROHFlags(fs)
	o.sex = addSexFlags(fs)
	o.shard = addShardFlags(fs)
	o.mem = addMemoryFlags(fs)
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("scan: expected one input file (or - for standard input), got %d", len(pos))
	}
	o.input = pos[0]
	if o.threads < 1 {
		return usagef("scan: --threads must be at least 1")
	}
	if o.cpuProfile != "" {
		f, err := os.Create(o.cpuProfile)
		if err != nil {
			return err
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return err
		}
		defer pprof.StopCPUProfile()
	}
	return scan(ctx, env, o)
}

// scan turns the options into a scanrun.Config, runs it, and writes the
// report when asked.
func scan(ctx context.Context, env *runEnv, o *scanOptions) error {
	start := time.Now()
	if err := o.loadSampleLists(); err != nil {
		return err
	}
	for _, r := range o.regions {
		if file, ok := strings.CutPrefix(r, "@"); ok {
			if file == "" {
				return usagef("--region @: want a file name after '@'")
			}
			regs, err := vcfscan.ReadRegionList(file)
			if err != nil {
				return err
			}
			o.read.Regions = append(o.read.Regions, regs...)
			continue
		}
		reg, err := vcfscan.ParseRegion(r)
		if err != nil {
			return usagef("--region: %v", err)
		}
		o.read.Regions = append(o.read.Regions, reg)
	}
	rohCfg, err := o.roh.config()
	if err != nil {
		return err
	}
	stats, err := o.stats.settings()
	if err != nil {
		return err
	}
	sex, err := o.sex.settings(o.roh.species)
	if err != nil {
		return err
	}
	cfg := scanrun.Config{
		Input: o.input, Out: o.out, Force: o.force, Threads: o.threads,
		Read: o.read, Stats: stats, ROH: rohCfg, Sex: sex, PedigreeFile: o.pedigree,
		MemoryBudget: int64(o.mem.budget), TempDir: o.mem.tempDir, LimitHeap: true,
		StateOut: o.shard.stateOut, SkipIfValidState: o.shard.skipValid,
		Version: version, CommandLine: env.argv, Stderr: env.stderr,
		Progress: newProgress(env.stderr, o.noProgress),
	}
	if cfg.StateOut != "" && o.report {
		return usagef("--report needs the tables of a whole run: run 'fgauge report' on the output of 'fgauge merge'")
	}
	if cfg.StateOut != "" && o.input != "-" {
		if cfg.Options, err = shard.OptionFingerprint(o.shard.fs); err != nil {
			return err
		}
	}
	if o.pedigree != "" {
		if cfg.Pedigree, err = readPedigreeFile(o.pedigree); err != nil {
			return err
		}
	}
	if o.report {
		cfg.AfterCommit = func(out string) error {
			if err := htmlreport.Write(out, htmlreport.Options{}); err != nil {
				return fmt.Errorf("scan finished, but the report failed: %w", err)
			}
			return nil
		}
	}
	res, err := scanrun.Run(ctx, cfg)
	if err != nil || res.Skipped {
		return err
	}
	res.Report(env.stderr, o.out, time.Since(start))
	return nil
}

// siteChunk is one processed batch on its way to the ordered writer.
// loadSampleLists reads --samples and --exclude-samples.
func (o *scanOptions) loadSampleLists() error {
	var err error
	if o.samplesFile != "" {
		if o.read.Samples, err = readSampleList(o.samplesFile); err != nil {
			return err
		}
	}
	if o.excludeFile != "" {
		if o.read.ExcludeSamples, err = readSampleList(o.excludeFile); err != nil {
			return err
		}
	}
	return nil
}

// readSampleList reads one name per line (first whitespace-separated field),
// skipping blank lines and lines starting with '#'.
func readSampleList(path string) ([]string, error) {
	names, err := vcfscan.ReadNameList(path, false)
	if err != nil {
		return nil, badinput.Wrap(err)
	}
	return names, nil
}

// progress draws a bar of compressed bytes read when stderr is a terminal.
type progress struct {
	w    io.Writer
	bar  *progressbar.ProgressBar
	read func() (done, total int64)
	last time.Time
}

// newProgress returns nil (no bar) when off or when w is not a terminal.
func newProgress(w io.Writer, off bool) scanrun.Progress {
	f, ok := w.(*os.File)
	if off || !ok || !term.IsTerminal(int(f.Fd())) {
		return nil
	}
	return &progress{w: w}
}

func (p *progress) Start(read func() (done, total int64)) {
	p.read = read
	_, total := read()
	if total <= 0 {
		total = -1
	}
	p.bar = progressbar.NewOptions64(total,
		progressbar.OptionSetWriter(p.w),
		progressbar.OptionShowBytes(true),
		progressbar.OptionSetDescription("scanning"),
		progressbar.OptionThrottle(200*time.Millisecond),
		progressbar.OptionClearOnFinish(),
	)
}

func (p *progress) Update() {
	if p.bar == nil || time.Since(p.last) < 100*time.Millisecond {
		return
	}
	p.last = time.Now()
	done, _ := p.read()
	p.bar.Set64(done)
}

func (p *progress) Finish() {
	if p.bar != nil {
		p.bar.Finish()
	}
}

// shardFlags are the scan options of sharded runs.
type shardFlags struct {
	stateOut  string
	skipValid bool
	fs        *flag.FlagSet // for the fingerprint of the result-changing options
}

func addShardFlags(fs *flag.FlagSet) *shardFlags {
	f := &shardFlags{fs: fs}
	fs.StringVar(&f.stateOut, "state-out", "", "write this shard's mergeable state to `FILE` (for 'fgauge merge'); OUTDIR then gets the shard's site tables and run.json only")
	fs.BoolVar(&f.skipValid, "skip-if-valid-state", false, "with --state-out: do nothing when FILE already holds an intact state of this same shard (for re-running batch scripts)")
	return f
}

// isInputError reports whether err is a problem with the input files
// rather than a bug.
func isInputError(err error) bool {
	var pe *vcfscan.ParseError
	return errors.As(err, &pe)
}
