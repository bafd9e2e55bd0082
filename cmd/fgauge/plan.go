package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"fgauge/vcfscan"
)

const planHelp = `Splits an indexed input (.tbi or .csi next to it) into shards of roughly
equal work, measured by the compressed bytes the index assigns to each
stretch of each chromosome (virtual offsets; offsets inside a BGZF block
are scaled by the file's compression ratio). Chromosomes are kept whole
when they fit in a shard (neighbours are grouped); larger ones are split
at positions. Writes:
  PLANDIR/shards.tsv       shard, regions, compressed_bytes, est_records,
                           est_cpu_seconds, est_memory_mb
  PLANDIR/run_shard.sh     scans one shard: run_shard.sh NUMBER (shards of
                           more than 20 contigs list them in PLANDIR/regions/)
  PLANDIR/run_local.sh     all shards on this machine (--jobs at a time), then merge
  PLANDIR/submit_slurm.sh  run with bash: submits a Slurm job array (one task
                           per shard, shard_array.sbatch) and a merge job
                           (merge.sbatch) that starts when every task has
                           succeeded (sbatch --dependency=afterok)
Options after "--" are passed to every 'fgauge scan' of the plan (for
example -- --populations herds.tsv --roh-method rules).

Re-running a script skips the shards whose state is already intact
('fgauge scan --skip-if-valid-state'; submit_slurm.sh also leaves them out
of the array, checking with 'fgauge merge --check').

Slurm resources per task are estimated from the records and samples of
the shard with a measured cost per site and sample (see costPerSiteSample
in the source) times a safety factor of 4, at least 15 minutes.
`

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
	case p.start <= 1 && p.end == 0:
		return p.chrom
	case p.end == 0:
		return fmt.Sprintf("%s:%d-", p.chrom, p.start)
	}
	return fmt.Sprintf("%s:%d-%d", p.chrom, p.start, p.end)
}

// maxRegionArgs is the most --region options a shard's command gets;
// shards of more contigs read them from PLANDIR/regions/NUMBER.txt.
const maxRegionArgs = 20

// planShard is a list of consecutive pieces.
type planShard struct {
	pieces  []planPiece
	bytes   int64
	records float64
}

// indexRef is one reference of an index with its offsets.
type indexRef struct {
	name       string
	begin, end int64 // compressed file offsets of its records
	records    float64
	length     int64 // from the header, 0 when unknown
	offsetAt   func(pos int64) (int64, bool)
}

func runPlan(ctx context.Context, env *runEnv, args []string) error {
	var scanArgs []string
	for i, a := range args {
		if a == "--" {
			scanArgs, args = append([]string(nil), args[i+1:]...), args[:i]
			break
		}
	}
	fs := newFlagSet(env.stderr, "plan", "plan INPUT.vcf.gz|INPUT.bcf -o PLANDIR [--shards N | --shard-mb M] [-- SCAN OPTIONS]", planHelp)
	var out, mergedOut, fgaugePath, partition string
	var shards, threads, jobs int
	var shardMB float64
	var force bool
	fs.StringVar(&out, "o", "", "plan folder (created if absent)")
	fs.StringVar(&out, "out", "", "same as -o")
	fs.IntVar(&shards, "shards", 0, "aim for about this many shards of equal work")
	fs.Float64Var(&shardMB, "shard-mb", 0, "aim for shards of about this many MB of compressed input (default 64 when --shards is not given)")
	fs.IntVar(&threads, "threads", 2, "threads (and Slurm CPUs) per shard")
	fs.IntVar(&jobs, "jobs", 0, "shards run at once by run_local.sh (0: cores / --threads, at least 1)")
	fs.StringVar(&mergedOut, "merged", "", "folder for the merged outputs (default PLANDIR/merged)")
	fs.StringVar(&fgaugePath, "fgauge", "", "fgauge binary the scripts call (default: this one)")
	fs.StringVar(&partition, "partition", "", "Slurm partition for the jobs (default: the cluster's default)")
	fs.BoolVar(&force, "force", false, "overwrite an existing plan in PLANDIR")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("plan: expected one input file, got %d", len(pos))
	}
	if out == "" {
		return usagef("plan: a plan folder is required (-o PLANDIR)")
	}
	if shards < 0 || shardMB < 0 || threads < 1 || jobs < 0 {
		return usagef("plan: --shards, --shard-mb, --threads and --jobs must not be negative (--threads at least 1)")
	}
	if shards > 0 && shardMB > 0 {
		return usagef("plan: give --shards or --shard-mb, not both")
	}
	if shards == 0 && shardMB == 0 {
		shardMB = 64
	}
	if scanArgs, err = planScanArgs(scanArgs); err != nil {
		return err
	}
	input, err := filepath.Abs(pos[0])
	if err != nil {
		return err
	}
	if fgaugePath == "" {
		if fgaugePath, err = os.Executable(); err != nil {
			return fmt.Errorf("plan: cannot find this program's path (give --fgauge): %w", err)
		}
	}
	if fgaugePath, err = filepath.Abs(fgaugePath); err != nil {
		return err
	}
	outAbs, err := filepath.Abs(out)
	if err != nil {
		return err
	}
	if mergedOut == "" {
		mergedOut = filepath.Join(outAbs, "merged")
	} else if mergedOut, err = filepath.Abs(mergedOut); err != nil {
		return err
	}
	if _, err := os.Stat(filepath.Join(outAbs, "shards.tsv")); err == nil && !force {
		return usagef("%s already holds a plan; add --force to replace it", out)
	}

	rd, err := vcfscan.Open(input, vcfscan.Options{Threads: 1})
	if err != nil {
		return err
	}
	hdr := rd.Header()
	nSamples := len(rd.Samples())
	lengths := map[string]int64{}
	for _, c := range hdr.Contigs {
		lengths[c.Name] = c.Length
	}
	refs, err := readIndexRefs(input, hdr)
	rd.Close()
	if err != nil {
		return err
	}
	for i := range refs {
		refs[i].length = lengths[refs[i].name]
	}
	var total int64
	for _, r := range refs {
		total += r.end - r.begin
	}
	if total <= 0 {
		return usagef("plan: %s: the index lists no records", pos[0])
	}
	target := int64(shardMB * 1e6)
	if shards > 0 {
		target = (total + int64(shards) - 1) / int64(shards)
	}
	plan := makeShards(refs, target)

	if err := os.MkdirAll(filepath.Join(outAbs, "logs"), 0o755); err != nil {
		return err
	}
	for _, d := range []string{"shards", "states"} {
		if err := os.MkdirAll(filepath.Join(outAbs, d), 0o755); err != nil {
			return err
		}
	}
	p := &planScripts{dir: outAbs, fgauge: fgaugePath, input: input, scanArgs: scanArgs, merged: mergedOut,
		threads: threads, jobs: jobs, partition: partition, samples: nSamples, shards: plan}
	if err := p.write(); err != nil {
		return err
	}
	fmt.Fprintf(env.stderr, "fgauge: %d shards of about %.1f MB compressed input (%d samples); plan in %s\n",
		len(plan), float64(target)/1e6, nSamples, out)
	return nil
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
		case name == "o" || name == "out" || name == "region" || name == "regions-file" ||
			name == "state-out" || name == "skip-if-valid-state" || name == "report":
			return nil, usagef("plan: --%s cannot be given to the shards' scans (the plan sets it, or it needs a whole run)", name)
		case !scanFlagsFiles[name]:
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

// readIndexRefs reads the tabix or CSI index of path (vcfscan.OpenIndex:
// checked, and refused when older than the data) and returns its
// references with records, in index order (the order of the file), with
// their offsets.
func readIndexRefs(path string, hdr *vcfscan.Header) ([]indexRef, error) {
	idx, err := vcfscan.OpenIndex(path, hdr)
	if err != nil {
		return nil, err
	}
	maxPos := min(idx.MaxPos, 1<<40)
	// One compression ratio for the file, from the first data block met.
	cratio := -1.0
	var refs []indexRef
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
		r := indexRef{name: ref.Name}
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
func fillRef(r *indexRef, ref vcfscan.IndexRef, chunks func(beg, end int64) []vcfscan.Chunk, maxPos int64, ratio float64) bool {
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
func makeShards(refs []indexRef, target int64) []planShard {
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
		cur.pieces = append(cur.pieces, planPiece{chrom: r.name, start: 1, bytes: cost, records: r.records})
		cur.bytes += cost
		cur.records += r.records
	}
	flush()
	return out
}

// splitRef cuts a reference into k pieces of about equal compressed bytes,
// placing cuts on a grid of at least 512 windows by the index's offsets.
func splitRef(r indexRef, k int) []planPiece {
	whole := []planPiece{{chrom: r.name, start: 1, bytes: r.end - r.begin, records: r.records}}
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
		p := planPiece{chrom: r.name, start: start}
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

func (p *planScripts) write() error {
	n := len(p.shards)
	width := len(strconv.Itoa(n))
	var tsv strings.Builder
	tsv.WriteString("shard\tregions\tcompressed_bytes\test_records\test_cpu_seconds\test_memory_mb\n")
	maxLimit, maxMem := 0, 0
	var cases strings.Builder
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
		fmt.Fprintf(&cases, "  %d)", i+1)
		if len(regs) > maxRegionArgs {
			// Many whole contigs (unplaced scaffolds): a regions file
			// keeps the command line short.
			name := fmt.Sprintf("%0*d.txt", width, i+1)
			regionFiles[name] = strings.Join(regs, "\n") + "\n"
			fmt.Fprintf(&cases, " regions+=(--regions-file \"$PLANDIR/regions/%s\")", name)
		} else {
			for _, r := range regs {
				fmt.Fprintf(&cases, " regions+=(--region %s)", shellQuote(r))
			}
		}
		cases.WriteString(" ;;\n")
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
	var scanOpts []string
	for _, a := range p.scanArgs {
		scanOpts = append(scanOpts, shellQuote(a))
	}
	common := fmt.Sprintf(`FGAUGE=${FGAUGE:-%s}
INPUT=%s
PLANDIR=%s
MERGED=%s
N_SHARDS=%d
`, shellQuote(p.fgauge), shellQuote(p.input), shellQuote(p.dir), shellQuote(p.merged), n)

	shard := fmt.Sprintf(`#!/usr/bin/env bash
# Scans one shard of the plan: run_shard.sh NUMBER (1..%d). Written by
# 'fgauge plan'. A shard whose state is already intact is skipped.
set -euo pipefail
%si=${1:?usage: run_shard.sh NUMBER}
regions=()
case "$i" in
%s  *) echo "run_shard.sh: no shard $i (1..$N_SHARDS)" >&2; exit 2 ;;
esac
name=$(printf '%%0%dd' "$i")
exec "$FGAUGE" scan "$INPUT" "${regions[@]}" -o "$PLANDIR/shards/$name" --force \
  --state-out "$PLANDIR/states/$name.state" --skip-if-valid-state \
  --threads %d --no-progress %s
`, n, common, cases.String(), width, p.threads, strings.Join(scanOpts, " "))

	local := fmt.Sprintf(`#!/usr/bin/env bash
# Runs every shard of the plan on this machine, JOBS at a time, then
# merges. Written by 'fgauge plan'. Re-running skips finished shards.
set -euo pipefail
%sJOBS=${JOBS:-%d}
if [ "$JOBS" -lt 1 ]; then JOBS=$(( $(nproc) / %d )); fi
if [ "$JOBS" -lt 1 ]; then JOBS=1; fi
seq 1 "$N_SHARDS" | xargs -P "$JOBS" -n 1 "$PLANDIR/run_shard.sh"
exec "$FGAUGE" merge -o "$MERGED" --force --threads %d "$PLANDIR"/states/*.state
`, common, p.jobs, p.threads, p.threads)

	part := ""
	if p.partition != "" {
		part = "#SBATCH --partition=" + p.partition + "\n"
	}
	array := fmt.Sprintf(`#!/usr/bin/env bash
#SBATCH --job-name=fgauge_shard
#SBATCH --array=1-%d
#SBATCH --cpus-per-task=%d
#SBATCH --mem=%dM
#SBATCH --time=%s
#SBATCH --output=%s/logs/shard_%%a.log
%s# One array task per shard (resources: the largest shard's estimate in
# shards.tsv). Written by 'fgauge plan'.
exec %s "$SLURM_ARRAY_TASK_ID"
`, n, p.threads, maxMem, slurmTime(maxLimit), p.dir, part, shellQuote(filepath.Join(p.dir, "run_shard.sh")))

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
	merge := fmt.Sprintf(`#!/usr/bin/env bash
#SBATCH --job-name=fgauge_merge
#SBATCH --cpus-per-task=%d
#SBATCH --mem=%dM
#SBATCH --time=%s
#SBATCH --output=%s/logs/merge.log
%s# Merges the shard states once every array task has succeeded.
set -euo pipefail
%sexec "$FGAUGE" merge -o "$MERGED" --force --threads %d "$PLANDIR"/states/*.state
`, p.threads, mergeMem, slurmTime(mergeLimit), p.dir, part, common, p.threads)

	submit := fmt.Sprintf(`#!/usr/bin/env bash
# Submits the shards as one Slurm job array and the merge as a job that
# runs after every task has succeeded. Written by 'fgauge plan'.
# Re-running submits only the shards without an intact state.
set -euo pipefail
%scd "$PLANDIR"
todo=()
for i in $(seq 1 "$N_SHARDS"); do
  name=$(printf '%%0%dd' "$i")
  if ! "$FGAUGE" merge --check "states/$name.state" >/dev/null 2>&1; then todo+=("$i"); fi
done
dep=()
if [ "${#todo[@]}" -gt 0 ]; then
  list=$(IFS=,; echo "${todo[*]}")
  jobid=$(sbatch --parsable --array="$list" shard_array.sbatch)
  jobid=${jobid%%%%;*}
  echo "shards: job array $jobid (tasks $list)"
  dep=(--dependency=afterok:$jobid)
else
  echo "shards: every state is already intact"
fi
mergeid=$(sbatch --parsable "${dep[@]}" merge.sbatch)
echo "merge: job ${mergeid%%%%;*}"
echo "${mergeid%%%%;*}" > "$PLANDIR/merge_job_id"
`, common, width)

	files := []struct {
		name, text string
	}{
		{"run_shard.sh", shard}, {"run_local.sh", local}, {"shard_array.sbatch", array},
		{"merge.sbatch", merge}, {"submit_slurm.sh", submit},
	}
	for _, f := range files {
		if err := os.WriteFile(filepath.Join(p.dir, f.name), []byte(f.text), 0o755); err != nil {
			return err
		}
	}
	return nil
}
