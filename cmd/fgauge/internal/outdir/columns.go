package outdir

import (
	"fgauge/roh"
	"fgauge/stats"
)

// Column explains one output column: the file, the column's name and what
// it means (with the citation of a published estimator).
type Column struct{ File, Name, Doc string }

// PedigreeColumn is the samples.tsv column added with --pedigree.
var PedigreeColumn = Column{"samples.tsv", "f_pedigree",
	"pedigree inbreeding coefficient (Meuwissen & Luo 1992, Genet Sel Evol 24:305) from --pedigree; NA when the sample is not in the pedigree"}

// Columns lists every column a scan or merge may write, in the order of
// the files and of the columns in them. Each is declared once, by the
// package that writes it (stats, roh, and PedigreeColumn here); `fgauge
// columns` and the report read this list. The f_roh_gt_* columns are
// listed for the default length classes.
func Columns() []Column {
	var out []Column
	for _, d := range stats.ColumnDocs() {
		out = append(out, Column{d.File, d.Column, d.Meaning})
	}
	for _, d := range roh.ColumnDocs() {
		out = append(out, Column{d.File, d.Column, d.Meaning})
	}
	return append(out, PedigreeColumn)
}

// ColumnDoc returns the explanation of column name in file, "" when there
// is none. It knows the f_roh_gt_* column of any length class.
func ColumnDoc(file, name string) string {
	for _, c := range Columns() {
		if c.File == file && c.Name == name {
			return c.Doc
		}
	}
	if mb, ok := roh.ColumnClass(name); ok && file == "samples.tsv" {
		return roh.ClassColumnDoc(mb).Meaning
	}
	return ""
}
