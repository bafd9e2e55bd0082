package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"runtime/pprof"
	"strings"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/sync/errgroup"
	"golang.org/x/term"

	"fgauge/cmd/fgauge/htmlreport"
	"fgauge/roh"
	"fgauge/stats"
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
are counted apart (n_haploid) and left out of diploid statistics.

The flags column of samples.tsv ("." when none):
  no_calls             the sample has no diploid call at any kept site
  low_call_rate        call_rate below --min-call-rate
  het_rate_outlier     het_rate more than 3 SD from the cohort mean (possible
                       contamination, sample mix-up or another population)
  estimators_disagree  f_hom > 0.1 while f_uniting_gametes < 0, or the
                       reverse: check frequencies and data quality first

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
	regionsFile string
	report      bool
	pedigree    string
	noProgress  bool
	cpuProfile  string
	read        vcfscan.Options
	samplesFile string
	excludeFile string
	stats       *statsFlags
	roh         *rohFlags
	shard       *shardFlags
}

func runScan(ctx context.Context, env *runEnv, args []string) error {
	o := &scanOptions{}
	fs := newFlagSet(env.stderr, "scan", "scan INPUT.vcf[.gz]|INPUT.bcf|- -o OUTDIR [options]", scanHelp+"\n"+statsHelp+"\n"+rohHelp)
	fs.StringVar(&o.out, "o", "", "output folder (created if absent)")
	fs.StringVar(&o.out, "out", "", "same as -o")
	fs.BoolVar(&o.force, "force", false, "overwrite results already in OUTDIR")
	fs.IntVar(&o.threads, "threads", runtime.NumCPU(), "worker threads for decompression, parsing and statistics")
	fs.Var(&o.regions, "region", "restrict to CHROM or CHROM:START-END (1-based, inclusive; repeatable; needs a .tbi or .csi index)")
	fs.StringVar(&o.regionsFile, "regions-file", "", "file of regions, one 'chrom start end' per line (1-based inclusive; .bed files 0-based half-open)")
	fs.BoolVar(&o.read.IncludeFiltered, "include-filtered", false, "keep records whatever their FILTER (default keeps PASS and '.')")
	fs.IntVar(&o.read.MinGQ, "min-gq", 0, "set calls with GQ below this to missing (0: off)")
	fs.IntVar(&o.read.MinDP, "min-dp", 0, "set calls with DP below this to missing (0: off)")
	fs.StringVar(&o.samplesFile, "samples", "", "file with the sample names to keep, one per line")
	fs.StringVar(&o.excludeFile, "exclude-samples", "", "file with sample names to leave out, one per line")
	fs.BoolVar(&o.report, "report", false, "also write OUTDIR/report.html")
	fs.StringVar(&o.pedigree, "pedigree", "", "pedigree TSV (id sire dam); adds f_pedigree to samples.tsv")
	fs.BoolVar(&o.noProgress, "no-progress", false, "never draw the progress bar")
	fs.StringVar(&o.cpuProfile, "cpu-profile", "", "write a Go CPU profile of the run to this file (for developers)")
	fs.IntVar(&o.read.Limits.MaxLineBytes, "max-line-bytes", vcfscan.DefaultMaxLineBytes, "refuse text lines, headers and BCF records longer than this")
	fs.IntVar(&o.read.Limits.MaxSamples, "max-samples", vcfscan.DefaultMaxSamples, "refuse inputs with more samples than this (each costs about 1.6 kB of memory)")
	fs.IntVar(&o.read.Limits.MaxAlleles, "max-alleles", 1000, "refuse records with more alleles than this")
	fs.IntVar(&o.read.Limits.MaxBlockExpand, "max-block-bytes", 1<<20, "refuse compressed blocks that expand beyond this many bytes")
	o.stats = addStatsFlags(fs)
	o.roh = addROHFlags(fs)
	o.shard = addShardFlags(fs)
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

// siteChunk is one processed batch on its way to the ordered writer.
type siteChunk struct {
	batch    *vcfscan.Batch
	sites    *bytes.Buffer
	popSites *bytes.Buffer
	freqs    []float64
}

func scan(ctx context.Context, env *runEnv, o *scanOptions) (err error) {
	start := time.Now()
	o.read.Threads = o.threads
	if err := o.loadSampleLists(); err != nil {
		return err
	}
	for _, r := range o.regions {
		reg, err := vcfscan.ParseRegion(r)
		if err != nil {
			return usagef("--region: %v", err)
		}
		o.read.Regions = append(o.read.Regions, reg)
	}
	if o.regionsFile != "" {
		regs, err := vcfscan.ReadRegionsFile(o.regionsFile)
		if err != nil {
			return err
		}
		o.read.Regions = append(o.read.Regions, regs...)
	}
	rohCfg, err := o.roh.config()
	if err != nil {
		return err
	}
	if rohCfg != nil {
		o.read.RequireSorted = true
		o.read.WantPL = rohCfg.Method == "hmm"
	}
	if len(o.read.Regions) > 0 {
		o.read.RequireSorted = true
	}
	if err := o.stats.prepare(&o.read); err != nil {
		return err
	}
	if skip, err := o.shard.skipIfValid(env, o); skip || err != nil {
		return err
	}

	out, err := newStagedDir(o.out, o.force)
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			out.Abort()
		}
	}()

	rd, err := vcfscan.Open(o.input, o.read)
	if err != nil {
		return err
	}
	defer rd.Close()
	hdr := rd.Header()
	samples := rd.Samples()
	scfg, err := o.stats.config(samples)
	if err != nil {
		return err
	}
	var rc *roh.Collector
	if rohCfg != nil {
		rohCfg.Threads = o.threads
		if rc, err = roh.NewCollector(rohCfg, samples, hdr.Contigs); err != nil {
			return err
		}
	}
	var ped []string
	if o.pedigree != "" {
		if ped, err = pedigreeColumn(o.pedigree, samples); err != nil {
			return err
		}
	}

	sitesFile, err := out.Create("sites.tsv.gz")
	if err != nil {
		return err
	}
	defer sitesFile.Close()
	sitesZ := vcfscan.NewBGZFWriter(sitesFile, 1)
	if _, err := io.WriteString(sitesZ, stats.SitesHeader()+"\n"); err != nil {
		return err
	}
	var popZ *vcfscan.BGZFWriter
	if scfg.PopOf != nil {
		f, err := out.Create("sites_by_population.tsv.gz")
		if err != nil {
			return err
		}
		defer f.Close()
		popZ = vcfscan.NewBGZFWriter(f, 1)
		if _, err := io.WriteString(popZ, stats.PopSitesHeader()+"\n"); err != nil {
			return err
		}
	}
	if err := o.shard.separateHeader(sitesZ, popZ); err != nil {
		return err
	}
	sink, err := o.shard.sink(rc, rohCfg, samples, hdr.Contigs, o.read.Regions)
	if err != nil {
		return err
	}

	bar := newProgress(env.stderr, o.noProgress, rd)
	g, gctx := errgroup.WithContext(ctx)
	jobs := make(chan *vcfscan.Batch, 2*o.threads)
	done := make(chan *siteChunk, 2*o.threads)
	bufPool := sync.Pool{New: func() any { return new(bytes.Buffer) }}

	contigs := newContigTable(hdr.Contigs)
	// inFlight bounds the batches read but not yet written in order, so a
	// slow batch cannot make the reorder buffer grow without limit.
	inFlight := make(chan struct{}, 4*o.threads)
	g.Go(func() error {
		defer close(jobs)
		for {
			select {
			case inFlight <- struct{}{}:
			case <-gctx.Done():
				return gctx.Err()
			}
			b, err := rd.Next()
			if err == io.EOF {
				return nil
			}
			if err != nil {
				return err
			}
			// Next appends contigs first met in records to the header;
			// publish them before the batch that uses them moves on.
			contigs.update(hdr.Contigs)
			select {
			case jobs <- b:
			case <-gctx.Done():
				return gctx.Err()
			}
		}
	})
	workers := make([]*stats.Worker, o.threads)
	var wg sync.WaitGroup
	for i := range workers {
		w := stats.NewWorker(scfg, contigs.name)
		workers[i] = w
		wg.Add(1)
		g.Go(func() error {
			defer wg.Done()
			for b := range jobs {
				c := &siteChunk{batch: b, sites: bufPool.Get().(*bytes.Buffer)}
				c.sites.Reset()
				if popZ != nil {
					c.popSites = bufPool.Get().(*bytes.Buffer)
					c.popSites.Reset()
				}
				c.freqs = make([]float64, len(b.Records))
				w.ProcessBatch(b, c.sites, c.popSites, c.freqs)
				select {
				case done <- c:
				case <-gctx.Done():
					return gctx.Err()
				}
			}
			return nil
		})
	}
	go func() { wg.Wait(); close(done) }()
	var counts vcfscan.Batch // running totals of Read, Skipped, Masked
	var kept int64
	g.Go(func() error {
		pending := map[int64]*siteChunk{}
		var next int64
		for c := range done {
			pending[c.batch.Seq] = c
			for {
				c, ok := pending[next]
				if !ok {
					break
				}
				delete(pending, next)
				next++
				if rc != nil {
					contigs.feed(rc)
				}
				if err := writeChunk(c, sitesZ, popZ, sink); err != nil {
					return err
				}
				b := c.batch
				counts.Read += b.Read
				counts.Masked += b.Masked
				for i := range b.Skipped {
					counts.Skipped[i] += b.Skipped[i]
				}
				kept += int64(len(b.Records))
				bufPool.Put(c.sites)
				if c.popSites != nil {
					bufPool.Put(c.popSites)
				}
				rd.Release(b)
				<-inFlight
				bar.update()
			}
		}
		if len(pending) > 0 {
			return errors.New("internal: batches missing from the ordered stream")
		}
		return nil
	})
	if err := waitOrCancel(ctx, g.Wait); err != nil {
		bar.finish()
		if ctx.Err() != nil {
			return ctx.Err()
		}
		return err
	}
	bar.finish()
	if err := sitesZ.Close(); err != nil {
		return err
	}
	// Its tabix index, so standard tools slice it by region (none when unsorted or past 2^29).
	if err := vcfscan.IndexBGZFTable(out.Path("sites.tsv.gz"), vcfscan.TabixSitesColumns); err != nil && !errors.Is(err, vcfscan.ErrLimit) && !errors.Is(err, vcfscan.ErrUnsorted) {
		return err
	}
	if popZ != nil {
		if err := popZ.Close(); err != nil {
			return err
		}
	}

	totals := workers[0].Totals()
	for _, w := range workers[1:] {
		if err := totals.Merge(w.Totals()); err != nil {
			return err
		}
	}
	var rres *roh.Result
	if rc != nil {
		if rres, err = rc.Finish(); err != nil {
			return err
		}
	}
	if !o.shard.on() {
		if err := writeTables(out, totals, rres, ped); err != nil {
			return err
		}
	}
	if ctx.Err() != nil {
		return ctx.Err()
	}
	info := runInfo(env, o, rd, &counts, kept, samples, totals, rres, start)
	if err := writeJSON(out, "run.json", info); err != nil {
		return err
	}
	if err := out.Commit(); err != nil {
		return err
	}
	if o.shard.on() {
		if err := o.shard.writeState(o, rd, &counts, kept, samples, totals, rohCfg, rres, ped, time.Since(start).Seconds()); err != nil {
			return err
		}
	}
	if o.report {
		if err := htmlreport.Write(o.out, htmlreport.Options{}); err != nil {
			return fmt.Errorf("scan finished, but the report failed: %w", err)
		}
	}
	fmt.Fprintf(env.stderr, "fgauge: %d records read, %d sites kept, %d samples, %s; results in %s\n",
		counts.Read, kept, len(samples), time.Since(start).Round(time.Millisecond), o.out)
	return nil
}

// contigTable shares the growing contig list between the goroutine that
// calls Reader.Next (which appends contigs first met in records) and the
// workers that name them.
type contigTable struct {
	mu      sync.RWMutex
	list    []vcfscan.Contig
	rohSeen int // contigs already handed to the ROH collector
}

func newContigTable(c []vcfscan.Contig) *contigTable {
	return &contigTable{list: append([]vcfscan.Contig(nil), c...), rohSeen: len(c)}
}

// update copies contigs appended since the last call; only the goroutine
// calling Reader.Next may call it.
func (t *contigTable) update(c []vcfscan.Contig) {
	t.mu.RLock()
	n := len(t.list)
	t.mu.RUnlock()
	if len(c) == n {
		return
	}
	t.mu.Lock()
	t.list = append(t.list, c[n:]...)
	t.mu.Unlock()
}

func (t *contigTable) name(id int) string {
	t.mu.RLock()
	defer t.mu.RUnlock()
	return t.list[id].Name
}

// feed hands new contigs to the ROH collector; ordered stage only.
func (t *contigTable) feed(rc *roh.Collector) {
	t.mu.RLock()
	defer t.mu.RUnlock()
	if len(t.list) > t.rohSeen {
		rc.UpdateContigs(t.list)
		t.rohSeen = len(t.list)
	}
}

// waitOrCancel waits for wait to return; once ctx is cancelled it waits at
// most two more seconds, so that an interrupt is honoured even when the
// reader is blocked on a stalled pipe, which cannot be interrupted.
func waitOrCancel(ctx context.Context, wait func() error) error {
	ch := make(chan error, 1)
	go func() { ch <- wait() }()
	select {
	case err := <-ch:
		return err
	case <-ctx.Done():
	}
	select {
	case err := <-ch:
		return err
	case <-time.After(2 * time.Second):
		return ctx.Err()
	}
}

// writeChunk writes one batch's site rows and feeds the ROH collector, in input order.
func writeChunk(c *siteChunk, sitesZ, popZ io.Writer, rc batchSink) error {
	if _, err := sitesZ.Write(c.sites.Bytes()); err != nil {
		return err
	}
	if popZ != nil && c.popSites != nil {
		if _, err := popZ.Write(c.popSites.Bytes()); err != nil {
			return err
		}
	}
	if rc != nil {
		return rc.AddBatch(c.batch, c.freqs)
	}
	return nil
}

// writeTables writes samples.tsv, runs.tsv and the population tables.
func writeTables(out *stagedDir, totals *stats.Totals, rres *roh.Result, ped []string) error {
	header, rows := totals.SampleTable()
	if rres != nil {
		h2, r2 := rres.SampleTable()
		header = append(header, h2...)
		for i := range rows {
			rows[i] = append(rows[i], r2[i]...)
		}
	}
	if ped != nil {
		header = append(header, "f_pedigree")
		for i := range rows {
			rows[i] = append(rows[i], ped[i])
		}
	}
	if err := writeStaged(out, "samples.tsv", func(w io.Writer) error { return writeTSV(w, header, rows) }); err != nil {
		return err
	}
	if rres != nil {
		if err := writeStaged(out, "runs.tsv", rres.WriteRuns); err != nil {
			return err
		}
	}
	if totals.HasPopulations() {
		if err := writeStaged(out, "populations.tsv", totals.WritePopulations); err != nil {
			return err
		}
		if err := writeStaged(out, "populations_pairwise.tsv", totals.WritePairwise); err != nil {
			return err
		}
	}
	return nil
}

func writeTSV(w io.Writer, header []string, rows [][]string) error {
	bw := bufio.NewWriter(w)
	bw.WriteString(strings.Join(header, "\t"))
	bw.WriteByte('\n')
	for _, r := range rows {
		bw.WriteString(strings.Join(r, "\t"))
		bw.WriteByte('\n')
	}
	return bw.Flush()
}

// writeStaged creates a staged file and fills it with fill.
func writeStaged(out *stagedDir, name string, fill func(io.Writer) error) error {
	f, err := out.Create(name)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(f, 1<<16)
	if err := fill(bw); err != nil {
		f.Close()
		return fmt.Errorf("writing %s: %w", name, err)
	}
	if err := bw.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func writeJSON(out *stagedDir, name string, v any) error {
	return writeStaged(out, name, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(sanitizeJSON(v))
	})
}

// sanitizeJSON replaces NaN and infinities, which JSON cannot carry, by null.
func sanitizeJSON(v any) any {
	switch x := v.(type) {
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil
		}
	case map[string]any:
		for k, e := range x {
			x[k] = sanitizeJSON(e)
		}
	case []any:
		for i, e := range x {
			x[i] = sanitizeJSON(e)
		}
	}
	return v
}

func runInfo(env *runEnv, o *scanOptions, rd *vcfscan.Reader, c *vcfscan.Batch, kept int64, samples []string, totals *stats.Totals, rres *roh.Result, start time.Time) map[string]any {
	size := int64(-1)
	if st, err := os.Stat(o.input); err == nil && o.input != "-" {
		size = st.Size()
	}
	f := &runFacts{argv: env.argv, inputPath: o.input, inputSize: size, inputFormat: rd.Format().String(),
		read: c.Read, kept: kept, skipped: c.Skipped, masked: c.Masked,
		samplesInFile: rd.Header().Samples, samples: samples, warnings: rd.Warnings(),
		unlisted: o.stats.unlisted, wallSeconds: time.Since(start).Seconds()}
	return runSummary(env.stderr, f, totals, rres)
}

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
	f, err := vcfscan.OpenText(path)
	if err != nil {
		return nil, &usageError{err.Error()}
	}
	defer f.Close()
	var names []string
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) == 0 || strings.HasPrefix(fields[0], "#") {
			continue
		}
		names = append(names, fields[0])
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return names, nil
}

// progress draws a bar of compressed bytes read when stderr is a terminal.
type progress struct {
	bar  *progressbar.ProgressBar
	rd   *vcfscan.Reader
	last time.Time
}

func newProgress(w io.Writer, off bool, rd *vcfscan.Reader) *progress {
	p := &progress{rd: rd}
	f, ok := w.(*os.File)
	if off || !ok || !term.IsTerminal(int(f.Fd())) {
		return p
	}
	_, total := rd.Progress()
	if total <= 0 {
		total = -1
	}
	p.bar = progressbar.NewOptions64(total,
		progressbar.OptionSetWriter(w),
		progressbar.OptionShowBytes(true),
		progressbar.OptionSetDescription("scanning"),
		progressbar.OptionThrottle(200*time.Millisecond),
		progressbar.OptionClearOnFinish(),
	)
	return p
}

func (p *progress) update() {
	if p.bar == nil || time.Since(p.last) < 100*time.Millisecond {
		return
	}
	p.last = time.Now()
	done, _ := p.rd.Progress()
	p.bar.Set64(done)
}

func (p *progress) finish() {
	if p.bar != nil {
		p.bar.Finish()
	}
}
