package main

import (
	"context"
	"fmt"
	"os"
	"strings"

	"fgauge/cmd/fgauge/internal/plan"
	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/internal/numfmt"
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
in the source) times a safety factor of 4, at least 15 minutes; memory
from the per-site data of ROH detection (about 1.25 bytes per site and
sample) up to the scan's --memory-budget, plus a base and 4 kB per sample.
`

func runPlan(ctx context.Context, env *runEnv, args []string) error {
	var scanArgs []string
	for i, a := range args {
		if a == "--" {
			scanArgs, args = append([]string(nil), args[i+1:]...), args[:i]
			break
		}
	}
	fs := newFlagSet(env.stderr, "plan", "plan INPUT.vcf.gz|INPUT.bcf -o PLANDIR [--shards N | --shard-mb M] [-- SCAN OPTIONS]", planHelp)
	cfg := plan.Config{ScanArgs: scanArgs}
	fs.StringVar(&cfg.Out, "o", "", "plan folder (created if absent)")
	fs.StringVar(&cfg.Out, "out", "", "same as -o")
	fs.IntVar(&cfg.Shards, "shards", 0, "aim for about this many shards of equal work")
	fs.Float64Var(&cfg.ShardMB, "shard-mb", 0, "aim for shards of about this many MB of compressed input (default 64 when --shards is not given)")
	fs.IntVar(&cfg.Threads, "threads", 2, "threads (and Slurm CPUs) per shard")
	fs.IntVar(&cfg.Jobs, "jobs", 0, "shards run at once by run_local.sh (0: cores / --threads, at least 1)")
	fs.StringVar(&cfg.Merged, "merged", "", "folder for the merged outputs (default PLANDIR/merged)")
	fs.StringVar(&cfg.Fgauge, "fgauge", "", "fgauge binary the scripts call (default: this one)")
	fs.StringVar(&cfg.Partition, "partition", "", "Slurm partition for the jobs (default: the cluster's default)")
	fs.BoolVar(&cfg.Force, "force", false, "overwrite an existing plan in PLANDIR")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("plan: expected one input file, got %d", len(pos))
	}
	cfg.Input = pos[0]
	// the shards' memory budget, for the memory estimates
	cfg.MemoryBudget = scanrun.DefaultMemoryBudget
	for i, a := range scanArgs {
		name, val, hasVal := strings.Cut(strings.TrimLeft(a, "-"), "=")
		if name != "memory-budget" || !strings.HasPrefix(a, "-") {
			continue
		}
		if !hasVal && i+1 < len(scanArgs) {
			val = scanArgs[i+1]
		}
		if n, err := numfmt.ParseSize(val); err == nil {
			cfg.MemoryBudget = n
		}
	}
	if cfg.Fgauge == "" {
		if cfg.Fgauge, err = os.Executable(); err != nil {
			return fmt.Errorf("plan: cannot find this program's path (give --fgauge): %w", err)
		}
	}
	res, err := plan.Make(cfg)
	if err != nil {
		return err
	}
	fmt.Fprintf(env.stderr, "fgauge: %d shards of about %.1f MB compressed input (%d samples); plan in %s\n",
		res.Shards, float64(res.TargetBytes)/1e6, res.Samples, cfg.Out)
	return nil
}
