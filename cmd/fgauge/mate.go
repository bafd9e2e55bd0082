package main

import (
	"context"
	"errors"
	"math"
	"runtime"
	"strconv"

	"fgauge/cmd/fgauge/internal/mate"
)

// runMate parses the options of `fgauge mate` and runs mate.Run.
func runMate(ctx context.Context, env *runEnv, args []string) error {
	fs := newFlagSet(env.stderr, "mate", "mate INPUT --sires FILE --dams FILE -o OUTDIR [options]", mate.Help)
	var c mate.Config
	fs.StringVar(&c.SiresFile, "sires", "", "`FILE` of candidate sire ids, one per line")
	fs.StringVar(&c.DamsFile, "dams", "", "`FILE` of candidate dam ids, one per line")
	fs.StringVar(&c.OutDir, "o", "", "output folder `OUTDIR`")
	fs.BoolVar(&c.Force, "force", false, "overwrite the results of an earlier run in OUTDIR")
	fs.IntVar(&c.SireLimit, "sire-limit", 0, "largest number of dams per sire (0: no limit)")
	fs.StringVar(&c.SireLimitsFile, "sire-limits", "", "`FILE` of lines 'sire limit' overriding --sire-limit for those sires")
	maxF := fs.String("max-progeny-f", "", "never use a pair whose progeny_f is above `X` (default: no ceiling)")
	fs.StringVar(&c.PedigreeFile, "pedigree", "", "pedigree `FILE` (id sire dam [sex]) for coancestry_pedigree")
	fs.StringVar(&c.PlanOn, "plan-on", mate.PlanGenomic, "what progeny_f is: genomic, pedigree, blend or segments")
	fs.Float64Var(&c.BlendWeight, "blend-weight", 0.5, "weight `W` of the genomic coancestry in --plan-on blend")
	fs.BoolVar(&c.Segments, "segments", false, "add coancestry_segments, the shared-segment coancestry (one pass over the sites per pair: for up to a few hundred thousand pairs)")
	fs.Float64Var(&c.SegmentMinMB, "segment-min-mb", 3, "shortest shared stretch `MB` counted by --segments")
	fs.StringVar(&c.FreqsFile, "freqs", "", "`FILE` of allele frequencies 'chrom pos ref alt alt_freq' (sites absent from it are left out)")
	fs.StringVar(&c.FreqsFromInfo, "freqs-from-info", "", "INFO `KEY` (e.g. AF) holding the alternate-allele frequency")
	fs.BoolVar(&c.IncludeFiltered, "include-filtered", false, "keep records whatever their FILTER (default keeps PASS and '.')")
	fs.IntVar(&c.Threads, "threads", runtime.NumCPU(), "worker threads")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("mate: want one INPUT file, got %d (run 'fgauge mate --help')", len(pos))
	}
	if c.SiresFile == "" || c.DamsFile == "" {
		return usagef("mate: --sires and --dams are required")
	}
	if c.Threads < 1 {
		return usagef("mate: --threads must be at least 1")
	}
	c.MaxProgenyF = math.NaN()
	if *maxF != "" {
		if c.MaxProgenyF, err = strconv.ParseFloat(*maxF, 64); err != nil || math.IsNaN(c.MaxProgenyF) {
			return usagef("mate: --max-progeny-f %q is not a number", *maxF)
		}
	}
	c.Input, c.Stdout, c.Stderr, c.CommandLine, c.Version = pos[0], env.stdout, env.stderr, env.argv, version
	_, err = mate.Run(ctx, c)
	if errors.Is(err, mate.ErrInput) {
		return &usageError{Msg: err.Error(), Err: err}
	}
	return err
}
