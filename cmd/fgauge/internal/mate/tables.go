package mate

import (
	"bufio"
	"math"
	"strconv"

	"fgauge/cmd/fgauge/internal/outdir"
)

// ColumnDoc explains one output column in one line.
type ColumnDoc struct {
	File, Column, Meaning string
}

// ColumnDocs lists every column `fgauge mate` writes, in file order, with
// the base population of each measure (for `fgauge columns`).
func ColumnDocs() []ColumnDoc {
	const p, a = "pairs.tsv", "allocation.tsv"
	return []ColumnDoc{
		{p, "sire", "sire id (--sires order; rows are sire-major)"},
		{p, "dam", "dam id (--dams order)"},
		{p, colGenomic, "genomic coancestry: VanRaden (2008, J Dairy Sci 91:4414) method-1 G/2 with missing calls mean-imputed; base population: the one whose allele frequencies were used (all samples of the input by default), whose average is 0, so values can be negative"},
		{p, colPedigree, "pedigree coancestry (kinship) by Meuwissen & Luo (1992, Genet Sel Evol 24:305); base population: the pedigree's founders, unrelated and not inbred; 0 for an animal not in the pedigree; NA without --pedigree"},
		{p, colSegments, segmentsDoc},
		{p, colProgenyF, "expected inbreeding of a progeny of the pair, the value the plan minimises: coancestry_genomic (--plan-on genomic), coancestry_pedigree (pedigree) w*genomic + (1-w)*pedigree (blend, w = --blend-weight) or coancestry_segments (segments)"},
		{p, "allowed", "1 when progeny_f is at most --max-progeny-f (or no ceiling was given), else 0: the pair is never used"},
		{p, "chosen", "1 when the plan uses the pair, else 0"},
		{a, "dam", "dam id, in --dams order; every dam exactly once"},
		{a, "sire", "the sire the plan gives the dam"},
		{a, colProgenyF, "progeny_f of the pair (as in pairs.tsv)"},
		{a, colGenomic, "coancestry_genomic of the pair"},
		{a, colPedigree, "coancestry_pedigree of the pair; NA without --pedigree"},
		{a, colSegments, "coancestry_segments of the pair; NA without --segments"},
	}
}

const (
	colGenomic  = "coancestry_genomic"
	colPedigree = "coancestry_pedigree"
	colProgenyF = "progeny_f"
	colSegments = "coancestry_segments"
)

// segmentsDoc explains coancestry_segments (method in package mating,
// SegmentOptions).
const segmentsDoc = "shared-segment coancestry, probability scale 0..1: chance that a random allele of each parent lies in a stretch both share identical by descent (no opposite homozygote over at least --segment-min-mb Mb, default 3, and 50 sites), from windows of shared one copy (1/4), both copies or one parent autozygous (1/2), both autozygous (1); base population: ancestors recent enough to leave such stretches (roughly the last 15 generations at 3 Mb), older relatedness counts 0; NA without --segments"

func header(file string) string {
	var b []byte
	for _, d := range ColumnDocs() {
		if d.File != file {
			continue
		}
		if len(b) > 0 {
			b = append(b, '\t')
		}
		b = append(b, d.Column...)
	}
	return string(append(b, '\n'))
}

// appendNum appends a tab and x in shortest round-trip form, or NA.
func appendNum(b []byte, x float64) []byte {
	b = append(b, '\t')
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return append(b, "NA"...)
	}
	return strconv.AppendFloat(b, x, 'g', -1, 64)
}

func writePairs(sd *outdir.Dir, res *Result, ceiling float64) error {
	f, err := sd.Create("pairs.tsv")
	if err != nil {
		return err
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString(header("pairs.tsv"))
	nD := len(res.Dams)
	chosen := make([]int, nD) // sire of each dam
	copy(chosen, res.Allocation.SireOf)
	var b []byte
	for s, sire := range res.Sires {
		for d, dam := range res.Dams {
			i := s*nD + d
			b = append(b[:0], sire...)
			b = append(b, '\t')
			b = append(b, dam...)
			b = appendNum(b, res.Genomic.V[i])
			if res.Pedigree != nil {
				b = appendNum(b, res.Pedigree.V[i])
			} else {
				b = append(b, "\tNA"...)
			}
			if res.Segments != nil {
				b = appendNum(b, res.Segments.V[i])
			} else {
				b = append(b, "\tNA"...)
			}
			pf := res.ProgenyF.V[i]
			b = appendNum(b, pf)
			if pf > ceiling { // false for a NaN ceiling
				b = append(b, "\t0"...)
			} else {
				b = append(b, "\t1"...)
			}
			if chosen[d] == s {
				b = append(b, "\t1\n"...)
			} else {
				b = append(b, "\t0\n"...)
			}
			if _, err := w.Write(b); err != nil {
				f.Close()
				return err
			}
		}
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func writeAllocation(sd *outdir.Dir, res *Result) error {
	f, err := sd.Create("allocation.tsv")
	if err != nil {
		return err
	}
	w := bufio.NewWriterSize(f, 1<<16)
	w.WriteString(header("allocation.tsv"))
	var b []byte
	for d, dam := range res.Dams {
		s := res.Allocation.SireOf[d]
		b = append(b[:0], dam...)
		b = append(b, '\t')
		b = append(b, res.Sires[s]...)
		b = appendNum(b, res.ProgenyF.At(s, d))
		b = appendNum(b, res.Genomic.At(s, d))
		if res.Pedigree != nil {
			b = appendNum(b, res.Pedigree.At(s, d))
		} else {
			b = append(b, "\tNA"...)
		}
		if res.Segments != nil {
			b = appendNum(b, res.Segments.At(s, d))
		} else {
			b = append(b, "\tNA"...)
		}
		b = append(b, '\n')
		w.Write(b)
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
