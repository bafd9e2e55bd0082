// Package scanrun is the scan: VCF/BCF in, the output folder's tables,
// run.json and (for a shard) the mergeable state out. Run takes a Config,
// not command-line flags, so that the command, the demo, the tests and
// the benchmarks all call the same function.
//
// It wires vcfscan, stats and roh together and writes through outdir; it
// computes no statistics itself.
package scanrun

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"sync"
	"time"

	"golang.org/x/sync/errgroup"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/cmd/fgauge/internal/outdir"
	"fgauge/cmd/fgauge/internal/runsummary"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/stats/pedigree"
	"fgauge/vcfscan"
)

// Config is everything one scan needs. The command builds it from its
// options; the demo and tests fill it directly. Side files (populations,
// frequency panel, genetic map, pedigree, sample lists, regions) are read
// by the caller and given here parsed.
type Config struct {
	Input   string // VCF/BCF path, or "-" for standard input
	Out     string // output folder
	Force   bool   // overwrite results already in Out
	Threads int    // workers for decompression, parsing and statistics (at least 1)

	// Read holds the site and call policy, limits, sample selection and
	// regions. Threads, RequireSorted, WantPL, InfoKey and RegionsByStart
	// are set by Run.
	Read     vcfscan.Options
	Stats    StatsSettings
	ROH      *roh.Config        // nil: no runs of homozygosity
	Pedigree *pedigree.Pedigree // nil: no f_pedigree column
	// PedigreeFile names the pedigree in run.json (its sex column gives
	// the samples' sexes when Sex.List is nil).
	PedigreeFile string
	// Sex holds the sex-chromosome options.
	Sex SexSettings

	// MemoryBudget bounds, in bytes, the per-site data held for
	// runs-of-homozygosity detection (see roh.Config.MemoryBudget); a
	// shard scan shares it between the chromosomes it holds whole and the
	// pieces of split ones. 0 means DefaultMemoryBudget. It overrides
	// ROH.MemoryBudget and does not change results.
	MemoryBudget int64
	// TempDir is where data beyond the budget go ("" = the system's
	// temporary folder); it overrides ROH.TempDir.
	TempDir string
	// LimitHeap sets the Go runtime's soft memory limit from the budget
	// (runsummary.SetHeapLimit): for the command, which owns the process.
	LimitHeap bool

	// StateOut, when set, makes this scan a shard: OUTDIR gets the site
	// tables and run.json only, and the mergeable state goes to StateOut.
	StateOut string
	// SkipIfValidState skips the scan when StateOut already holds an
	// intact state of this same shard.
	SkipIfValidState bool
	// Options is the fingerprint of the result-changing options
	// (shard.OptionFingerprint), part of a shard's identity.
	Options []string

	// AfterCommit, when set, runs once the outputs are in place and
	// while the folder is still locked (the report).
	AfterCommit func(out string) error

	Version     string   // fgauge version, for run.json and states
	CommandLine []string // for run.json
	Stderr      io.Writer
	Progress    Progress // nil: none
}

// DefaultMemoryBudget is the memory budget of a scan or a merge when
// none is given: 96 MiB for the per-site data of ROH detection. The rest
// of a scan holds about 100 MB at 2 threads (the reader's chunks and BGZF
// blocks in flight, batches, per-sample accumulators: heap profile of 100
// samples x 1 M sites). Measured by bench/scale with the heap limit
// (runsummary.SetHeapLimit), 2 threads: 100 samples x 4 M sites peaked at
// 383 MB with 96 MiB and 406 MB with 128 MiB; 10,000 samples x 200 k
// sites at 360 MB with 128 MiB.
const DefaultMemoryBudget = 96 << 20

// Progress is told how far reading has got. Run calls Start once, Update
// after every batch written, and Finish at the end (also on error).
type Progress interface {
	// Start gives the function that reports compressed bytes read and
	// the input's size (<= 0 when unknown).
	Start(read func() (done, total int64))
	Update()
	Finish()
}

// Result counts what a scan read and kept.
type Result struct {
	Read, Kept int64 // records read, sites kept
	Samples    int   // samples selected
	Skipped    bool  // SkipIfValidState found the state intact; nothing was done
}

type siteChunk struct {
	batch    *vcfscan.Batch
	sites    *bytes.Buffer
	popSites *bytes.Buffer
	freqs    []float64
	deferred []stats.Deferred // X records whose rows wait for the sexes
}

// Run scans cfg.Input into cfg.Out: a reader goroutine hands batches to
// cfg.Threads statistics workers, an ordered stage writes the site tables
// and feeds the runs-of-homozygosity collector in input order, and the
// per-sample tables and run.json are written at the end. Outputs appear
// in cfg.Out only when the whole run succeeded.
func Run(ctx context.Context, cfg Config) (res *Result, err error) {
	start := time.Now()
	if cfg.Threads < 1 {
		return nil, badinput.Errorf("scan: --threads must be at least 1")
	}
	if cfg.Stderr == nil {
		cfg.Stderr = io.Discard
	}
	read := cfg.Read
	read.Threads = cfg.Threads
	read.Regions = append([]vcfscan.Region(nil), cfg.Read.Regions...)
	if cfg.MemoryBudget < 0 {
		return nil, badinput.Errorf("scan: the memory budget must be positive")
	}
	if cfg.MemoryBudget == 0 {
		cfg.MemoryBudget = DefaultMemoryBudget
	}
	if cfg.TempDir != "" && cfg.ROH != nil {
		if err := roh.CheckTempDir(cfg.TempDir); err != nil {
			return nil, err
		}
	}
	rohCfg := cfg.ROH
	if rohCfg != nil {
		c := *rohCfg
		rohCfg = &c
		rohCfg.MemoryBudget, rohCfg.TempDir = cfg.MemoryBudget, cfg.TempDir
		if cfg.StateOut != "" && len(read.Regions) > 0 {
			// whole chromosomes and pieces of split ones share the budget
			rohCfg.MemoryBudget = max(cfg.MemoryBudget/2, 1)
		}
		read.RequireSorted = true
		read.WantPL = rohCfg.Method == "hmm"
	}
	rohPL := read.WantPL // the HMM detector reads the likelihoods
	if len(read.Regions) > 0 {
		read.RequireSorted = true
	}
	if !cfg.Stats.NoLikelihoods {
		// f_lik, alt_freq_lik and depth_mean; GT-only records cost nothing.
		read.WantPL, read.WantDP = true, true
	}
	if err := cfg.Stats.check(); err != nil {
		return nil, err
	}
	if cfg.Stats.InfoKey != "" {
		read.InfoKey = cfg.Stats.InfoKey
	}
	sh := &shardRun{stateOut: cfg.StateOut, skipValid: cfg.SkipIfValidState, options: cfg.Options, version: cfg.Version}
	if skip, err := sh.skipIfValid(cfg.Stderr, &cfg, &read); skip || err != nil {
		if skip {
			return &Result{Skipped: true}, nil
		}
		return nil, err
	}

	out, err := outdir.New(cfg.Out, cfg.Force)
	if err != nil {
		return nil, err
	}
	defer func() {
		if err != nil {
			out.Abort()
		}
		out.Close()
	}()

	rd, err := vcfscan.Open(cfg.Input, read)
	if err != nil {
		return nil, err
	}
	defer rd.Close()
	hdr := rd.Header()
	samples := rd.Samples()
	scfg, _, err := cfg.Stats.config(samples)
	if err != nil {
		return nil, err
	}
	if scfg.Sex, err = cfg.Sex.sexConfig(cfg.Input, hdr.Samples, samples, hdr.Contigs, cfg.Pedigree, cfg.PedigreeFile); err != nil {
		return nil, err
	}
	var xd *xDeferral
	if scfg.Sex.DeferX() {
		xd = newXDeferral(out.Path(".x_calls.tmp"), len(samples))
		defer xd.close()
	}
	heapLimit := int64(-1)
	if cfg.LimitHeap {
		heapLimit = runsummary.SetHeapLimit(cfg.MemoryBudget, len(samples), cfg.Threads)
	}
	var rc *roh.Collector
	if rohCfg != nil {
		rohCfg.Threads = cfg.Threads
		if rc, err = roh.NewCollector(rohCfg, samples, hdr.Contigs); err != nil {
			return nil, err
		}
		// On failure or interrupt: stop detection and free its temporary
		// files (Close is a no-op after Finish).
		defer rc.Close()
	}
	var ped []string
	if cfg.Pedigree != nil {
		ped = pedigreeColumn(cfg.Pedigree, samples)
	}

	sitesFile, err := out.Create("sites.tsv.gz")
	if err != nil {
		return nil, err
	}
	defer sitesFile.Close()
	sitesZ := vcfscan.NewBGZFWriter(sitesFile, vcfscan.BGZFSitesLevel)
	sitesZ.IndexLines(vcfscan.TabixSitesColumns)
	if _, err := io.WriteString(sitesZ, stats.SitesHeaderFor(scfg)+"\n"); err != nil {
		return nil, err
	}
	var popZ *vcfscan.BGZFWriter
	if scfg.PopOf != nil {
		f, err := out.Create("sites_by_population.tsv.gz")
		if err != nil {
			return nil, err
		}
		defer f.Close()
		popZ = vcfscan.NewBGZFWriter(f, 1)
		if _, err := io.WriteString(popZ, stats.PopSitesHeader()+"\n"); err != nil {
			return nil, err
		}
	}
	if err := sh.separateHeader(sitesZ, popZ); err != nil {
		return nil, err
	}
	sink, err := sh.sink(rc, rohCfg, samples, hdr.Contigs, read.Regions)
	if err != nil {
		return nil, err
	}
	defer sh.close()

	bar := cfg.Progress
	if bar == nil {
		bar = noProgress{}
	}
	bar.Start(rd.Progress)
	g, gctx := errgroup.WithContext(ctx)
	jobs := make(chan *vcfscan.Batch, 2*cfg.Threads)
	done := make(chan *siteChunk, 2*cfg.Threads)
	bufPool := sync.Pool{New: func() any { return new(bytes.Buffer) }}

	contigs := newContigTable(hdr.Contigs)
	// inFlight bounds the batches read but not yet written in order, so a
	// slow batch cannot make the reorder buffer grow without limit.
	inFlight := make(chan struct{}, 4*cfg.Threads)
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
	workers := make([]*stats.Worker, cfg.Threads)
	lik := stats.NewLikShared(len(samples))
	var wg sync.WaitGroup
	for i := range workers {
		w := stats.NewWorker(scfg, contigs.name)
		w.ShareLikelihoods(lik)
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
				if d := w.Deferred(); len(d) > 0 {
					c.deferred = append([]stats.Deferred(nil), d...)
				}
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
				if err := writeChunk(c, sitesZ, popZ, sink, rohPL, xd, contigs.name); err != nil {
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
				bar.Update()
			}
		}
		if len(pending) > 0 {
			return errors.New("internal: batches missing from the ordered stream")
		}
		return nil
	})
	if err := waitOrCancel(ctx, g.Wait); err != nil {
		bar.Finish()
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		return nil, err
	}
	bar.Finish()
	if err := sitesZ.Close(); err != nil {
		return nil, err
	}
	totals := workers[0].Totals()
	for _, w := range workers[1:] {
		if err := totals.Merge(w.Totals()); err != nil {
			return nil, err
		}
	}
	totals.Lik = lik.Acc()
	var xr xRows
	// Its tabix index, so standard tools slice it by region (none when
	// unsorted or past 2^29): built while it was written, or, when the
	// X rows were spliced in afterwards, by reading it back.
	indexSites := func() error { return sitesZ.WriteIndex(out.Path("sites.tsv.gz")) }
	if xd != nil && len(xd.segs) > 0 {
		xr.sexes = totals.Sexes().Test
		if xr.ranges, err = xd.splice(out.Path("sites.tsv.gz"), xr.sexes, scfg.Sex.XColumns, cfg.Threads); err != nil {
			return nil, err
		}
		indexSites = func() error { return vcfscan.IndexBGZFTable(out.Path("sites.tsv.gz"), vcfscan.TabixSitesColumns) }
	}
	xd.close()
	if err := indexSites(); err != nil && !errors.Is(err, vcfscan.ErrLimit) && !errors.Is(err, vcfscan.ErrUnsorted) {
		return nil, err
	}
	if popZ != nil {
		if err := popZ.Close(); err != nil {
			return nil, err
		}
	}

	var rres *roh.Result
	if rc != nil {
		// Detection of the last chromosome may take a while after reading
		// ends: an interrupt cancels it.
		stop := context.AfterFunc(ctx, rc.Cancel)
		rres, err = rc.Finish()
		stop()
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		if err != nil {
			return nil, err
		}
	}
	if !sh.on() {
		if err := outdir.WriteTables(out, totals, rres, ped); err != nil {
			return nil, err
		}
	}
	if ctx.Err() != nil {
		return nil, ctx.Err()
	}
	var pieces *piecesOut
	if sh.on() {
		// Pieces of split chromosomes go to their side file before
		// run.json, so that its memory figures include them; the file is
		// put in place with the state, after the outputs.
		if pieces, err = sh.writePieces(rd.Header().Contigs, rres); err != nil {
			return nil, err
		}
		defer pieces.discard()
	}
	mem := &runsummary.Memory{BudgetBytes: cfg.MemoryBudget, TempDir: tempDirName(cfg.TempDir), HeapLimitBytes: heapLimit}
	if rc != nil {
		addMemoryStats(mem, rc.MemoryStats())
	}
	if sh.pc != nil {
		addMemoryStats(mem, sh.pc.MemoryStats())
	}
	info := runInfo(&cfg, rd, &counts, kept, samples, totals, rres, mem, start)
	if err := outdir.WriteJSON(out, "run.json", info); err != nil {
		return nil, err
	}
	if err := out.Commit(); err != nil {
		return nil, err
	}
	if sh.on() {
		if err := sh.writeState(&cfg, &read, rd, &counts, kept, samples, totals, rohCfg, rres, ped, &xr, pieces, time.Since(start).Seconds()); err != nil {
			return nil, err
		}
	}
	if cfg.AfterCommit != nil {
		if err := cfg.AfterCommit(cfg.Out); err != nil {
			return nil, err
		}
	}
	return &Result{Read: counts.Read, Kept: kept, Samples: len(samples)}, nil
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

// writeChunk writes one batch's site rows and feeds the ROH collector, in
// input order; without withPL the collector does not see the likelihoods
// (read for f_lik, not for the rule-based detector); with xd, X rows
// waiting for the sexes leave holes (xsplice.go).
func writeChunk(c *siteChunk, sitesZ *vcfscan.BGZFWriter, popZ io.Writer, rc batchSink, withPL bool, xd *xDeferral, chrom func(int) string) error {
	if xd != nil {
		if err := xd.write(sitesZ, c.sites.Bytes(), c.deferred, c.batch, chrom); err != nil {
			return err
		}
	} else if _, err := sitesZ.Write(c.sites.Bytes()); err != nil {
		return err
	}
	if popZ != nil && c.popSites != nil {
		if _, err := popZ.Write(c.popSites.Bytes()); err != nil {
			return err
		}
	}
	if rc != nil {
		b := c.batch
		if !withPL && len(b.PL) > 0 {
			nb := *b
			nb.PL, nb.HasPL = nil, nil
			b = &nb
		}
		return rc.AddBatch(b, c.freqs)
	}
	return nil
}

func runInfo(cfg *Config, rd *vcfscan.Reader, c *vcfscan.Batch, kept int64, samples []string, totals *stats.Totals, rres *roh.Result,
	mem *runsummary.Memory, start time.Time) *runsummary.Run {
	size := int64(-1)
	if st, err := os.Stat(cfg.Input); err == nil && cfg.Input != "-" {
		size = st.Size()
	}
	f := &runsummary.Facts{Version: cfg.Version, Argv: cfg.CommandLine, InputPath: cfg.Input, InputSize: size, InputFormat: rd.Format().String(),
		Read: c.Read, Kept: kept, Skipped: c.Skipped, Masked: c.Masked,
		SamplesInFile: rd.Header().Samples, Samples: samples, Warnings: rd.Warnings(),
		WallSeconds: time.Since(start).Seconds(), Memory: mem}
	return runsummary.Build(cfg.Stderr, f, totals, rres)
}

// addMemoryStats adds one collector's use of its budget to run.json's
// memory section (a shard scan has two collectors sharing the budget).
func addMemoryStats(m *runsummary.Memory, s roh.MemoryStats) {
	m.PeakHeldBytes += s.PeakHeld
	m.InFlightBytes += s.InFlight
	m.SpilledBytes += s.SpilledBytes
}

// tempDirName is the temporary folder as run.json names it.
func tempDirName(dir string) string {
	if dir == "" {
		return os.TempDir()
	}
	return dir
}

// DefaultLimits are the input limits of the scan command's defaults.
func DefaultLimits() vcfscan.Limits {
	return vcfscan.Limits{
		MaxLineBytes:   vcfscan.DefaultMaxLineBytes,
		MaxSamples:     vcfscan.DefaultMaxSamples,
		MaxAlleles:     1000,
		MaxBlockExpand: 1 << 20,
	}
}

// Report prints the one-line account of a finished scan into out.
func (r *Result) Report(w io.Writer, out string, elapsed time.Duration) {
	fmt.Fprintf(w, "fgauge: %d records read, %d sites kept, %d samples, %s; results in %s\n",
		r.Read, r.Kept, r.Samples, elapsed.Round(time.Millisecond), out)
}

// noProgress is the Progress of a run nobody watches.
type noProgress struct{}

func (noProgress) Start(func() (int64, int64)) {}
func (noProgress) Update()                     {}
func (noProgress) Finish()                     {}
