package genedrop

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"strconv"

	"fgauge/vcfscan"
)

// header returns the VCF header text (truth: of the true genotypes).
func (r *Result) header(truth bool) []byte {
	cfg := &r.Config
	b := []byte("##fileformat=VCFv4.3\n")
	b = fmt.Appendf(b, "##simulation=<tool=fgauge_simulate,seed=%d,site_spacing_bp=%s,ancestral_haplotypes=%d,ancestral_segment_cm=%s,genotype_error=%s,missing_rate=%s,depth=%s>\n",
		cfg.Seed, ftoa(cfg.SiteSpacing), cfg.AncestralHaplotypes, ftoa(cfg.AncestralSegmentCM),
		ftoa(cfg.GenotypeError), ftoa(cfg.MissingRate), ftoa(cfg.Depth))
	for _, c := range r.Chromosomes {
		b = fmt.Appendf(b, "##contig=<ID=%s,length=%d>\n", c.Name, c.LengthBP)
	}
	b = append(b, "##INFO=<ID=POOL_AF,Number=A,Type=Float,Description=\"ALT allele frequency in the simulated ancestral haplotype pool\">\n"...)
	b = append(b, "##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n"...)
	if truth {
		b = append(b, "##truth=<description=\"true genotypes, before read sampling and calling\">\n"...)
	} else if cfg.Depth > 0 {
		b = append(b, "##FORMAT=<ID=DP,Number=1,Type=Integer,Description=\"Simulated read depth\">\n"...)
		b = append(b, "##FORMAT=<ID=PL,Number=G,Type=Integer,Description=\"Phred-scaled genotype likelihoods\">\n"...)
	}
	b = append(b, "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT"...)
	for _, s := range r.Samples {
		b = append(b, '\t')
		b = append(b, s.ID...)
	}
	return append(b, '\n')
}

func ftoa(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

var gtText = [...]string{vcfscan.HomRef: "0/0", vcfscan.Heterozygous: "0/1", vcfscan.HomAlt: "1/1", vcfscan.Missing: "./."}

// appendRecord appends one VCF data line for s (truth: its true genotypes,
// GT only).
func (r *Result) appendRecord(b []byte, s *Site, truth bool) []byte {
	b = append(b, r.Chromosomes[s.Chrom].Name...)
	b = append(b, '\t')
	b = strconv.AppendInt(b, s.Pos, 10)
	b = append(b, "\t.\t"...)
	b = append(b, s.Ref, '\t', s.Alt)
	b = append(b, "\t.\tPASS\tPOOL_AF="...)
	b = strconv.AppendFloat(b, s.PoolFreq, 'g', 6, 64)
	depth := s.DP != nil && !truth
	calls := s.GT
	if truth {
		calls = s.True
	}
	if depth {
		b = append(b, "\tGT:DP:PL"...)
	} else {
		b = append(b, "\tGT"...)
	}
	for i, g := range calls {
		b = append(b, '\t')
		b = append(b, gtText[g]...)
		if depth {
			b = append(b, ':')
			b = strconv.AppendInt(b, int64(s.DP[i]), 10)
			b = append(b, ':')
			if s.DP[i] == 0 {
				b = append(b, '.')
				continue
			}
			for k := 0; k < 3; k++ {
				if k > 0 {
					b = append(b, ',')
				}
				b = strconv.AppendUint(b, uint64(s.PL[3*i+k]), 10)
			}
		}
	}
	return append(b, '\n')
}

// WriteVCF writes the simulated calls as plain VCF text.
func WriteVCF(w io.Writer, r *Result) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	if _, err := bw.Write(r.header(false)); err != nil {
		return err
	}
	var line []byte
	err := r.ForEachSite(func(s *Site) error {
		line = r.appendRecord(line[:0], s, false)
		_, err := bw.Write(line)
		return err
	})
	if err != nil {
		return err
	}
	return bw.Flush()
}

// WriteVCFBGZF writes the calls as BGZF-compressed VCF to path and a
// tabix index to path + ".tbi" (hts-specs, "The Tabix index file
// format"), both through vcfscan (BGZFWriter, TabixWriter). Output is
// byte-identical for the same Config.
func WriteVCFBGZF(path string, r *Result) error { return r.writeVCFBGZF(path, false) }

// WriteTruthVCFBGZF writes the true genotypes (GT only, before read
// sampling, calling, errors and missing calls) like WriteVCFBGZF: the
// truth against which estimators on low-depth calls or likelihoods are
// checked, by scanning both files.
func WriteTruthVCFBGZF(path string, r *Result) error { return r.writeVCFBGZF(path, true) }

func (r *Result) writeVCFBGZF(path string, truth bool) (err error) {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	bw := bufio.NewWriterSize(f, 1<<20)
	bg := vcfscan.NewBGZFWriter(bw, 6)
	defer bg.Close()
	bg.Write(r.header(truth))
	if err := bg.Flush(); err != nil {
		return err
	}
	idx := vcfscan.NewTabixWriter(vcfscan.TabixVCFColumns)
	var line []byte
	err = r.ForEachSite(func(s *Site) error {
		begin, err := bg.Offset()
		if err != nil {
			return err
		}
		line = r.appendRecord(line[:0], s, truth)
		if _, err := bg.Write(line); err != nil {
			return err
		}
		end, err := bg.Offset()
		if err != nil {
			return err
		}
		return idx.Add(r.Chromosomes[s.Chrom].Name, s.Pos-1, s.Pos, vcfscan.Chunk{Begin: begin, End: end})
	})
	if err != nil {
		return err
	}
	if err := bg.Close(); err != nil {
		return err
	}
	if err := bw.Flush(); err != nil {
		return err
	}
	tf, err := os.Create(path + ".tbi")
	if err != nil {
		return err
	}
	if _, err := idx.WriteTo(tf); err != nil {
		tf.Close()
		return err
	}
	return tf.Close()
}

// WriteSamplesTruth writes one line per sample: sample replicate design
// class f_pedigree f_realized autozygous_bp n_segments, followed with ages
// by the truth_samples.tsv columns of TruthColumns.
func WriteSamplesTruth(w io.Writer, r *Result) error {
	bw := bufio.NewWriter(w)
	head := []byte("sample\treplicate\tdesign\tclass\tf_pedigree\tf_realized\tautozygous_bp\tn_segments")
	if r.Ages != nil {
		head = appendAgeHeader(head)
	}
	bw.Write(append(head, '\n'))
	var b []byte
	for i, s := range r.Samples {
		b = append(b[:0], s.ID...)
		b = append(b, '\t')
		b = strconv.AppendInt(b, int64(s.Replicate), 10)
		b = append(b, '\t')
		b = append(b, s.Design...)
		b = append(b, '\t')
		b = append(b, s.Class...)
		b = append(b, '\t')
		b = strconv.AppendFloat(b, s.FPedigree, 'g', -1, 64)
		b = append(b, '\t')
		b = strconv.AppendFloat(b, s.FRealized, 'g', -1, 64)
		b = append(b, '\t')
		b = strconv.AppendInt(b, s.AutozygousBP, 10)
		b = append(b, '\t')
		b = strconv.AppendInt(b, int64(s.NSegments), 10)
		if r.Ages != nil {
			b = r.appendAgeColumns(b, i)
		}
		b = append(b, '\n')
		bw.Write(b)
	}
	return bw.Flush()
}

// WriteSegmentsTruth writes every autozygous segment: sample chrom start
// end length_bp start_cm end_cm n_sites (start and end 1-based inclusive).
// With ages it writes Result.AgedSegments instead, with the
// truth_segments.tsv columns of TruthColumns appended.
func WriteSegmentsTruth(w io.Writer, r *Result) error {
	if r.Ages != nil {
		return writeAgedSegments(w, r)
	}
	bw := bufio.NewWriter(w)
	bw.WriteString("sample\tchrom\tstart\tend\tlength_bp\tstart_cm\tend_cm\tn_sites\n")
	var b []byte
	for _, g := range r.Segments {
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
		b = append(b, '\n')
		bw.Write(b)
	}
	return bw.Flush()
}

// WritePedigree writes the simulated pedigree as id sire dam sex, with 0
// for unknown parents and sex as M, F or 0; pedigree.Read reads it back.
func WritePedigree(w io.Writer, r *Result) error {
	bw := bufio.NewWriter(w)
	bw.WriteString("id\tsire\tdam\tsex\n")
	p := r.Pedigree
	for i := 0; i < p.Len(); i++ {
		sire, dam := "0", "0"
		if s := p.Sire(i); s >= 0 {
			sire = p.ID(s)
		}
		if d := p.Dam(i); d >= 0 {
			dam = p.ID(d)
		}
		sex := "0"
		switch p.SexOf(i) {
		case 1:
			sex = "M"
		case 2:
			sex = "F"
		}
		fmt.Fprintf(bw, "%s\t%s\t%s\t%s\n", p.ID(i), sire, dam, sex)
	}
	return bw.Flush()
}
