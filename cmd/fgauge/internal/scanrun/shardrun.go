package scanrun

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/cmd/fgauge/internal/plan"
	"fgauge/cmd/fgauge/internal/shard"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

// shardRun is the shard side of a scan: the identity of the shard, the
// routing of chromosomes it holds in part, and the state it writes.
type shardRun struct {
	stateOut  string
	skipValid bool
	options   []string
	version   string

	pc          *roh.PieceCollector
	contigOrder []string // genome order: see genomeOrder
	input       string
	nHeader     int // contigs in the header at open
}

// on reports whether this scan writes a shard state.
func (f *shardRun) on() bool { return f != nil && f.stateOut != "" }

// identity fills the identity fields of a state for this scan.
func (f *shardRun) identity(cfg *Config, read *vcfscan.Options) (*shard.State, error) {
	return shard.NewIdentity(f.version, cfg.Input, f.options, read.Regions)
}

// skipIfValid reports whether --skip-if-valid-state applies: the state
// file exists, is intact, was written for the same input, options and
// regions by this version, and its site tables are unchanged.
//
// It also sets what reading a shard needs: a record belongs to the region
// holding its POS, so that adjacent shards never both count a deletion
// that spans their boundary.
func (f *shardRun) skipIfValid(stderr io.Writer, cfg *Config, read *vcfscan.Options) (bool, error) {
	if f.on() {
		f.input = cfg.Input
		read.RegionsByStart = true
		if cfg.Input == "-" {
			return false, badinput.Errorf("--state-out needs an input file (its identity is part of the state), not standard input")
		}
	}
	if !f.on() {
		if f != nil && f.skipValid {
			return false, badinput.Errorf("--skip-if-valid-state needs --state-out")
		}
		return false, nil
	}
	if !f.skipValid {
		return false, nil
	}
	if _, err := os.Stat(f.stateOut); err != nil {
		return false, nil
	}
	old, err := shard.ReadFile(f.stateOut)
	if err != nil {
		fmt.Fprintf(stderr, "fgauge: %v; scanning the shard again\n", err)
		return false, nil
	}
	want, err := f.identity(cfg, read)
	if err != nil {
		return false, err
	}
	want.SamplesInFile, want.Samples, want.ContigOrder = old.SamplesInFile, old.Samples, old.ContigOrder
	want.ROH = old.ROH
	if why := shard.SameIdentity(want, old); why != "" || want.WholeFile != old.WholeFile || !slices.Equal(want.Regions, old.Regions) {
		if why == "" {
			why = "regions differ"
		}
		fmt.Fprintf(stderr, "fgauge: %s holds a state of another run (%s); scanning the shard again\n", f.stateOut, why)
		return false, nil
	}
	if err := old.CheckSiteTables(f.stateOut); err != nil {
		fmt.Fprintf(stderr, "fgauge: %v; scanning the shard again\n", err)
		return false, nil
	}
	fmt.Fprintf(stderr, "fgauge: %s already holds this shard's state; skipped\n", f.stateOut)
	return true, nil
}

// separateHeader puts the header lines of the site tables in blocks of
// their own, so that merge can concatenate the shards' blocks without them.
func (f *shardRun) separateHeader(ws ...*vcfscan.BGZFWriter) error {
	if !f.on() {
		return nil
	}
	for _, w := range ws {
		if w != nil {
			if err := w.Flush(); err != nil {
				return err
			}
		}
	}
	return nil
}

// genomeOrder is the order merge puts shards and chromosomes in: the
// references of the index (the order of the file for tabix, whose names
// are listed as first met), then header contigs the index lacks; without
// an index (a shard of the whole file), the header's contig order.
func genomeOrder(input string, contigs []vcfscan.Contig, regs []vcfscan.Region) []string {
	var order []string
	seen := map[string]bool{}
	if len(regs) > 0 {
		hdr := &vcfscan.Header{Contigs: contigs}
		if refs, err := plan.ReadIndexRefs(input, hdr); err == nil {
			for _, r := range refs {
				if !seen[r.Name] {
					seen[r.Name] = true
					order = append(order, r.Name)
				}
			}
		}
	}
	for _, c := range contigs {
		if !seen[c.Name] {
			seen[c.Name] = true
			order = append(order, c.Name)
		}
	}
	return order
}

// batchSink receives batches in input order (the ROH collector, or a
// shard.Sink in front of it).
type batchSink interface {
	AddBatch(b *vcfscan.Batch, freqs []float64) error
}

// sink returns what the ordered stage feeds: nil without ROH, rc for a
// plain scan, and for a shard a router that keeps chromosomes held in
// part as raw pieces.
func (f *shardRun) sink(rc *roh.Collector, cfg *roh.Config, samples []string, contigs []vcfscan.Contig, regs []vcfscan.Region) (batchSink, error) {
	f.contigOrder = genomeOrder(f.input, contigs, regs)
	f.nHeader = len(contigs)
	if rc == nil {
		return nil, nil
	}
	if !f.on() || len(regs) == 0 {
		return rc, nil
	}
	pc, err := roh.NewPieceCollector(cfg, len(samples))
	if err != nil {
		return nil, err
	}
	f.pc = pc
	whole := shard.WholeChroms(shard.NormalizeRegions(regs), contigs)
	names := make([]string, len(contigs))
	for i, c := range contigs {
		names[i] = c.Name
	}
	split := func(id int) bool {
		// Contigs first met in records (absent from the header) have no
		// name yet; they are kept as pieces, which is always exact.
		return id >= len(names) || !whole[names[id]]
	}
	return shard.NewSink(rc, pc, split), nil
}

// writeState writes the shard state after the shard's OUTDIR is committed.
func (f *shardRun) writeState(cfg *Config, read *vcfscan.Options, rd *vcfscan.Reader, counts *vcfscan.Batch, kept int64,
	samples []string, totals *stats.Totals, rcfg *roh.Config, rres *roh.Result, ped []string, xr *xRows, wall float64) error {
	st, err := f.identity(cfg, read)
	if err != nil {
		return err
	}
	st.InputFormat = rd.Format().String()
	st.SamplesInFile = rd.Header().Samples
	st.Samples = samples
	st.ContigOrder = f.contigOrder
	for _, c := range rd.Header().Contigs[f.nHeader:] {
		st.ExtraContigs = append(st.ExtraContigs, c.Name)
	}
	st.Read, st.Kept, st.Masked = counts.Read, kept, counts.Masked
	st.Skipped = counts.Skipped[:]
	st.Warnings = rd.Warnings()
	st.Totals, st.ROH, st.ROHConfig, st.Pedigree = totals, rres, rcfg, ped
	if f.pc != nil {
		pieces, excl := f.pc.Pieces(rd.Header().Contigs)
		st.Pieces = pieces
		if rres.Excluded == nil {
			rres.Excluded = map[string]int64{}
		}
		for k, v := range excl {
			rres.Excluded[k] += v
		}
	}
	if st.ROHConfig != nil {
		c := *st.ROHConfig
		c.Threads = 0
		st.ROHConfig = &c
	}
	sites := filepath.Join(cfg.Out, "sites.tsv.gz")
	st.SitesFile = shard.RelTo(f.stateOut, sites)
	if st.SitesSHA256, err = shard.FileSHA256(sites); err != nil {
		return err
	}
	if pop := filepath.Join(cfg.Out, "sites_by_population.tsv.gz"); totals.HasPopulations() {
		st.PopSitesFile = shard.RelTo(f.stateOut, pop)
		if st.PopSHA256, err = shard.FileSHA256(pop); err != nil {
			return err
		}
	}
	for _, r := range xr.ranges {
		st.XRanges = append(st.XRanges, shard.XRange{Start: r.Start, End: r.End})
	}
	if xr.ranges != nil {
		st.XTestSexes = make([]uint8, len(xr.sexes))
		for i, s := range xr.sexes {
			st.XTestSexes[i] = uint8(s)
		}
	}
	st.WallSeconds = wall
	return shard.WriteFile(f.stateOut, st)
}
