package main

import (
	"context"
	"fmt"
	"text/tabwriter"

	"fgauge/roh"
	"fgauge/stats"
)

// columnDoc explains one output column.
type columnDoc struct{ file, column, meaning string }

// allColumnDocs gathers the column explanations of every package, in the
// order the files and columns are written.
func allColumnDocs() []columnDoc {
	var docs []columnDoc
	for _, d := range stats.ColumnDocs() {
		docs = append(docs, columnDoc{d.File, d.Column, d.Meaning})
	}
	for _, d := range roh.ColumnDocs() {
		docs = append(docs, columnDoc{d.File, d.Column, d.Meaning})
	}
	docs = append(docs, columnDoc{"samples.tsv", "f_pedigree",
		"pedigree inbreeding coefficient (Meuwissen & Luo 1992, Genet Sel Evol 24:305) from --pedigree; NA when the sample is not in the pedigree"})
	return docs
}

const columnsHelp = `Prints one line per output column: the file, the column name and what it
means, with the citation of each published estimator. --file limits the list
to one file (e.g. samples.tsv).
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
	for _, d := range allColumnDocs() {
		if *only != "" && d.file != *only {
			continue
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\n", d.file, d.column, d.meaning)
		n++
	}
	if n == 0 {
		return usagef("columns: no output file named %q", *only)
	}
	return tw.Flush()
}
