package shard

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strings"
	"time"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/cmd/fgauge/internal/outdir"
	"fgauge/cmd/fgauge/internal/runsummary"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

// Check verifies each state and its site tables and prints one line per
// file to w ("ok" or "bad", the path, and the regions or the problem).
func Check(w io.Writer, paths []string) error {
	bad := 0
	for _, p := range paths {
		st, err := ReadFile(p)
		if err == nil {
			err = st.CheckSiteTables(p)
		}
		if err != nil {
			bad++
			fmt.Fprintf(w, "bad\t%s\t%v\n", p, err)
			continue
		}
		fmt.Fprintf(w, "ok\t%s\t%s\tfgauge %s\n", p, DescribeRegions(st), st.Version)
	}
	if bad > 0 {
		return badinput.Errorf("merge --check: %d of %d states are not intact", bad, len(paths))
	}
	return nil
}

// loadedState is a state and the file it came from.
type loadedState struct {
	path string
	st   *State
}

// loadStates reads, matches and orders states. Errors name the file and
// wrap ErrCorrupt or ErrMismatch.
func loadStates(paths []string) ([]loadedState, error) {
	var ls []loadedState
	for _, p := range paths {
		st, err := ReadFile(p)
		if err != nil {
			return nil, err
		}
		if err := st.CheckSiteTables(p); err != nil {
			return nil, err
		}
		if len(ls) > 0 {
			if why := SameIdentity(ls[0].st, st); why != "" {
				return nil, fmt.Errorf("%s and %s: %w: %s", ls[0].path, p, ErrMismatch, why)
			}
			// Sums merge exactly in any order: fold each state into the
			// first as it is read, so that only one set of per-sample
			// accumulators besides the total is held at a time.
			if err := ls[0].st.Totals.Merge(st.Totals); err != nil {
				return nil, fmt.Errorf("%s: %w: %v", p, ErrMismatch, err)
			}
			st.Totals = nil
		}
		ls = append(ls, loadedState{p, st})
	}
	rank := map[string]int{}
	for i, n := range ls[0].st.ContigOrder {
		if _, ok := rank[n]; !ok {
			rank[n] = i
		}
	}
	key := func(r Region) [2]int64 {
		k, ok := rank[r.Chrom]
		if !ok {
			k = math.MaxInt32
		}
		return [2]int64{int64(k), r.Start}
	}
	less := func(a, b [2]int64) bool { return a[0] < b[0] || (a[0] == b[0] && a[1] < b[1]) }
	for _, l := range ls {
		if l.st.WholeFile && len(ls) > 1 {
			return nil, fmt.Errorf("%s: %w: this state covers the whole input, so it overlaps every other state", l.path, ErrMismatch)
		}
		if !l.st.WholeFile && len(l.st.Regions) == 0 {
			return nil, fmt.Errorf("%s: %w: the state names no regions", l.path, ErrCorrupt)
		}
		rs := l.st.Regions
		sort.Slice(rs, func(i, j int) bool { return less(key(rs[i]), key(rs[j])) })
	}
	total := ls[0].st.Totals
	sort.SliceStable(ls, func(i, j int) bool {
		if ls[i].st.WholeFile || ls[j].st.WholeFile {
			return false
		}
		return less(key(ls[i].st.Regions[0]), key(ls[j].st.Regions[0]))
	})
	for i := range ls {
		ls[i].st.Totals = nil
	}
	ls[0].st.Totals = total // the merged sums of all states
	// Overlaps, between and within states.
	type owned struct {
		r    Region
		file string
	}
	byChrom := map[string][]owned{}
	for _, l := range ls {
		for _, r := range l.st.Regions {
			byChrom[r.Chrom] = append(byChrom[r.Chrom], owned{r, l.path})
		}
	}
	for _, rs := range byChrom {
		sort.Slice(rs, func(i, j int) bool { return rs[i].r.Start < rs[j].r.Start })
		for i := 1; i < len(rs); i++ {
			if rs[i].r.Start <= rs[i-1].r.End {
				return nil, fmt.Errorf("%s and %s: %w: regions overlap (%s and %s)", rs[i-1].file, rs[i].file, ErrMismatch,
					DescribeRegions(&State{Regions: []Region{rs[i-1].r}}), DescribeRegions(&State{Regions: []Region{rs[i].r}}))
			}
		}
	}
	// Shards must follow each other in genome order for their site
	// tables to concatenate into the table of one pass.
	for i := 1; i < len(ls); i++ {
		prev := ls[i-1].st.Regions
		if !less(key(prev[len(prev)-1]), key(ls[i].st.Regions[0])) {
			return nil, fmt.Errorf("%s and %s: %w: regions interleave in genome order, so their site tables cannot be joined; give each shard one stretch of the genome",
				ls[i-1].path, ls[i].path, ErrMismatch)
		}
	}
	return ls, nil
}

// headerOnceWarnings are reader warnings about the header or the end of
// the file, which every shard reports alike; merge keeps one shard's count.
var headerOnceWarnings = map[string]bool{
	"no_fileformat_line": true, "unknown_fileformat": true, "contig_without_length": true, "bgzf_missing_eof": true,
}

// merged is the combination of several states.
type merged struct {
	first    *State
	totals   *stats.Totals
	rres     *roh.Result
	read     int64 // records in the shards' regions
	kept     int64
	masked   int64
	skipped  [vcfscan.NumSkipReasons]int64
	outside  int64 // records read by shards outside their regions
	readAll  int64
	warnings []vcfscan.Warning
	wall     float64
	mem      *runsummary.Memory
}

// combine merges the accumulators of ordered states.
func combine(ctx context.Context, ls []loadedState, cfg *MergeConfig, mem *runsummary.Memory) (*merged, error) {
	// loadStates has already folded every state's sums into the first.
	m := &merged{first: ls[0].st, totals: ls[0].st.Totals}
	warn := map[string]*vcfscan.Warning{}
	var warnOrder []string
	for _, l := range ls {
		st := l.st
		out := st.Skipped[vcfscan.SkipOutsideRegion]
		m.readAll += st.Read
		m.outside += out
		m.read += st.Read - out
		m.kept += st.Kept
		m.masked += st.Masked
		for k := range m.skipped {
			if vcfscan.SkipReason(k) != vcfscan.SkipOutsideRegion {
				m.skipped[k] += st.Skipped[k]
			}
		}
		for _, w := range st.Warnings {
			p := warn[w.Kind]
			if p == nil {
				c := w
				warn[w.Kind] = &c
				warnOrder = append(warnOrder, w.Kind)
				continue
			}
			if headerOnceWarnings[w.Kind] {
				p.Count = max(p.Count, w.Count)
			} else {
				p.Count += w.Count
			}
		}
		m.wall += st.WallSeconds
	}
	// Each shard warns once per contig it meets that the header lacks;
	// the single pass warns once per such contig.
	extra := map[string]bool{}
	for _, l := range ls {
		for _, n := range l.st.ExtraContigs {
			extra[n] = true
		}
	}
	for _, k := range warnOrder {
		if k == "contig_not_in_header" && len(extra) > 0 {
			warn[k].Count = int64(len(extra))
		}
		m.warnings = append(m.warnings, *warn[k])
	}
	if ls[0].st.ROH == nil {
		return m, nil
	}
	rres, err := combineROH(ctx, ls, cfg, mem)
	if err != nil {
		return nil, err
	}
	m.rres = rres
	return m, nil
}

// combineROH gathers the runs of whole chromosomes and detects the
// chromosomes split across shards on their joined data, read window by
// window from the shards' pieces files within the memory budget.
func combineROH(ctx context.Context, ls []loadedState, cfg *MergeConfig, mem *runsummary.Memory) (*roh.Result, error) {
	f := ls[0].st
	r := &roh.Result{Method: f.ROH.Method, Samples: f.ROH.Samples, Classes: f.ROH.Classes,
		GenotypeError: f.ROH.GenotypeError, CMPerMB: f.ROH.CMPerMB, Fit: f.ROH.Fit, Excluded: map[string]int64{},
		AgeRates: f.ROH.AgeRates, AgeMarginCM: f.ROH.AgeMarginCM, AgeWhole: f.ROH.AgeWhole, AgeWholeShare: f.ROH.AgeWholeShare}
	var pieceOrder []string
	pieces := map[string][]roh.PieceRef{}
	for _, l := range ls {
		if err := r.Merge(l.st.ROH); err != nil {
			return nil, fmt.Errorf("%s: %w: %v", l.path, ErrMismatch, err)
		}
		if l.st.PiecesFile == "" {
			continue
		}
		p := SiteTablePath(l.path, l.st.PiecesFile)
		file, err := os.Open(p)
		if err != nil {
			return nil, fmt.Errorf("%s: pieces file of this shard: %w", l.path, err)
		}
		defer file.Close()
		set, err := roh.OpenPieces(file, l.st.PiecesBytes, p)
		if err != nil {
			return nil, fmt.Errorf("%s: %w: %v", l.path, ErrCorrupt, err)
		}
		for i, info := range set.Pieces() {
			if _, ok := pieces[info.Name]; !ok {
				pieceOrder = append(pieceOrder, info.Name)
			}
			pieces[info.Name] = append(pieces[info.Name], roh.PieceRef{Set: set, Index: i})
		}
	}
	if len(pieceOrder) > 0 {
		if f.ROHConfig == nil {
			return nil, fmt.Errorf("%s: %w: pieces of chromosomes without detection settings", ls[0].path, ErrCorrupt)
		}
		rc := *f.ROHConfig
		rc.Threads, rc.MemoryBudget, rc.TempDir = cfg.Threads, mem.BudgetBytes, cfg.TempDir
		groups := make([][]roh.PieceRef, len(pieceOrder))
		for i, n := range pieceOrder {
			groups[i] = pieces[n]
		}
		joined, ms, err := roh.JoinAndDetectPiecesStats(ctx, &rc, r.Samples, groups)
		mem.PeakHeldBytes, mem.InFlightBytes, mem.SpilledBytes = ms.PeakHeld, ms.InFlight, ms.SpilledBytes
		if err != nil {
			if errors.Is(err, roh.ErrPieces) {
				return nil, fmt.Errorf("%w: %v", ErrCorrupt, err)
			}
			return nil, err
		}
		have := map[string]bool{}
		for _, c := range r.Chroms {
			have[c.Name] = true
		}
		for _, c := range joined.Chroms {
			if have[c.Name] {
				return nil, fmt.Errorf("%w: chromosome %s is held whole by one shard and in part by another", ErrMismatch, c.Name)
			}
		}
		r.Chroms = append(r.Chroms, joined.Chroms...)
	}
	rank := map[string]int{}
	for i, n := range f.ContigOrder {
		if _, ok := rank[n]; !ok {
			rank[n] = i
		}
	}
	sort.SliceStable(r.Chroms, func(i, j int) bool {
		ri, ok := rank[r.Chroms[i].Name]
		if !ok {
			ri = math.MaxInt32
		}
		rj, ok := rank[r.Chroms[j].Name]
		if !ok {
			rj = math.MaxInt32
		}
		return ri < rj
	})
	return r, nil
}

// MergeConfig says which states to merge and where to write the outputs.
type MergeConfig struct {
	States  []string // state files, in any order
	Out     string   // output folder
	Force   bool     // overwrite results already in Out
	Threads int      // detection workers for chromosomes split across shards
	// MemoryBudget bounds the joined data of split chromosomes in memory
	// (see roh.Config.MemoryBudget; 0 means the scan's default); beyond
	// it, windows go to unlinked files in TempDir ("" = the system's).
	MemoryBudget int64
	TempDir      string
	// DefaultBudget is the budget when MemoryBudget is 0.
	DefaultBudget int64
	// LimitHeap sets the Go runtime's soft memory limit from the budget
	// (runsummary.SetHeapLimit): for the command, which owns the process.
	LimitHeap   bool
	Version     string   // fgauge version, for run.json
	CommandLine []string // for run.json
	Stderr      io.Writer
	// AfterCommit, when set, runs once the outputs are in place and while
	// the folder is still locked (the closing message, the report).
	AfterCommit func(*MergeResult) error
}

// MergeResult counts what a merge combined.
type MergeResult struct {
	States     int
	Read, Kept int64 // records in the shards' regions, sites kept
	Samples    int
}

// Merge reads, checks and orders the states, and writes into cfg.Out the
// outputs one scan over the whole input would have written. Errors about
// the states wrap ErrCorrupt or ErrMismatch and name the file.
func Merge(ctx context.Context, cfg MergeConfig) (res *MergeResult, err error) {
	start := time.Now()
	ls, err := loadStates(cfg.States)
	if err != nil {
		return nil, err
	}
	budget := cfg.MemoryBudget
	if budget <= 0 {
		budget = cfg.DefaultBudget
	}
	if budget <= 0 {
		budget = roh.DefaultMemoryBudget
	}
	tmp := cfg.TempDir
	if tmp == "" {
		tmp = os.TempDir()
	}
	mem := &runsummary.Memory{BudgetBytes: budget, TempDir: tmp, HeapLimitBytes: -1}
	if cfg.LimitHeap {
		mem.HeapLimitBytes = runsummary.SetHeapLimit(budget, len(ls[0].st.Samples), cfg.Threads)
	}
	if cfg.TempDir != "" {
		if err := roh.CheckTempDir(cfg.TempDir); err != nil {
			return nil, err
		}
	}
	m, err := combine(ctx, ls, &cfg, mem)
	if err != nil {
		return nil, err
	}
	m.mem = mem
	if ctx.Err() != nil {
		return nil, ctx.Err()
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
	if err := checkXRows(ls, m.totals); err != nil {
		return nil, err
	}
	if err := joinSiteTables(out, "sites.tsv.gz", ls, func(s *State) string { return s.SitesFile }); err != nil {
		return nil, err
	}
	// Its tabix index, as a single scan writes (none when unsorted or past 2^29).
	if err := vcfscan.IndexBGZFTable(out.Path("sites.tsv.gz"), vcfscan.TabixSitesColumns); err != nil && !errors.Is(err, vcfscan.ErrLimit) && !errors.Is(err, vcfscan.ErrUnsorted) {
		return nil, err
	}
	if m.totals.HasPopulations() {
		if err := joinSiteTables(out, "sites_by_population.tsv.gz", ls, func(s *State) string { return s.PopSitesFile }); err != nil {
			return nil, err
		}
	}
	if err := outdir.WriteTables(out, m.totals, m.rres, m.first.Pedigree); err != nil {
		return nil, err
	}
	if err := outdir.WriteJSON(out, "run.json", mergeRunInfo(&cfg, ls, m, start)); err != nil {
		return nil, err
	}
	if ctx.Err() != nil {
		return nil, ctx.Err()
	}
	if err := out.Commit(); err != nil {
		return nil, err
	}
	res = &MergeResult{States: len(ls), Read: m.read, Kept: m.kept, Samples: len(m.first.Samples)}
	if cfg.AfterCommit != nil {
		// The outputs are complete: a failing hook (the report) does not
		// undo them, and the caller gets both.
		return res, cfg.AfterCommit(res)
	}
	return &MergeResult{States: len(ls), Read: m.read, Kept: m.kept, Samples: len(m.first.Samples)}, nil
}

// mergeRunInfo builds run.json as one pass would (runsummary.Build) from
// the merged counts, plus a "shards" section.
func mergeRunInfo(cfg *MergeConfig, ls []loadedState, m *merged, start time.Time) *runsummary.Run {
	f := m.first
	facts := &runsummary.Facts{Version: cfg.Version, Argv: cfg.CommandLine, InputPath: f.InputPath, InputSize: f.InputSize, InputFormat: f.InputFormat,
		Read: m.read, Kept: m.kept, Skipped: m.skipped, Masked: m.masked,
		SamplesInFile: f.SamplesInFile, Samples: f.Samples, Warnings: m.warnings,
		WallSeconds: time.Since(start).Seconds(), Memory: m.mem}
	info := runsummary.Build(cfg.Stderr, facts, m.totals, m.rres)
	sh := &runsummary.Shards{Count: len(ls), RecordsRead: m.readAll, RecordsOutsideRegions: m.outside, ShardWallSeconds: m.wall}
	for _, l := range ls {
		sh.States = append(sh.States, l.path)
		sh.Regions = append(sh.Regions, DescribeRegions(l.st))
	}
	info.Shards = sh
	return info
}

// errBGZFShape is wrapped when a shard's site table is not laid out as
// scan --state-out writes it.
var errBGZFShape = errors.New("site table is not a BGZF file with its header in the first block")

// joinSiteTables writes the first shard's header block, then every
// shard's data blocks (all blocks but the header block and the EOF
// block), then the EOF block: a BGZF file whose text is the header line
// followed by the shards' rows in genome order.
func joinSiteTables(out *outdir.Dir, name string, ls []loadedState, file func(*State) string) error {
	dst, err := out.Create(name)
	if err != nil {
		return err
	}
	defer dst.Close()
	for i, l := range ls {
		p := SiteTablePath(l.path, file(l.st))
		f, err := os.Open(p)
		if err != nil {
			return fmt.Errorf("%s: %w", l.path, err)
		}
		st, err := f.Stat()
		if err != nil {
			f.Close()
			return err
		}
		head := make([]byte, 64)
		n, _ := io.ReadFull(f, head)
		hsize, ok := vcfscan.BGZFBlockSize(head[:n])
		tail := make([]byte, len(vcfscan.BGZFEOF))
		if ok && st.Size() >= int64(hsize+len(tail)) {
			_, err = f.ReadAt(tail, st.Size()-int64(len(tail)))
		}
		if !ok || err != nil || st.Size() < int64(hsize+len(tail)) || string(tail) != vcfscan.BGZFEOF {
			f.Close()
			return fmt.Errorf("%s: %w", p, errBGZFShape)
		}
		from := int64(hsize)
		if i == 0 {
			from = 0
		}
		_, err = io.Copy(dst, io.NewSectionReader(f, from, st.Size()-int64(len(tail))-from))
		f.Close()
		if err != nil {
			return fmt.Errorf("joining %s: %w", p, err)
		}
	}
	if _, err := io.WriteString(dst, vcfscan.BGZFEOF); err != nil {
		return err
	}
	return dst.Close()
}

// ErrXSplit is wrapped when shards' X rows were tested with sexes that
// differ from those the whole run infers.
var ErrXSplit = errors.New("X rows of a shard were tested with sexes the merged run does not infer")

// checkXRows accepts the shards' non-PAR X rows only when each was tested
// with the sexes the merged evidence decides (then they equal the rows of
// one pass). Rows tested with given sexes (--sex for every sample) need
// no check. A shard state does not keep X calls, so rows tested with
// other sexes cannot be recomputed here: merge refuses, and the run must
// keep X and Y in one shard or give --sex for every sample.
func checkXRows(ls []loadedState, totals *stats.Totals) error {
	var want []sexcheck.Sex
	for _, l := range ls {
		if l.st.XTestSexes == nil {
			continue
		}
		if want == nil {
			want = totals.Sexes().Test
		}
		var differ []string
		for i, s := range l.st.XTestSexes {
			if i < len(want) && sexcheck.Sex(s) != want[i] {
				differ = append(differ, fmt.Sprintf("%s (%s in the shard, %s overall)", totals.Samples[i], sexcheck.Sex(s), want[i]))
			}
		}
		if len(l.st.XTestSexes) != len(want) {
			return fmt.Errorf("%s: %w: %d X test sexes for %d samples", l.path, ErrCorrupt, len(l.st.XTestSexes), len(want))
		}
		if len(differ) > 0 {
			if len(differ) > 3 {
				differ = append(differ[:3], fmt.Sprintf("and %d more", len(differ)-3))
			}
			return badinput.Wrap(fmt.Errorf("%s: %w: %s; merge cannot recompute X rows: scan non-PAR X and Y in one shard, or give --sex for every sample",
				l.path, ErrXSplit, strings.Join(differ, ", ")))
		}
	}
	return nil
}
