package genedrop

import (
	"bufio"
	"io"
	"strconv"
)

// TruthColumn documents one column of a truth table that depends on an
// option: File, Name and what it means.
type TruthColumn struct {
	File, Name, Doc string
}

// TruthColumns lists the truth columns added by Config.Ages (or
// AncestralEpochs) and the pairs table, each declared once here; the
// writers below print them in this order.
func TruthColumns() []TruthColumn {
	out := []TruthColumn{
		{"truth_segments.tsv", "source", "pedigree: both copies from the same founder copy; ancestral: different founder copies holding the same old haplotype of an ancestral epoch"},
		{"truth_segments.tsv", "ancestor", "id of the common ancestor (pedigree stretches; NA for ancestral ones)"},
		{"truth_segments.tsv", "ancestral_epoch", "generations of the ancestral epoch (ancestral stretches; NA for pedigree ones)"},
		{"truth_segments.tsv", "meioses_sire_side", "meioses from the common ancestor's copy to the copy from the sire (ancestral: epoch generations + pedigree meioses below the founder)"},
		{"truth_segments.tsv", "meioses_dam_side", "meioses from the common ancestor's copy to the copy from the dam"},
		{"truth_segments.tsv", "ancestor_generations", "age of the stretch: (meioses_sire_side + meioses_dam_side) / 2, the ancestor's generation depth for a symmetric loop (selfing 1, full sibs 2, first cousins 3); length ~ exponential with mean 100/(2 x age) cM"},
	}
	for _, g := range AgeCuts {
		out = append(out, TruthColumn{"truth_samples.tsv", withinName(g),
			"share of the genome (bp) autozygous from common ancestors at most " + strconv.Itoa(g) + " generations back (ancestor_generations <= " + strconv.Itoa(g) + "), pedigree and ancestral"})
	}
	return append(out,
		TruthColumn{"truth_samples.tsv", "true_f_ancestral", "share of the genome (bp) autozygous through the ancestral epochs (different founder copies, same old haplotype)"},
		TruthColumn{"truth_samples.tsv", "true_f_total", "f_realized + true_f_ancestral: all autozygosity, any age (base: the oldest epoch)"},
		TruthColumn{"truth_pairs.tsv", "sire", "first animal of the pair"},
		TruthColumn{"truth_pairs.tsv", "dam", "second animal of the pair"},
		TruthColumn{"truth_pairs.tsv", "coancestry_pedigree", "expected coancestry from the simulated pedigree (Meuwissen & Luo 1992), base: the founders"},
		TruthColumn{"truth_pairs.tsv", "coancestry_realized", "realized coancestry: mean over the four pairings of the two animals' copies of the genome share (bp) where both descend from the same founder copy; base: the founders; the expected f_realized of their offspring"},
		TruthColumn{"truth_pairs.tsv", "coancestry_total", "coancestry_realized plus the share where the two copies hold the same old haplotype of an ancestral epoch (equal to coancestry_realized without epochs)"},
	)
}

func withinName(g int) string { return "true_f_within_" + strconv.Itoa(g) + "g" }

// appendAgeHeader appends the truth_samples.tsv header columns of the ages.
func appendAgeHeader(b []byte) []byte {
	for _, c := range TruthColumns() {
		if c.File == "truth_samples.tsv" {
			b = append(b, '\t')
			b = append(b, c.Name...)
		}
	}
	return b
}

// appendAgeColumns appends sample i's age columns (see TruthColumns).
func (r *Result) appendAgeColumns(b []byte, i int) []byte {
	a := r.Ages[i]
	for _, x := range a.Within {
		b = append(b, '\t')
		b = strconv.AppendFloat(b, x, 'g', -1, 64)
	}
	b = append(b, '\t')
	b = strconv.AppendFloat(b, a.Ancestral, 'g', -1, 64)
	b = append(b, '\t')
	return strconv.AppendFloat(b, a.Total, 'g', -1, 64)
}

// writeAgedSegments writes truth_segments.tsv when ages are recorded: one
// line per AgedSegment, the columns of WriteSegmentsTruth followed by
// those of TruthColumns for the file.
func writeAgedSegments(w io.Writer, r *Result) error {
	bw := bufio.NewWriter(w)
	h := []byte("sample\tchrom\tstart\tend\tlength_bp\tstart_cm\tend_cm\tn_sites")
	for _, c := range TruthColumns() {
		if c.File == "truth_segments.tsv" {
			h = append(h, '\t')
			h = append(h, c.Name...)
		}
	}
	bw.Write(append(h, '\n'))
	var b []byte
	for _, a := range r.AgedSegments {
		g := a.Segment
		b = append(b[:0], r.Samples[g.Sample].ID...)
		b = append(b, '\t')
		b = append(b, r.Chromosomes[g.Chrom].Name...)
		b = append(b, '\t')
		b = strconv.AppendInt(b, g.Start, 10)
		b = append(b, '\t')
		b = strconv.AppendInt(b, g.End, 10)
		b = append(b, '\t')
		b = strconv.AppendInt(b, g.LengthBP(), 10)
		b = append(b, '\t')
		b = strconv.AppendFloat(b, g.StartCM, 'g', -1, 64)
		b = append(b, '\t')
		b = strconv.AppendFloat(b, g.EndCM, 'g', -1, 64)
		b = append(b, '\t')
		if r.sites == nil {
			b = append(b, "NA"...)
		} else {
			b = strconv.AppendInt(b, int64(g.NSites), 10)
		}
		b = append(b, '\t')
		b = append(b, a.Source.String()...)
		b = append(b, '\t')
		if a.Ancestor >= 0 {
			b = append(b, r.Samples[a.Ancestor].ID...)
		} else {
			b = append(b, "NA"...)
		}
		b = append(b, '\t')
		if a.Epoch >= 0 {
			b = strconv.AppendInt(b, int64(r.Config.AncestralEpochs[a.Epoch].Generations), 10)
		} else {
			b = append(b, "NA"...)
		}
		b = append(b, '\t')
		b = strconv.AppendInt(b, int64(a.Meioses[0]), 10)
		b = append(b, '\t')
		b = strconv.AppendInt(b, int64(a.Meioses[1]), 10)
		b = append(b, '\t')
		b = strconv.AppendFloat(b, a.Generations(), 'g', -1, 64)
		b = append(b, '\n')
		bw.Write(b)
	}
	return bw.Flush()
}

// WritePairsTruth writes truth_pairs.tsv: one line per pair with the
// columns of TruthColumns for that file.
func WritePairsTruth(w io.Writer, r *Result, pairs []PairTruth) error {
	bw := bufio.NewWriter(w)
	var b []byte
	for _, c := range TruthColumns() {
		if c.File == "truth_pairs.tsv" {
			if len(b) > 0 {
				b = append(b, '\t')
			}
			b = append(b, c.Name...)
		}
	}
	bw.Write(append(b, '\n'))
	for _, p := range pairs {
		b = append(b[:0], r.Samples[p.A].ID...)
		b = append(b, '\t')
		b = append(b, r.Samples[p.B].ID...)
		for _, x := range []float64{p.Pedigree, p.Realized, p.Total} {
			b = append(b, '\t')
			b = strconv.AppendFloat(b, x, 'g', -1, 64)
		}
		b = append(b, '\n')
		bw.Write(b)
	}
	return bw.Flush()
}
