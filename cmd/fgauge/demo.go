package main

import (
	"context"
	"runtime"

	"fgauge/cmd/fgauge/internal/demo"
)

const demoHelp = `The demo invents a small cooperative of four heritage-breed goat herds
(Hillside, Brookend, Fernlea, Stonegate; ids like HILL-017). One buck,
FERN-001, was used by artificial insemination in every herd; a few close-kin
matings happened (a full-sib mating at Brookend, a half-sib mating at
Hillside, a sire-daughter mating at Stonegate, a first-cousin mating at
Fernlea); the rest of the herd is mostly unrelated. Genomes are simulated
with a fixed seed at SNP-array density, written to DIR, and scanned with
every statistic, ROH and the pedigree comparison on. The youngest
generation's bucks and does are then paired for next season ('fgauge mate'
with at most 2 does per buck, planned on genomic coancestry) and the plan
is compared with a random allocation and with a plan made on the herd book
alone. Everything is invented: no real animals, farms or people.

Files in DIR: cohort.vcf.gz (+ .tbi), pedigree.tsv, herds.tsv (sample, herd),
truth_samples.tsv and truth_segments.tsv (what the simulation knows),
scan/ with the scan's tables and report.html, and mate/ with the mating
plan (pairs.tsv, allocation.tsv, run.json, mate.html).
`

// runDemo simulates the demo cohort, scans it and prints a summary.
func runDemo(ctx context.Context, env *runEnv, args []string) error {
	fs := newFlagSet(env.stderr, "demo", "demo [-o DIR]", demoHelp)
	dir := fs.String("o", "fgauge_demo", "output `DIR`ectory (created if needed)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 0 {
		return usagef("demo: unexpected argument %q", pos[0])
	}
	return demo.Run(ctx, demo.Config{Dir: *dir, Threads: runtime.NumCPU(), Version: version,
		CommandLine: env.argv, Stdout: env.stdout, Stderr: env.stderr})
}
