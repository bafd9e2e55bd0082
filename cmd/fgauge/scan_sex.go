package main

import (
	"flag"
	"strings"

	"fgauge/cmd/fgauge/internal/scanrun"
)

// sexFlags are the scan options of the sex chromosomes.
type sexFlags struct {
	sexFile string
	par     string
}

// sexHelp is appended to the scan help.
func sexHelp() string {
	return `Sex chromosomes:
  Contigs X/chrX, Y/chrY and MT/M/chrM (23, 24, 26 with --species human) are
  sex-linked or mitochondrial. Sites inside the pseudo-autosomal regions (PARs)
  are autosomal. --par @FILE lists PARs (a region file) or CHROM:START-END,...;
  with --species human and no --par, GRCh37 or GRCh38 is recognised from the X
  length in the header and its PAR1/PAR2 are used (run.json says which, and why).
  Non-PAR X, Y and MT sites stay out of every per-sample autosomal statistic.
  Non-PAR X: males are hemizygous whatever the coding (0, 1, 0/0, 1/1); a male
  heterozygous call is a genotyping error, set to missing and counted. hwe_p and
  its variants become the exact X-chromosomal test (Graffelman & Weir 2016,
  Heredity 116:558) over samples of given sex (--sex, else the pedigree's sex
  column), else inferred sex; samples of unknown sex are left out and counted.
  Y and MT: calls counted as haploid, no HWE test.
` + indent(scanrun.SexThresholdsText(), "  ") + `
  The flags sex_mismatch and sex_fits_neither are data-quality signals (a sample
  mix-up, contamination); they are not a statement about anyone's sex or health.
  Chromosomal findings need confirmation by a licensed laboratory, and any
  clinical reading belongs to licensed practitioners under local regulations.
`
}

func indent(s, pre string) string {
	return pre + strings.ReplaceAll(s, "\n", "\n"+pre)
}

// addSexFlags registers the sex-chromosome options on fs.
func addSexFlags(fs *flag.FlagSet) *sexFlags {
	f := &sexFlags{}
	fs.StringVar(&f.sexFile, "sex", "", "`FILE` of lines 'sample sex' (header optional; male/female, M/F, 1/2; unknown: 0, NA, ., unknown): given sexes for the X tests and the sex check; a name not in the input, a duplicate or an unreadable value is an error naming the line")
	fs.StringVar(&f.par, "par", "", "pseudo-autosomal regions: @FILE (a region file) or CHROM:START-END,...; default: none, or with --species human the GRCh37/GRCh38 PARs recognised from the X length")
	return f
}

// settings reads the sex file and the PAR list.
func (f *sexFlags) settings(species string) (scanrun.SexSettings, error) {
	return scanrun.ReadSexSettings(f.sexFile, f.par, species)
}
