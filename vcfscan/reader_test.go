package vcfscan

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// siteCounts is one kept record with its genotype counts.
type siteCounts struct {
	chrom string
	pos   int64
	c     [4]int64 // hom_ref het hom_alt missing
}

// scanResult is everything a test compares after reading a whole input.
type scanResult struct {
	samples []string
	sites   []siteCounts
	persamp [][4]int64
	skipped [NumSkipReasons]int64
	read    int64
	masked  int64
	haploid int64
	gts     []Geno // all calls, record-major
	pls     []uint16
	lines   []int64
	format  Format
	warns   []Warning
}

func countIndex(g Geno) int {
	switch g {
	case HomRef:
		return 0
	case Heterozygous:
		return 1
	case HomAlt:
		return 2
	}
	return 3
}

func collect(t testing.TB, r *Reader) (*scanResult, error) {
	t.Helper()
	res := &scanResult{samples: r.Samples(), format: r.Format()}
	res.persamp = make([][4]int64, len(res.samples))
	var seq int64
	for {
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return res, err
		}
		if b.Seq != seq {
			t.Fatalf("batch Seq %d, want %d", b.Seq, seq)
		}
		seq++
		for i, rec := range b.Records {
			s := siteCounts{chrom: r.Header().Contigs[rec.ChromID].Name, pos: rec.Pos}
			for j, g := range b.Calls(i) {
				k := countIndex(g)
				if g == HaploidRef || g == HaploidAlt {
					res.haploid++
				}
				s.c[k]++
				res.persamp[j][k]++
			}
			res.sites = append(res.sites, s)
			res.lines = append(res.lines, rec.Line)
		}
		res.gts = append(res.gts, b.GT...)
		res.pls = append(res.pls, b.PL...)
		for k, n := range b.Skipped {
			res.skipped[k] += n
		}
		res.read += b.Read
		res.masked += b.Masked
		r.Release(b)
	}
	res.warns = r.Warnings()
	return res, nil
}

func readFile(t testing.TB, path string, opt Options) (*scanResult, error) {
	t.Helper()
	r, err := Open(path, opt)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	return collect(t, r)
}

// readTSV reads a tab-separated file with a header line.
func readTSV(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var rows [][]string
	sc := bufio.NewScanner(f)
	sc.Scan()
	for sc.Scan() {
		rows = append(rows, strings.Split(sc.Text(), "\t"))
	}
	return rows
}

func atoi(t *testing.T, s string) int64 {
	t.Helper()
	n, err := strconv.ParseInt(s, 10, 64)
	if err != nil {
		t.Fatal(err)
	}
	return n
}

// TestCountsMatchCyvcf2 compares per-site and per-sample genotype counts
// with the reference tables in testdata/expected, computed by python3-cyvcf2
// 0.30.18 with testdata/tools/site_sample_counts.py (site policy: one ALT,
// REF and ALT single ACGT bases, any FILTER; any missing allele => missing).
func TestCountsMatchCyvcf2(t *testing.T) {
	for _, name := range []string{"chr22_1000g", "cohort189"} {
		// WantPL sends every line through the general (field by field)
		// decoder instead of the one-pass fast path; both must agree.
		for _, v := range []struct {
			threads int
			general bool
		}{{1, false}, {3, false}, {2, true}} {
			threads := v.threads
			t.Run(fmt.Sprintf("%s/threads=%d/general=%v", name, threads, v.general), func(t *testing.T) {
				res, err := readFile(t, filepath.Join("..", "testdata", name+".vcf.gz"),
					Options{IncludeFiltered: true, Threads: threads, WantPL: v.general})
				if err != nil {
					t.Fatal(err)
				}
				if res.format != FormatVCFBGZF {
					t.Errorf("format %v, want BGZF VCF", res.format)
				}
				want := readTSV(t, filepath.Join("..", "testdata", "expected", name+".sites.tsv"))
				if len(res.sites) != len(want) {
					t.Fatalf("%d kept sites, cyvcf2 keeps %d", len(res.sites), len(want))
				}
				for i, w := range want {
					got := res.sites[i]
					if got.chrom != w[0] || got.pos != atoi(t, w[1]) {
						t.Fatalf("site %d is %s:%d, cyvcf2 has %s:%s", i, got.chrom, got.pos, w[0], w[1])
					}
					for k := 0; k < 4; k++ {
						if got.c[k] != atoi(t, w[2+k]) {
							t.Fatalf("%s:%d counts %v, cyvcf2 %v", got.chrom, got.pos, got.c, w[2:6])
						}
					}
				}
				ws := readTSV(t, filepath.Join("..", "testdata", "expected", name+".samples.tsv"))
				if len(ws) != len(res.samples) {
					t.Fatalf("%d samples, cyvcf2 has %d", len(res.samples), len(ws))
				}
				for j, w := range ws {
					if res.samples[j] != w[0] {
						t.Fatalf("sample %d is %q, cyvcf2 %q", j, res.samples[j], w[0])
					}
					for k := 0; k < 4; k++ {
						if res.persamp[j][k] != atoi(t, w[1+k]) {
							t.Fatalf("sample %s counts %v, cyvcf2 %v", w[0], res.persamp[j], w[1:])
						}
					}
				}
				var skipped int64
				for _, n := range res.skipped {
					skipped += n
				}
				if res.read != int64(len(res.sites))+skipped {
					t.Errorf("read %d != kept %d + skipped %d", res.read, len(res.sites), skipped)
				}
			})
		}
	}
}

// TestCallCodesMatchCyvcf2 compares every call code, haploid ones
// included, with testdata/expected/*.calls.tsv, written by python3-cyvcf2
// 0.30.18 with testdata/tools/call_codes.py from the edge files (any
// FILTER; any missing allele or more than two alleles => missing).
func TestCallCodesMatchCyvcf2(t *testing.T) {
	for _, name := range []string{"test-haploidX", "test-genotypes"} {
		want := readTSV(t, filepath.Join("..", "testdata", "expected", name+".calls.tsv"))
		for _, general := range []bool{false, true} {
			res, err := readFile(t, filepath.Join("..", "testdata", "edge", name+".vcf"),
				Options{IncludeFiltered: true, WantPL: general, Threads: 2})
			if err != nil {
				t.Fatal(err)
			}
			if len(res.sites) != len(want) {
				t.Fatalf("%s: %d sites, cyvcf2 %d", name, len(res.sites), len(want))
			}
			ns := len(res.samples)
			for i, w := range want {
				codes := make([]string, ns)
				for j, g := range res.gts[i*ns : (i+1)*ns] {
					codes[j] = strconv.Itoa(int(g))
				}
				if got := strings.Join(codes, ","); res.sites[i].chrom != w[0] || strconv.FormatInt(res.sites[i].pos, 10) != w[1] || got != w[2] {
					t.Fatalf("%s row %d (general=%v): %s:%d %s, cyvcf2 %s:%s %s", name, i, general, res.sites[i].chrom, res.sites[i].pos, got, w[0], w[1], w[2])
				}
			}
		}
	}
}

// TestLikelihoodsMatchHtslib compares the PL triples the text path makes
// from GL (round(-10*GL), common practice) and PL with those computed from
// htslib's reading of the BCF twins (python3-pysam 0.20.0, via
// testdata/tools/make_bcf_twins.py; testdata/bcf/*.htslib_calls.tsv).
func TestLikelihoodsMatchHtslib(t *testing.T) {
	for _, c := range []struct{ vcf, tsv string }{
		{"edge/gl_chr1.vcf", "bcf/gl_chr1.htslib_calls.tsv"},
		{"cohort189.vcf.gz", "bcf/cohort189.htslib_calls.tsv"},
		{"edge/test-haploidX.vcf", "bcf/test-haploidX.htslib_calls.tsv"},
	} {
		res, err := readFile(t, filepath.Join("..", "testdata", c.vcf), Options{IncludeFiltered: true, WantPL: true})
		if err != nil {
			t.Fatal(err)
		}
		want := readTSV(t, filepath.Join("..", "testdata", c.tsv))
		if len(want) != len(res.sites) {
			t.Fatalf("%s: %d sites, htslib %d", c.vcf, len(res.sites), len(want))
		}
		ns := len(res.samples)
		for i, w := range want {
			codes := make([]string, ns)
			for j, g := range res.gts[i*ns : (i+1)*ns] {
				codes[j] = strconv.Itoa(int(g))
			}
			if got := strings.Join(codes, ","); got != w[2] {
				t.Errorf("%s %s:%s: calls %s, htslib %s", c.vcf, w[0], w[1], got, w[2])
			}
			if w[3] == "." {
				continue
			}
			pl := make([]string, 3*ns)
			for j, v := range res.pls[3*i*ns : 3*(i+1)*ns] {
				pl[j] = strconv.Itoa(int(v))
			}
			if got := strings.Join(pl, ","); got != w[3] {
				t.Errorf("%s %s:%s: likelihoods differ:\n ours   %s\n htslib %s", c.vcf, w[0], w[1], got, w[3])
			}
		}
	}
}
