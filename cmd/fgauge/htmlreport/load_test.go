package htmlreport

import (
	"bytes"
	"fmt"
	"math"
	"strings"
	"testing"
)

// sitesText builds n rows of a sites table (simulated values).
func sitesText(n int) []byte {
	var b bytes.Buffer
	b.WriteString("chrom\tpos\tref\talt\tn_hom_ref\tn_het\tn_hom_alt\tn_missing\tn_haploid\talt_freq\tmaf\tcall_rate\thet_observed\thet_expected\tf_site\thwe_p\thwe_midp\thwe_p_fewer_het\thwe_p_more_het\n")
	for i := 0; i < n; i++ {
		f := "NA"
		if i%7 != 0 {
			f = fmt.Sprint(float64(i%200-100) / 100)
		}
		fmt.Fprintf(&b, "%d\t%d\tA\tG\t10\t5\t3\t0\t0\t0.3\t0.3\t1\t0.27\t0.42\t%s\t0.5\t0.4\t0.3\t0.8\n", 1+i/5000, 1000+i*37, f)
	}
	return b.Bytes()
}

func TestScanSites(t *testing.T) {
	s, err := scanSites("sites.tsv", bytes.NewReader(sitesText(12000)))
	if err != nil {
		t.Fatal(err)
	}
	if s.rows != 12000 || len(s.contigs) != 3 || s.contigs[2].nSites != 2000 || s.contigs[0].maxPos != 1000+4999*37 {
		t.Errorf("rows %d contigs %+v", s.rows, s.contigs)
	}
	if s.fSiteNA != 12000/7+1 || s.fSiteN+s.fSiteNA != 12000 {
		t.Errorf("f_site counted %d, NA %d", s.fSiteN, s.fSiteNA)
	}
	// f = -1 falls in the first bin, 0.99 in the last
	if s.fSite[0] == 0 || s.fSite[fSiteBins-1] == 0 {
		t.Errorf("edge bins empty: %v", s.fSite)
	}
	for _, tc := range []struct {
		x    float64
		want int
	}{{-1, 0}, {-2, 0}, {0, fSiteBins / 2}, {1, fSiteBins - 1}, {0.999, fSiteBins - 1}, {math.Inf(1), fSiteBins - 1}} {
		if got := fSiteBin(tc.x); got != tc.want {
			t.Errorf("fSiteBin(%v) = %d, want %d", tc.x, got, tc.want)
		}
	}
	_, err = scanSites("sites.tsv", strings.NewReader("chrom\tpos\n1\tx\n"))
	if err == nil || !strings.Contains(err.Error(), "sites.tsv:2:") {
		t.Errorf("bad pos: got %v", err)
	}
}

func BenchmarkScanSites(b *testing.B) {
	data := sitesText(100000)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := scanSites("bench", bytes.NewReader(data)); err != nil {
			b.Fatal(err)
		}
	}
}

// FuzzScanSites: any input either fails with an error or gives counts
// that add up.
func FuzzScanSites(f *testing.F) {
	f.Add(sitesText(3))
	f.Add([]byte("chrom\tpos\tf_site\n1\t5\tNA\n1\t7\t0.5\r\n2\t1\t-3\n"))
	f.Add([]byte(""))
	f.Fuzz(func(t *testing.T, in []byte) {
		s, err := scanSites("fuzz", bytes.NewReader(in))
		if err != nil {
			return
		}
		var n int64
		for _, c := range s.contigs {
			n += c.nSites
		}
		var h int64
		for _, c := range s.fSite {
			h += c
		}
		if n != s.rows || h != s.fSiteN {
			t.Errorf("rows %d, per contig %d; f_site %d, binned %d", s.rows, n, s.fSiteN, h)
		}
	})
}

// FuzzParseTable: any input either fails or gives rows as wide as the header.
func FuzzParseTable(f *testing.F) {
	f.Add([]byte("sample\tf_roh\nHILL-001\t0.1\n"))
	f.Add([]byte("sample\n\n"))
	f.Fuzz(func(t *testing.T, in []byte) {
		tb, err := parseTable("fuzz", bytes.NewReader(in), "sample")
		if err != nil {
			return
		}
		for _, r := range tb.rows {
			if len(r) != len(tb.header) {
				t.Fatalf("row of %d fields, header %d", len(r), len(tb.header))
			}
		}
	})
}
