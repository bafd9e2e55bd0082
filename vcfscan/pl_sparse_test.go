package vcfscan

import (
	"io"
	"slices"
	"strings"
	"testing"
)

// TestPLOnlyWhereCarried checks the layout of Batch.PL with WantPL: a
// batch whose records carry no PL/GL has an empty PL, and in a batch where
// some do, records without likelihoods get zeros. The expected phred
// values are those written in the input (common practice: PL is already
// phred-scaled).
func TestPLOnlyWhereCarried(t *testing.T) {
	const hdr = "##fileformat=VCFv4.2\n##contig=<ID=1,length=1000>\n" +
		"##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n" +
		"##FORMAT=<ID=PL,Number=G,Type=Integer,Description=\"Phred-scaled genotype likelihoods\">\n" +
		"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tcow_a\tcow_b\n"
	for _, tc := range []struct {
		name   string
		body   string
		hasPL  []bool
		wantPL []uint16 // nil: PL must be empty
	}{
		{"gt_only", "1\t10\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1\n1\t20\t.\tC\tT\t.\tPASS\t.\tGT\t1/1\t0/0\n",
			[]bool{false, false}, nil},
		{"mixed", "1\t10\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1\n" +
			"1\t20\t.\tC\tT\t.\tPASS\t.\tGT:PL\t1/1:40,20,0\t0/0:0,15,30\n" +
			"1\t30\t.\tG\tA\t.\tPASS\t.\tGT\t0/1\t0/0\n",
			[]bool{false, true, false},
			[]uint16{0, 0, 0, 0, 0, 0, 40, 20, 0, 0, 15, 30, 0, 0, 0, 0, 0, 0}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rd, err := NewReader(strings.NewReader(hdr+tc.body), "test.vcf", Options{WantPL: true, Threads: 1})
			if err != nil {
				t.Fatal(err)
			}
			defer rd.Close()
			var hasPL []bool
			var pl []uint16
			sawPL := false
			for {
				b, err := rd.Next()
				if err == io.EOF {
					break
				}
				if err != nil {
					t.Fatal(err)
				}
				hasPL = append(hasPL, b.HasPL...)
				if len(b.PL) > 0 {
					sawPL = true
					if len(b.PL) != 3*len(b.Records)*b.NSamples {
						t.Fatalf("PL holds %d values for %d records of %d samples", len(b.PL), len(b.Records), b.NSamples)
					}
					pl = append(pl, b.PL...)
				} else {
					pl = append(pl, make([]uint16, 3*len(b.Records)*b.NSamples)...)
				}
				rd.Release(b)
			}
			if !slices.Equal(hasPL, tc.hasPL) {
				t.Errorf("HasPL %v, want %v", hasPL, tc.hasPL)
			}
			if tc.wantPL == nil {
				if sawPL {
					t.Errorf("PL filled for records without likelihoods")
				}
				return
			}
			if !slices.Equal(pl, tc.wantPL) {
				t.Errorf("PL %v, want %v", pl, tc.wantPL)
			}
		})
	}
}
