package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"runtime"
	"time"

	"fgauge/cmd/fgauge/htmlreport"
	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/cmd/fgauge/internal/shard"
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
here (their raw data travel in a pieces file beside each state,
STATE.roh_pieces, read window by window within --memory-budget). Shards
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
	fs := newFlagSet(env.stderr, "merge", "merge -o OUTDIR STATE... | merge --check STATE...", mergeHelp+"\n"+memoryHelp)
	var out string
	var force, check, report bool
	threads := runtime.NumCPU()
	fs.StringVar(&out, "o", "", "output folder (created if absent)")
	fs.StringVar(&out, "out", "", "same as -o")
	fs.BoolVar(&force, "force", false, "overwrite results already in OUTDIR")
	fs.BoolVar(&check, "check", false, "only verify the states and their site tables")
	fs.IntVar(&threads, "threads", threads, "detection workers for chromosomes split across shards")
	fs.BoolVar(&report, "report", false, "also write OUTDIR/report.html")
	mem := addMemoryFlags(fs)
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
		return shard.Check(env.stdout, paths)
	}
	start := time.Now()
	_, err = shard.Merge(ctx, shard.MergeConfig{States: paths, Out: out, Force: force, Threads: threads,
		MemoryBudget: int64(mem.budget), TempDir: mem.tempDir, DefaultBudget: scanrun.DefaultMemoryBudget,
		LimitHeap: true,
		Version:   version, CommandLine: env.argv, Stderr: env.stderr,
		AfterCommit: func(res *shard.MergeResult) error {
			fmt.Fprintf(env.stderr, "fgauge: merged %d shard states: %d records, %d sites kept, %d samples, %s; results in %s\n",
				res.States, res.Read, res.Kept, res.Samples, time.Since(start).Round(time.Millisecond), out)
			if !report {
				return nil
			}
			if err := htmlreport.Write(out, htmlreport.Options{}); err != nil {
				return fmt.Errorf("merge finished, but the report failed: %w", err)
			}
			return nil
		}})
	if err != nil {
		var ue *usageError
		if errors.As(err, &ue) || ctx.Err() != nil {
			return err
		}
		if errors.Is(err, shard.ErrCorrupt) || errors.Is(err, shard.ErrMismatch) || errors.Is(err, os.ErrNotExist) {
			return badinput.Wrap(err)
		}
		return err
	}
	return nil
}
