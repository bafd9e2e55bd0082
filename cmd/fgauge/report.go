package main

import (
	"context"
	"errors"
	"fmt"
	"os"

	"fgauge/cmd/fgauge/htmlreport"
	"fgauge/vcfscan"
)

const reportHelp = `Writes OUTDIR/report.html, one self-contained page (no scripts, nothing
fetched from elsewhere) with the headline numbers, plots of the per-sample
estimators, runs of homozygosity, Hardy-Weinberg tests, populations and
genotyping quality, read from the files 'fgauge scan' wrote into OUTDIR.

--highlight FILE names samples, one per line (lines starting with '#' are
comments), to mark and paint in the report; with --per-sample only those
samples get pages.
--per-sample also writes OUTDIR/samples/<name>.html (printable) and
OUTDIR/samples/<name>.json for every sample, plus OUTDIR/samples/index.html.

The pages carry cautions: genomic F is an estimate that depends on marker
density, allele frequencies and genotyping quality, not a diagnosis; mating
and culling decisions follow the breeding programme's rules and local
regulations, and any reading of human consanguinity belongs to licensed
genetic counselling or medical practice.
`

// runReport writes the HTML report for a scan output folder.
func runReport(ctx context.Context, env *runEnv, args []string) error {
	fs := newFlagSet(env.stderr, "report", "report OUTDIR [--highlight FILE] [--per-sample]", reportHelp)
	highlight := fs.String("highlight", "", "`FILE` of sample names to paint and to give pages")
	perSample := fs.Bool("per-sample", false, "also write one page and one JSON file per sample under OUTDIR/samples/")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("report: expected one output folder, got %d arguments", len(pos))
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	opt := htmlreport.Options{PerSample: *perSample}
	if *highlight != "" {
		if opt.Highlight, err = readNameList(*highlight); err != nil {
			return err
		}
	}
	if err := htmlreport.Write(pos[0], opt); err != nil {
		if errors.Is(err, os.ErrNotExist) || errors.Is(err, htmlreport.ErrMalformed) {
			// a folder that is not a scan's output is bad input (exit 2)
			return usagef("%v", err)
		}
		return err
	}
	fmt.Fprintln(env.stderr, "fgauge: wrote", pos[0]+"/report.html")
	return nil
}

// readNameList reads one sample name per line; blank lines and lines
// starting with '#' are ignored (a '#' inside a name is kept).
func readNameList(path string) ([]string, error) {
	names, err := vcfscan.ReadNameList(path, true)
	if err != nil {
		return nil, usagef("report: --highlight: %v", err)
	}
	return names, nil
}
