package vcfscan

import (
	"errors"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// TestEdgeFiles reads every file in testdata/edge (from python3-cyvcf2
// 0.30.18 tests/ and r-bioc-variantannotation 1.44.1, see
// testdata/SOURCES.md). Each is either read with the decision written
// beside it or rejected with an error naming the file and line. Record and
// kept counts were cross-checked with awk on the same files (records with
// single-base A/C/G/T REF and ALT, FILTER PASS or ".", GT in FORMAT).
func TestEdgeFiles(t *testing.T) {
	type want struct {
		samples int
		read    int64
		kept    int
		skipped [NumSkipReasons]int64
		haploid int64
		warns   string // sorted warning kinds
		err     error  // rejected with this sentinel
		errMsg  string // and this text (including file:line)
	}
	cases := map[string]want{
		// 8-column header (no FORMAT, no samples): records are read, none has genotypes.
		"FORMAT_header_no_SAMPLEs.vcf": {read: 5, skipped: [NumSkipReasons]int64{SkipIndel: 3, SkipNoGT: 2}, warns: "contig_not_in_header"},
		// gVCF: <NON_REF> bands are symbolic, "T,<NON_REF>" is multi-allelic; no site kept.
		"banded_gvcf.vcf": {samples: 1, read: 5, skipped: [NumSkipReasons]int64{SkipMultiallelic: 2, SkipSymbolic: 3}},
		// Breakend and single-breakend ALTs are symbolic.
		"buffer_realloc.vcf": {samples: 2, read: 2, skipped: [NumSkipReasons]int64{SkipSymbolic: 2}},
		// BGZF with GT last in FORMAT: 988 SNPs kept (awk agrees).
		"chr7-sub.vcf.gz": {samples: 2, read: 3791, kept: 988, skipped: [NumSkipReasons]int64{SkipIndel: 239, SkipSymbolic: 2564}, warns: "contig_not_in_header"},
		// Half-missing calls (0/., ./1) are missing.
		"decomposed.vcf": {samples: 5, read: 1, kept: 1},
		// Zero bytes: rejected.
		"empty.vcf": {err: ErrMalformed, errMsg: "empty.vcf: malformed input: input is empty"},
		// No GT in FORMAT: every record skipped as no_genotypes.
		"expand.vcf": {samples: 1, read: 20, skipped: [NumSkipReasons]int64{SkipMultiallelic: 2, SkipNoGT: 18}, warns: "contig_not_in_header"},
		// GT:DS:GL with 85 samples; ALT "." is no alternate allele.
		"gl_chr1.vcf": {samples: 85, read: 9, kept: 3, skipped: [NumSkipReasons]int64{SkipSymbolic: 6}, warns: "contig_not_in_header"},
		// "0/." and "0|." are missing.
		"issue_198.vcf":                   {samples: 1, read: 2, kept: 2},
		"missing-FORMAT-metadata-elt.vcf": {samples: 1, read: 3, skipped: [NumSkipReasons]int64{SkipNoGT: 3}, warns: "contig_not_in_header"},
		// No samples, a trailing tab leaves an empty 9th column: accepted.
		"multiple_INFO_fields.vcf": {read: 2, skipped: [NumSkipReasons]int64{SkipMultiallelic: 1, SkipNoGT: 1}},
		"no-seq-len.vcf":           {samples: 5, read: 1, kept: 1, warns: "contig_without_length"},
		"no-seq-names.vcf":         {samples: 5, read: 1, kept: 1, warns: "contig_not_in_header"},
		"no_FORMAT_column.vcf":     {read: 5, skipped: [NumSkipReasons]int64{SkipNoGT: 5}, warns: "contig_not_in_header"},
		// Empty FORMAT and empty sample columns: right column count, no GT.
		"no_GENO_row.vcf":    {samples: 2, read: 3, skipped: [NumSkipReasons]int64{SkipNoGT: 3}, warns: "contig_not_in_header"},
		"no_INFO_header.vcf": {samples: 1, read: 5, kept: 5, warns: "contig_not_in_header"},
		"structural.vcf":     {samples: 1, read: 7, skipped: [NumSkipReasons]int64{SkipIndel: 1, SkipSymbolic: 6}, warns: "contig_not_in_header"},
		// "0/1/." is triploid (missing, warned) and "0" haploid.
		"test-format-string.vcf": {samples: 2, read: 4, kept: 2, skipped: [NumSkipReasons]int64{SkipMultiallelic: 2}, haploid: 1, warns: "contig_not_in_header,haploid_calls,polyploid_calls_as_missing"},
		// "." alone is missing, "1" haploid alt, "./1" missing.
		"test-genotypes.vcf": {samples: 2, read: 5, kept: 5, haploid: 4, warns: "haploid_calls"},
		// Male X calls are haploid: 1557 haploid calls at kept sites (awk agrees).
		"test-haploidX.vcf": {samples: 3, read: 777, kept: 689, skipped: [NumSkipReasons]int64{SkipIndel: 77, SkipFiltered: 11}, haploid: 1557, warns: "haploid_calls"},
		"test-hemi.vcf":     {samples: 27, read: 2, kept: 1, skipped: [NumSkipReasons]int64{SkipFiltered: 1}, warns: "contig_without_length"},
		// The #CHROM line ends with a tab, which makes an empty sample name: rejected.
		"test-invalid-header.vcf":                 {err: ErrMalformed, errMsg: "test-invalid-header.vcf:2: #CHROM: malformed input: sample column 2 has an empty name"},
		"test-multiallelic-homozygous-alt.vcf.gz": {samples: 1, read: 1, skipped: [NumSkipReasons]int64{SkipMultiallelic: 1}},
		"test.mnp.vcf":                            {samples: 1, read: 6, skipped: [NumSkipReasons]int64{SkipMultiallelic: 3, SkipIndel: 3}},
	}
	files, err := filepath.Glob(filepath.Join("..", "testdata", "edge", "*"))
	if err != nil || len(files) != len(cases) {
		t.Fatalf("%d edge files, %d decisions (%v)", len(files), len(cases), err)
	}
	for _, f := range files {
		name := filepath.Base(f)
		w, ok := cases[name]
		if !ok {
			t.Errorf("no decision for %s", name)
			continue
		}
		t.Run(name, func(t *testing.T) {
			res, err := readFile(t, f, Options{WantPL: true, Threads: 2})
			if w.err != nil {
				if !errors.Is(err, w.err) || !strings.Contains(err.Error(), w.errMsg) {
					t.Fatalf("error %v, want %v with %q", err, w.err, w.errMsg)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			var kinds []string
			for _, x := range res.warns {
				kinds = append(kinds, x.Kind)
			}
			sort.Strings(kinds)
			if len(res.samples) != w.samples || res.read != w.read || len(res.sites) != w.kept ||
				res.skipped != w.skipped || res.haploid != w.haploid || strings.Join(kinds, ",") != w.warns {
				t.Errorf("samples %d read %d kept %d skipped %v haploid %d warns %v; want %d %d %d %v %d %q",
					len(res.samples), res.read, len(res.sites), res.skipped, res.haploid, kinds,
					w.samples, w.read, w.kept, w.skipped, w.haploid, w.warns)
			}
		})
	}
}
