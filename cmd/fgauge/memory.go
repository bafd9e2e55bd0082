package main

import (
	"flag"

	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/internal/numfmt"
)

// memoryFlags are the memory options of scan and merge.
type memoryFlags struct {
	budget  sizeFlag
	tempDir string
}

func addMemoryFlags(fs *flag.FlagSet) *memoryFlags {
	f := &memoryFlags{budget: sizeFlag(scanrun.DefaultMemoryBudget)}
	fs.Var(&f.budget, "memory-budget",
		"`SIZE` of memory for the per-site data of ROH detection: bytes, or with K, M, G (powers of 1024; e.g. 512M, 1G); data beyond it go to --temp-dir (see 'Memory' below)")
	fs.StringVar(&f.tempDir, "temp-dir", "",
		"`DIR` for the data beyond --memory-budget (default: $TMPDIR or /tmp); files are unlinked as soon as they are opened")
	return f
}

// sizeFlag is a byte count given as a number with an optional K, M, G or
// T suffix (powers of 1024, optionally followed by B or iB).
type sizeFlag int64

func (s *sizeFlag) String() string { return numfmt.FormatSize(int64(*s)) }

func (s *sizeFlag) Set(v string) error {
	n, err := numfmt.ParseSize(v)
	if err != nil {
		return err
	}
	*s = sizeFlag(n)
	return nil
}

// memoryHelp is appended to the help of scan and merge.
const memoryHelp = `Memory:
  Peak memory is bounded whatever the chromosome length and cohort size:
    - per-site data of runs-of-homozygosity detection: about N*3/4 + 52
      bytes per site for N samples (plus 3*N per site with PL/GL
      likelihoods), held in memory up to --memory-budget (default 96M);
      beyond it written once to an unlinked file in --temp-dir and read
      back twice (and twice per round of the age-class fit). Results are
      identical whatever the budget. A shard scan
      shares the budget between whole chromosomes and pieces of split ones
      (the pieces go to STATE.roh_pieces beside the state); merge joins
      split chromosomes within its own budget. Not yet bounded:
      --roh-method rules and --fit hold one whole chromosome (N/4 + 50 to
      84 bytes per site per thread) whatever the budget (100 samples x 4
      million sites: 388 MB with rules, 801 MB with --fit).
    - per-sample data: about 1.6 kB per sample at 2 threads with the age
      classes, 0.8 kB without; samples.tsv is written 4,096 rows at a time.
    - reading and statistics buffers (chunks and blocks in flight,
      batches): about 100 MB at 2 threads, whatever the file.
  The Go heap is also limited softly to the budget + 160 MiB + 16 MiB per
  thread + 4 KiB per sample, at most the budget + 640 MiB (GOMEMLIMIT,
  when set, wins). Measured peak RSS at 2 threads with the default
  budget: 226 MB for 100 samples x 4 million sites on one chromosome,
  312 MB for 10,000 samples x 200,000 sites, 760 MB for 200,000
  samples x 1,000 sites and 995 MB for 500,000 samples x 300 sites. Larger
  cohorts need more: windows hold at least 128 sites and per-sample data
  grow with N (about 2 GB at a million samples).
  Temporary disk needed: at most N*3/4 + 52 bytes per site of the largest
  chromosome. A full, missing or unwritable --temp-dir stops the run with
  exit status 2 and no outputs; removing the folder during the run does no
  harm (its files are already unlinked). run.json's "memory" section
  records the budget, the most held, the bytes spilled, the heap limit and
  the peak resident size.
`
