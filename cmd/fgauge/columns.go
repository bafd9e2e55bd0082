package main

import (
	"context"
	"fmt"
	"text/tabwriter"

	"fgauge/cmd/fgauge/internal/mate"
	"fgauge/cmd/fgauge/internal/outdir"
)

const columnsHelp = `Prints one line per output column: the file, the column name and what it
means, with the citation of each published estimator and, for the coancestry
measures of 'fgauge mate', their base population. --file limits the list to
one file (e.g. samples.tsv, pairs.tsv).
`

// runColumns prints one line per output column.
func runColumns(ctx context.Context, env *runEnv, args []string) error {
	fs := newFlagSet(env.stderr, "columns", "columns [--file NAME]", columnsHelp)
	only := fs.String("file", "", "only the columns of this output file")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 0 {
		return usagef("columns: takes no arguments")
	}
	tw := tabwriter.NewWriter(env.stdout, 0, 4, 2, ' ', 0)
	n := 0
	all := outdir.Columns()
	for _, d := range mate.ColumnDocs() {
		all = append(all, outdir.Column{File: d.File, Name: d.Column, Doc: d.Meaning})
	}
	for _, d := range all {
		if *only != "" && d.File != *only {
			continue
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\n", d.File, d.Name, d.Doc)
		n++
	}
	if n == 0 {
		return usagef("columns: no output file named %q", *only)
	}
	return tw.Flush()
}
