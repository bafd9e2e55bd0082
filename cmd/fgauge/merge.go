package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"sort"
	"time"

	"fgauge/cmd/fgauge/htmlreport"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

const mergeHelp = `Combines the states written by 'fgauge scan --region ... --state-out FILE'
into the outputs one scan over the whole input would give: samples.tsv,
runs.tsv, the population tables and run.json are computed from the merged
accumulators (sums are exact, so the numbers are identical), and
sites.tsv.gz is the shards' site tables joined in genome order.

States must come from the same input file (path, size and modification
time), the same fgauge version, the same samples and the same
result-changing options, and their regions must not overlap. Chromosomes
split across shards are joined and their runs of homozygosity detected
here (their raw data travel in the states; see cmd/fgauge/state.go). Shards
are put in genome order, the order of the index's references (the file's
order), whatever the order of the arguments; shards that interleave in that
order are refused, as their site tables could not be joined.

run.json counts the records in the shards' regions; records the index
brought in from outside a shard's region are reported under
"shards" and not as outside_region.

With --check, each state is only verified (header, checksum, site tables)
and one line per state is printed; the exit status is 2 if any is not
intact.

The cautions of 'fgauge scan --help' apply to merged results alike: genomic
F and F_ROH are not a diagnosis, and mating, culling or clinical decisions
belong to licensed practice under local regulations.
`

func runMerge(ctx context.Context, env *runEnv, args []string) error {
	fs := newFlagSet(env.stderr, "merge", "merge -o OUTDIR STATE... | merge --check STATE...", mergeHelp)
	var out string
	var force, check, report bool
	threads := runtime.NumCPU()
	fs.StringVar(&out, "o", "", "output folder (created if absent)")
	fs.StringVar(&out, "out", "", "same as -o")
	fs.BoolVar(&force, "force", false, "overwrite results already in OUTDIR")
	fs.BoolVar(&check, "check", false, "only verify the states and their site tables")
	fs.IntVar(&threads, "threads", threads, "detection workers for chromosomes split across shards")
	fs.BoolVar(&report, "report", false, "also write OUTDIR/report.html")
	paths, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(paths) == 0 {
		return usagef("merge: no state files given")
	}
	if threads < 1 {
		return usagef("merge: --threads must be at least 1")
	}
	if check {
		return checkStates(env, paths)
	}
	err = mergeStates(ctx, env, paths, out, force, threads)
	if err == nil && report {
		if err := htmlreport.Write(out, htmlreport.Options{}); err != nil {
			return fmt.Errorf("merge finished, but the report failed: %w", err)
		}
	}
	if err != nil {
		var ue *usageError
		if errors.As(err, &ue) || ctx.Err() != nil {
			return err
		}
		if errors.Is(err, errStateCorrupt) || errors.Is(err, errStateMismatch) || errors.Is(err, os.ErrNotExist) {
			return &usageError{err.Error()}
		}
		return err
	}
	return nil
}

// checkStates verifies each state and prints one line per file.
func checkStates(env *runEnv, paths []string) error {
	bad := 0
	for _, p := range paths {
		st, err := readStateFile(p)
		if err == nil {
			err = st.checkSiteTables(p)
		}
		if err != nil {
			bad++
			fmt.Fprintf(env.stdout, "bad\t%s\t%v\n", p, err)
			continue
		}
		fmt.Fprintf(env.stdout, "ok\t%s\t%s\tfgauge %s\n", p, describeRegions(st), st.Version)
	}
	if bad > 0 {
		return usagef("merge --check: %d of %d states are not intact", bad, len(paths))
	}
	return nil
}

// loadedState is a state and the file it came from.
type loadedState struct {
	path string
	st   *shardState
}

// loadStates reads, matches and orders states. Errors name the file and
// wrap errStateCorrupt or errStateMismatch.
func loadStates(paths []string) ([]loadedState, error) {
	var ls []loadedState
	for _, p := range paths {
		st, err := readStateFile(p)
		if err != nil {
			return nil, err
		}
		if err := st.checkSiteTables(p); err != nil {
			return nil, err
		}
		if len(ls) > 0 {
			if why := sameIdentity(ls[0].st, st); why != "" {
				return nil, fmt.Errorf("%s and %s: %w: %s", ls[0].path, p, errStateMismatch, why)
			}
			// Sums merge exactly in any order: fold each state into the
			// first as it is read, so that only one set of per-sample
			// accumulators besides the total is held at a time.
			if err := ls[0].st.Totals.Merge(st.Totals); err != nil {
				return nil, fmt.Errorf("%s: %w: %v", p, errStateMismatch, err)
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
	key := func(r stateRegion) [2]int64 {
		k, ok := rank[r.Chrom]
		if !ok {
			k = math.MaxInt32
		}
		return [2]int64{int64(k), r.Start}
	}
	less := func(a, b [2]int64) bool { return a[0] < b[0] || (a[0] == b[0] && a[1] < b[1]) }
	for _, l := range ls {
		if l.st.WholeFile && len(ls) > 1 {
			return nil, fmt.Errorf("%s: %w: this state covers the whole input, so it overlaps every other state", l.path, errStateMismatch)
		}
		if !l.st.WholeFile && len(l.st.Regions) == 0 {
			return nil, fmt.Errorf("%s: %w: the state names no regions", l.path, errStateCorrupt)
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
		r    stateRegion
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
				return nil, fmt.Errorf("%s and %s: %w: regions overlap (%s and %s)", rs[i-1].file, rs[i].file, errStateMismatch,
					describeRegions(&shardState{Regions: []stateRegion{rs[i-1].r}}), describeRegions(&shardState{Regions: []stateRegion{rs[i].r}}))
			}
		}
	}
	// Shards must follow each other in genome order for their site
	// tables to concatenate into the table of one pass.
	for i := 1; i < len(ls); i++ {
		prev := ls[i-1].st.Regions
		if !less(key(prev[len(prev)-1]), key(ls[i].st.Regions[0])) {
			return nil, fmt.Errorf("%s and %s: %w: regions interleave in genome order, so their site tables cannot be joined; give each shard one stretch of the genome",
				ls[i-1].path, ls[i].path, errStateMismatch)
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
	first    *shardState
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
}

// combine merges the accumulators of ordered states.
func combine(ls []loadedState, threads int) (*merged, error) {
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
	rres, err := combineROH(ls, threads)
	if err != nil {
		return nil, err
	}
	m.rres = rres
	return m, nil
}

// combineROH gathers the runs of whole chromosomes and detects the
// chromosomes split across shards on their joined data.
func combineROH(ls []loadedState, threads int) (*roh.Result, error) {
	f := ls[0].st
	r := &roh.Result{Method: f.ROH.Method, Samples: f.ROH.Samples, Classes: f.ROH.Classes,
		GenotypeError: f.ROH.GenotypeError, CMPerMB: f.ROH.CMPerMB, Fit: f.ROH.Fit, Excluded: map[string]int64{}}
	var pieceOrder []string
	pieces := map[string][]roh.Piece{}
	for _, l := range ls {
		if err := r.Merge(l.st.ROH); err != nil {
			return nil, fmt.Errorf("%s: %w: %v", l.path, errStateMismatch, err)
		}
		for _, p := range l.st.Pieces {
			if _, ok := pieces[p.Name]; !ok {
				pieceOrder = append(pieceOrder, p.Name)
			}
			pieces[p.Name] = append(pieces[p.Name], p)
		}
	}
	if len(pieceOrder) > 0 {
		if f.ROHConfig == nil {
			return nil, fmt.Errorf("%s: %w: pieces of chromosomes without detection settings", ls[0].path, errStateCorrupt)
		}
		cfg := *f.ROHConfig
		cfg.Threads = threads
		groups := make([][]roh.Piece, len(pieceOrder))
		for i, n := range pieceOrder {
			groups[i] = pieces[n]
		}
		joined, err := roh.JoinAndDetect(&cfg, r.Samples, groups)
		if err != nil {
			return nil, err
		}
		have := map[string]bool{}
		for _, c := range r.Chroms {
			have[c.Name] = true
		}
		for _, c := range joined.Chroms {
			if have[c.Name] {
				return nil, fmt.Errorf("%w: chromosome %s is held whole by one shard and in part by another", errStateMismatch, c.Name)
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

func mergeStates(ctx context.Context, env *runEnv, paths []string, outDir string, force bool, threads int) (err error) {
	start := time.Now()
	ls, err := loadStates(paths)
	if err != nil {
		return err
	}
	m, err := combine(ls, threads)
	if err != nil {
		return err
	}
	if ctx.Err() != nil {
		return ctx.Err()
	}
	out, err := newStagedDir(outDir, force)
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			out.Abort()
		}
	}()
	if err := joinSiteTables(out, "sites.tsv.gz", ls, func(s *shardState) string { return s.SitesFile }); err != nil {
		return err
	}
	if err := vcfscan.IndexBGZFTable(out.Path("sites.tsv.gz"), vcfscan.TabixSitesColumns); err != nil && !errors.Is(err, vcfscan.ErrLimit) && !errors.Is(err, vcfscan.ErrUnsorted) {
		return err
	}
	if m.totals.HasPopulations() {
		if err := joinSiteTables(out, "sites_by_population.tsv.gz", ls, func(s *shardState) string { return s.PopSitesFile }); err != nil {
			return err
		}
	}
	if err := writeTables(out, m.totals, m.rres, m.first.Pedigree); err != nil {
		return err
	}
	if err := writeJSON(out, "run.json", mergeRunInfo(env, ls, m, start)); err != nil {
		return err
	}
	if ctx.Err() != nil {
		return ctx.Err()
	}
	if err := out.Commit(); err != nil {
		return err
	}
	fmt.Fprintf(env.stderr, "fgauge: merged %d shard states: %d records, %d sites kept, %d samples, %s; results in %s\n",
		len(ls), m.read, m.kept, len(m.first.Samples), time.Since(start).Round(time.Millisecond), outDir)
	return nil
}

// mergeRunInfo builds run.json as one pass would (runSummary) from the
// merged counts, plus a "shards" section.
func mergeRunInfo(env *runEnv, ls []loadedState, m *merged, start time.Time) map[string]any {
	f := m.first
	t := m.totals
	unlisted := []string{}
	for i, p := range t.PopOf {
		if p < 0 {
			unlisted = append(unlisted, t.Samples[i])
		}
	}
	facts := &runFacts{argv: env.argv, inputPath: f.InputPath, inputSize: f.InputSize, inputFormat: f.InputFormat,
		read: m.read, kept: m.kept, skipped: m.skipped, masked: m.masked,
		samplesInFile: f.SamplesInFile, samples: f.Samples, warnings: m.warnings,
		unlisted: unlisted, wallSeconds: time.Since(start).Seconds()}
	info := runSummary(env.stderr, facts, t, m.rres)
	var files, regions []string
	for _, l := range ls {
		files = append(files, l.path)
		regions = append(regions, describeRegions(l.st))
	}
	info["shards"] = map[string]any{
		"count": len(ls), "states": files, "regions": regions,
		"records_read": m.readAll, "records_outside_regions": m.outside,
		"shard_wall_seconds": m.wall,
	}
	return info
}

// errBGZFShape is wrapped when a shard's site table is not laid out as
// scan --state-out writes it.
var errBGZFShape = errors.New("site table is not a BGZF file with its header in the first block")

// joinSiteTables writes the first shard's header block, then every
// shard's data blocks (all blocks but the header block and the EOF
// block), then the EOF block: a BGZF file whose text is the header line
// followed by the shards' rows in genome order.
func joinSiteTables(out *stagedDir, name string, ls []loadedState, file func(*shardState) string) error {
	dst, err := out.Create(name)
	if err != nil {
		return err
	}
	defer dst.Close()
	for i, l := range ls {
		p := siteTablePath(l.path, file(l.st))
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
