// Package mate runs `fgauge mate`: it reads the candidate sires and dams,
// computes the coancestry of every sire x dam pair (genomic, from the
// input's genotypes; pedigree, with a pedigree file), chooses the mating
// plan that minimises the mean expected progeny F within the sires' limits
// and an optional ceiling, and writes OUTDIR/pairs.tsv, allocation.tsv,
// run.json and mate.html (see Run).
//
// The work is done by package mating; this package handles files, ids,
// errors with file and line, the output folder and the page. The cautions
// (a plan is advice; merit, health, welfare and the programme's rules also
// decide; local regulations come first) are printed in the page, run.json
// and `fgauge mate --help` (Help).
package mate
