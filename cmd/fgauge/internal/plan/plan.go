// Package plan splits an indexed input into shards of about equal work,
// estimates each shard's CPU time and memory, and writes the scripts that
// scan the shards on one machine or as a Slurm job array and merge them.
package plan

import (
	"bytes"
	"embed"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"text/template"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/cmd/fgauge/internal/shard"
	"fgauge/vcfscan"
)

// costPerSiteSample is the measured CPU time of 'fgauge scan' per site
// and sample with the default options (all statistics and HMM detection):
// 52 ns, from bench/shards (1,000 samples x 50,000 synthetic sites of
// bench/gen on 4 chromosomes, 2.61 s of CPU for 50 million calls on a
// 2-core machine shared with other jobs; the same run on a quieter machine
// measured 33 ns, so the constant errs on the long side). Its peak RSS there, 220 MB, is what the memory estimate
// (200 MB plus 1.25 bytes per site and sample: the packed genotypes of the
// chromosome being read and the tables of the one being detected) covers.
const (
	costPerSiteSample = 52e-9
	timeSafety        = 4.0
	minTaskSeconds    = 15 * 60
	memBaseMB         = 200
)

// planPiece is one stretch of one reference and its cost.
type planPiece struct {
	chrom      string
	start, end int64 // 1-based inclusive; end 0 = to the end
	bytes      int64
	records    float64
}

func (p planPiece) region() string {
	switch {
	case p.start <= 1 && p.end == 0 && !strings.Contains(p.chrom, ":"):
		return p.chrom
	case p.end == 0:
		// "chrom:1-" for a whole contig whose name holds ':', which
		// ParseRegion would otherwise split at its last ':'.
		return fmt.Sprintf("%s:%d-", p.chrom, max(p.start, 1))
	}
	return fmt.Sprintf("%s:%d-%d", p.chrom, p.start, p.end)
}

// MaxRegionArgs is the most --region options a shard's command gets;
// shards of more contigs read them from PLANDIR/regions/NUMBER.txt.
const MaxRegionArgs = 20

// planShard is a list of consecutive pieces.
type planShard struct {
	pieces  []planPiece
	bytes   int64
	records float64
}

// IndexRef is one reference of an index with its offsets.
type IndexRef struct {
	Name       string
	begin, end int64 // compressed file offsets of its records
	records    float64
	length     int64 // from the header, 0 when unknown
	offsetAt   func(pos int64) (int64, bool)
}

// Config is one plan request. Input, Out and Fgauge may be relative;
// the scripts get absolute paths.
type Config struct {
	Input     string   // indexed VCF/BCF (.tbi or .csi next to it)
	Out       string   // plan folder, created if absent
	Shards    int      // aim for about this many shards (0: use ShardMB)
	ShardMB   float64  // aim for shards of about this many MB of compressed input (0 with Shards 0: 64)
	Threads   int      // threads (and Slurm CPUs) per shard
	Jobs      int      // shards run at once by run_local.sh (0: cores / Threads)
	Merged    string   // folder for the merged outputs ("": Out/merged)
	Fgauge    string   // fgauge binary the scripts call
	Partition string   // Slurm partition ("": the cluster's default)
	Force     bool     // replace an existing plan in Out
	ScanArgs  []string // options passed to every shard's scan
}

// Result describes a written plan.
type Result struct {
	Shards      int
	TargetBytes int64 // compressed input per shard aimed at
	Samples     int
}

// Make splits cfg.Input into shards by its index and writes the plan
// files into cfg.Out.
func Make(cfg Config) (*Result, error) {
	out, mergedOut, fgaugePath := cfg.Out, cfg.Merged, cfg.Fgauge
	shards, shardMB, threads, jobs := cfg.Shards, cfg.ShardMB, cfg.Threads, cfg.Jobs
	if out == "" {
		return nil, usagef("plan: a plan folder is required (-o PLANDIR)")
	}
	if shards < 0 || shardMB < 0 || threads < 1 || jobs < 0 {
		return nil, usagef("plan: --shards, --shard-mb, --threads and --jobs must not be negative (--threads at least 1)")
	}
	if shards > 0 && shardMB > 0 {
		return nil, usagef("plan: give --shards or --shard-mb, not both")
	}
	if shards == 0 && shardMB == 0 {
		shardMB = 64
	}
	scanArgs, err := planScanArgs(cfg.ScanArgs)
	if err != nil {
		return nil, err
	}
	input, err := filepath.Abs(cfg.Input)
	if err != nil {
		return nil, err
	}
	if fgaugePath, err = filepath.Abs(fgaugePath); err != nil {
		return nil, err
	}
	outAbs, err := filepath.Abs(out)
	if err != nil {
		return nil, err
	}
	if mergedOut == "" {
		mergedOut = filepath.Join(outAbs, "merged")
	} else if mergedOut, err = filepath.Abs(mergedOut); err != nil {
		return nil, err
	}
	if _, err := os.Stat(filepath.Join(outAbs, "shards.tsv")); err == nil && !cfg.Force {
		return nil, usagef("%s already holds a plan; add --force to replace it", out)
	}

	rd, err := vcfscan.Open(input, vcfscan.Options{Threads: 1})
	if err != nil {
		return nil, err
	}
	hdr := rd.Header()
	nSamples := len(rd.Samples())
	lengths := map[string]int64{}
	for _, c := range hdr.Contigs {
		lengths[c.Name] = c.Length
	}
	refs, err := ReadIndexRefs(input, hdr)
	rd.Close()
	if err != nil {
		return nil, err
	}
	for i := range refs {
		refs[i].length = lengths[refs[i].Name]
	}
	var total int64
	for _, r := range refs {
		total += r.end - r.begin
	}
	if total <= 0 {
		return nil, usagef("plan: %s: the index lists no records", cfg.Input)
	}
	target := int64(shardMB * 1e6)
	if shards > 0 {
		target = (total + int64(shards) - 1) / int64(shards)
	}
	plan := makeShards(refs, target)

	if err := os.MkdirAll(filepath.Join(outAbs, "logs"), 0o755); err != nil {
		return nil, err
	}
	for _, d := range []string{"shards", "states"} {
		if err := os.MkdirAll(filepath.Join(outAbs, d), 0o755); err != nil {
			return nil, err
		}
	}
	p := &planScripts{dir: outAbs, fgauge: fgaugePath, input: input, scanArgs: scanArgs, merged: mergedOut,
		threads: threads, jobs: jobs, partition: cfg.Partition, samples: nSamples, shards: plan}
	if err := p.write(); err != nil {
		return nil, err
	}
	return &Result{Shards: len(plan), TargetBytes: target, Samples: nSamples}, nil
}

// planScanArgs checks the scan options given after "--" and makes the
// files they name absolute, since the scripts run from other folders.
func planScanArgs(args []string) ([]string, error) {
	out := append([]string(nil), args...)
	for i := 0; i < len(out); i++ {
		a := out[i]
		if !strings.HasPrefix(a, "-") {
			continue
		}
		name, val, hasVal := strings.Cut(strings.TrimLeft(a, "-"), "=")
		switch {
		case name == "o" || name == "out" || name == "region" ||
			name == "state-out" || name == "skip-if-valid-state" || name == "report":
			return nil, usagef("plan: --%s cannot be given to the shards' scans (the plan sets it, or it needs a whole run)", name)
		case !shard.ScanFlagsFiles[name]:
			continue
		}
		if !hasVal {
			if i+1 >= len(out) {
				return nil, usagef("plan: --%s needs a value", name)
			}
			i++
			val = out[i]
		}
		if _, err := os.Stat(val); err != nil {
			return nil, usagef("plan: --%s: %v", name, err)
		}
		abs, err := filepath.Abs(val)
		if err != nil {
			return nil, err
		}
		if hasVal {
			out[i] = "--" + name + "=" + abs
		} else {
			out[i] = abs
		}
	}
	return out, nil
}

// ReadIndexRefs reads the tabix or CSI index of path (vcfscan.OpenIndex:
// checked, and refused when older than the data) and returns its
// references with records, in index order (the order of the file), with
// their offsets.
func ReadIndexRefs(path string, hdr *vcfscan.Header) ([]IndexRef, error) {
	idx, err := vcfscan.OpenIndex(path, hdr)
	if err != nil {
		return nil, err
	}
	maxPos := min(idx.MaxPos, 1<<40)
	// One compression ratio for the file, from the first data block met.
	cratio := -1.0
	var refs []IndexRef
	for id, ref := range idx.Refs {
		chunks := func(beg, end int64) []vcfscan.Chunk {
			cs, _ := idx.Chunks(id, beg, end)
			return cs
		}
		if cratio < 0 {
			off := ref.Span.Begin.File
			if !ref.HasStats {
				if cs := chunks(0, maxPos); len(cs) > 0 {
					off = cs[0].Begin.File
				}
			}
			var ok bool
			if cratio, ok = vcfscan.BGZFRatio(path, off); !ok {
				cratio = 0.25
			}
		}
		r := IndexRef{Name: ref.Name}
		if !fillRef(&r, ref, chunks, maxPos, cratio) {
			continue
		}
		refs = append(refs, r)
	}
	return refs, nil
}

// fillRef sets a reference's offsets from its index statistics (or its
// chunks) and the function giving the offset where records at or after a
// position start. Offsets are approximate compressed byte positions:
// the block's file offset plus the offset inside the uncompressed block
// scaled by the compression ratio ratio (so that records sharing a block
// still differ). It reports false for references without records.
func fillRef(r *IndexRef, ref vcfscan.IndexRef, chunks func(beg, end int64) []vcfscan.Chunk, maxPos int64, ratio float64) bool {
	vpos := func(o vcfscan.Offset) int64 { return o.File + int64(float64(o.Block)*ratio) }
	first := func(beg int64) (int64, bool) {
		cs := chunks(beg, maxPos)
		if len(cs) == 0 {
			return 0, false
		}
		m := vpos(cs[0].Begin)
		for _, c := range cs[1:] {
			m = min(m, vpos(c.Begin))
		}
		return m, true
	}
	if ref.HasStats {
		r.begin, r.end = vpos(ref.Span.Begin), vpos(ref.Span.End)
	} else {
		cs := chunks(0, maxPos)
		if len(cs) == 0 {
			return false
		}
		r.begin, r.end = vpos(cs[0].Begin), vpos(cs[0].End)
		for _, c := range cs {
			r.begin, r.end = min(r.begin, vpos(c.Begin)), max(r.end, vpos(c.End))
		}
	}
	if r.end <= r.begin {
		r.end = r.begin + 1
	}
	r.records = float64(ref.Records)
	r.offsetAt = func(pos int64) (int64, bool) { return first(pos - 1) }
	return true
}

// makeShards groups whole references into shards of about target bytes
// and splits references larger than 1.5 targets into pieces of their own.
func makeShards(refs []IndexRef, target int64) []planShard {
	var out []planShard
	var cur planShard
	flush := func() {
		if len(cur.pieces) > 0 {
			out = append(out, cur)
			cur = planShard{}
		}
	}
	for _, r := range refs {
		cost := r.end - r.begin
		if float64(cost) > 1.5*float64(target) {
			flush()
			for _, p := range splitRef(r, int(math.Round(float64(cost)/float64(target)))) {
				out = append(out, planShard{pieces: []planPiece{p}, bytes: p.bytes, records: p.records})
			}
			continue
		}
		if len(cur.pieces) > 0 && cur.bytes+cost > target+target/10 {
			flush()
		}
		cur.pieces = append(cur.pieces, planPiece{chrom: r.Name, start: 1, bytes: cost, records: r.records})
		cur.bytes += cost
		cur.records += r.records
	}
	flush()
	return out
}

// splitRef cuts a reference into k pieces of about equal compressed bytes,
// placing cuts on a grid of at least 512 windows by the index's offsets.
func splitRef(r IndexRef, k int) []planPiece {
	whole := []planPiece{{chrom: r.Name, start: 1, bytes: r.end - r.begin, records: r.records}}
	if k < 2 {
		return whole
	}
	// The last position with records: from the length, else by halving.
	last := r.length
	if last <= 0 {
		lo, hi := int64(1), int64(1)<<29
		for lo < hi {
			mid := (lo + hi + 1) / 2
			if _, ok := r.offsetAt(mid); ok {
				lo = mid
			} else {
				hi = mid - 1
			}
		}
		last = lo
	}
	const windows = 512
	step := max(last/windows, 1)
	cost := float64(r.end - r.begin)
	var cuts []int64 // 1-based starts of pieces 2..k
	next := 1
	for pos := step + 1; pos <= last && next < k; pos += step {
		off, ok := r.offsetAt(pos)
		if !ok {
			break
		}
		if float64(off-r.begin) >= cost*float64(next)/float64(k) {
			if len(cuts) == 0 || cuts[len(cuts)-1] != pos {
				cuts = append(cuts, pos)
			}
			next++
		}
	}
	if len(cuts) == 0 {
		return whole
	}
	var out []planPiece
	start := int64(1)
	prevOff := r.begin
	for i := 0; i <= len(cuts); i++ {
		p := planPiece{chrom: r.Name, start: start}
		endOff := r.end
		if i < len(cuts) {
			p.end = cuts[i] - 1
			endOff, _ = r.offsetAt(cuts[i])
			start = cuts[i]
		}
		p.bytes = max(endOff-prevOff, 0)
		p.records = r.records * float64(p.bytes) / cost
		prevOff = endOff
		out = append(out, p)
	}
	return out
}

// planScripts writes the plan files.
type planScripts struct {
	dir, fgauge, input, merged, partition string
	scanArgs                              []string
	threads, jobs, samples                int
	shards                                []planShard
}

// shellQuote quotes s for a POSIX shell.
func shellQuote(s string) string {
	if s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r == '/' || r == '.' || r == '_' || r == '-' || r == ':' || r == ',' || r == '=' ||
			(r >= '0' && r <= '9') || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z'))
	}) < 0 {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// estimate returns the Slurm time limit (seconds) and memory (MB) of a shard.
func (p *planScripts) estimate(s planShard) (cpuSec float64, limitSec int, memMB int) {
	cpuSec = s.records * float64(p.samples) * costPerSiteSample
	limitSec = max(int(math.Ceil(cpuSec*timeSafety/float64(p.threads))), minTaskSeconds)
	memMB = memBaseMB + int(math.Ceil(1.25*s.records*float64(p.samples)/1e6))
	return cpuSec, limitSec, memMB
}

func slurmTime(sec int) string {
	return fmt.Sprintf("%d:%02d:%02d", sec/3600, (sec/60)%60, sec%60)
}

// scripts are the batch scripts of a plan, rendered from the embedded
// templates in scripts/.
//
//go:embed scripts/*.tmpl
var scripts embed.FS

var scriptTemplates = template.Must(template.New("").Funcs(template.FuncMap{
	"sh": shellQuote,
	"shjoin": func(args []string) string {
		q := make([]string, len(args))
		for i, a := range args {
			q[i] = shellQuote(a)
		}
		return strings.Join(q, " ")
	},
}).ParseFS(scripts, "scripts/*.tmpl"))

// scriptShard is one shard as the scripts name it.
type scriptShard struct {
	Number     int
	Regions    []string // --region values
	RegionList string   // region list under PLANDIR/regions/ (--region @FILE) when the shard has too many regions
}

// scriptData is what the script templates read.
type scriptData struct {
	Fgauge, Input, Dir, Merged, Partition string
	RunShard                              string // path of run_shard.sh
	N, Width, Threads, Jobs               int
	Shards                                []scriptShard
	ScanArgs                              []string
	ShardMemMB, MergeMemMB                int
	ShardTime, MergeTime                  string // Slurm time limits
}

func (p *planScripts) write() error {
	n := len(p.shards)
	width := len(strconv.Itoa(n))
	var tsv strings.Builder
	tsv.WriteString("shard\tregions\tcompressed_bytes\test_records\test_cpu_seconds\test_memory_mb\n")
	maxLimit, maxMem := 0, 0
	d := &scriptData{Fgauge: p.fgauge, Input: p.input, Dir: p.dir, Merged: p.merged, Partition: p.partition,
		RunShard: filepath.Join(p.dir, "run_shard.sh"), N: n, Width: width, Threads: p.threads, Jobs: p.jobs,
		ScanArgs: p.scanArgs}
	regionFiles := map[string]string{}
	for i, s := range p.shards {
		var regs []string
		for _, pc := range s.pieces {
			regs = append(regs, pc.region())
		}
		cpu, limit, mem := p.estimate(s)
		maxLimit, maxMem = max(maxLimit, limit), max(maxMem, mem)
		fmt.Fprintf(&tsv, "%d\t%s\t%d\t%.0f\t%s\t%d\n", i+1, strings.Join(regs, ","), s.bytes, s.records,
			strconv.FormatFloat(cpu, 'g', 3, 64), mem)
		ss := scriptShard{Number: i + 1, Regions: regs}
		if len(regs) > MaxRegionArgs {
			// Many whole contigs (unplaced scaffolds): a region list
			// keeps the command line short.
			ss.RegionList = fmt.Sprintf("%0*d.txt", width, i+1)
			ss.Regions = nil
			regionFiles[ss.RegionList] = strings.Join(regs, "\n") + "\n"
		}
		d.Shards = append(d.Shards, ss)
	}
	// A different plan in the same folder: the states and shard folders
	// of the old one would be merged with the new ones, so they go.
	if old, err := os.ReadFile(filepath.Join(p.dir, "shards.tsv")); err == nil && !bytes.Equal(old, []byte(tsv.String())) {
		for _, d := range []string{"states", "shards"} {
			if err := os.RemoveAll(filepath.Join(p.dir, d)); err != nil {
				return err
			}
			if err := os.MkdirAll(filepath.Join(p.dir, d), 0o755); err != nil {
				return err
			}
		}
	}
	if len(regionFiles) > 0 {
		if err := os.MkdirAll(filepath.Join(p.dir, "regions"), 0o755); err != nil {
			return err
		}
		for name, text := range regionFiles {
			if err := os.WriteFile(filepath.Join(p.dir, "regions", name), []byte(text), 0o644); err != nil {
				return err
			}
		}
	}
	if err := os.WriteFile(filepath.Join(p.dir, "shards.tsv"), []byte(tsv.String()), 0o644); err != nil {
		return err
	}
	d.ShardMemMB, d.ShardTime = maxMem, slurmTime(maxLimit)

	// The merge detects runs on every chromosome split across shards, one
	// at a time, from the joined raw data of all of them: 0.25 byte per
	// site and sample held for all split chromosomes, plus detection
	// tables for the largest one (1 byte per site and sample).
	_, mergeLimit, mergeMem := p.estimate(planShard{})
	split := map[string]float64{}
	var splitAll, splitMax float64
	for _, s := range p.shards {
		for _, pc := range s.pieces {
			if pc.start > 1 || pc.end > 0 {
				split[pc.chrom] += pc.records
				splitAll += pc.records
				splitMax = max(splitMax, split[pc.chrom])
			}
		}
	}
	mergeMem += int(math.Ceil((0.25*splitAll + splitMax) * float64(p.samples) / 1e6))
	mergeLimit = max(mergeLimit, int(math.Ceil(splitAll*float64(p.samples)*costPerSiteSample*timeSafety/float64(p.threads))))
	d.MergeMemMB, d.MergeTime = mergeMem, slurmTime(mergeLimit)

	for _, name := range []string{"run_shard.sh", "run_local.sh", "shard_array.sbatch", "merge.sbatch", "submit_slurm.sh"} {
		var b bytes.Buffer
		if err := scriptTemplates.ExecuteTemplate(&b, name+".tmpl", d); err != nil {
			return fmt.Errorf("plan: rendering %s: %w", name, err)
		}
		if err := os.WriteFile(filepath.Join(p.dir, name), b.Bytes(), 0o755); err != nil {
			return err
		}
	}
	return nil
}

func usagef(format string, a ...any) error { return badinput.Errorf(format, a...) }
