package roh

import (
	"bufio"
	"compress/gzip"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

// readTinyVCF is a test-only reader for the small real fixture: biallelic
// SNPs, GT as the first FORMAT field, INFO AF as the frequency. It keeps
// the test independent of the vcfscan reader.
func readTinyVCF(t *testing.T, path string) ([]string, []site) {
	t.Helper()
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	zr, err := gzip.NewReader(fh)
	if err != nil {
		t.Fatal(err)
	}
	sc := bufio.NewScanner(zr)
	sc.Buffer(nil, 1<<24)
	var samples []string
	var sites []site
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "##") {
			continue
		}
		f := strings.Split(line, "\t")
		if strings.HasPrefix(line, "#") {
			samples = f[9:]
			continue
		}
		if len(f[3]) != 1 || len(f[4]) != 1 {
			continue
		}
		pos, _ := strconv.ParseInt(f[1], 10, 64)
		p := math.NaN()
		for _, kv := range strings.Split(f[7], ";") {
			if v, ok := strings.CutPrefix(kv, "AF="); ok {
				p, _ = strconv.ParseFloat(v, 64)
			}
		}
		gt := make([]vcfscan.Geno, len(samples))
		for i, c := range f[9:] {
			g := c
			if k := strings.IndexByte(c, ':'); k >= 0 {
				g = c[:k]
			}
			if len(g) != 3 || g[0] == '.' || g[2] == '.' {
				gt[i] = vcfscan.Missing
				continue
			}
			gt[i] = vcfscan.Geno(g[0]-'0') + vcfscan.Geno(g[2]-'0')
		}
		sites = append(sites, site{0, pos, p, gt})
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return samples, sites
}

// Real data: the 1000 Genomes chromosome 22 extract (testdata/SOURCES.md),
// 5 samples over 0.7 Mb at sequence density, with the 1000 Genomes AF as
// panel frequency. Nothing here is inbred, so we check plausibility only:
// the HMM finds short runs (linkage-disequilibrium haplotypes shared by
// descent from distant ancestors are common at this density), none is
// longer than the typed span, none crosses a gap over --roh-max-gap-kb
// (set to 20 kb so that the test has gaps to respect), and no sample's
// runs cover most of the region.
func TestChr22Plausible(t *testing.T) {
	samples, sites := readTinyVCF(t, "../testdata/chr22_1000g.vcf.gz")
	if len(samples) != 5 || len(sites) < 9900 { // 10,376 records, 9,969 biallelic SNPs
		t.Fatalf("fixture: %d samples, %d sites", len(samples), len(sites))
	}
	contigs := []vcfscan.Contig{{Name: "22"}}
	nGaps := 0
	for i := 1; i < len(sites); i++ {
		if sites[i].pos-sites[i-1].pos > 20_000 {
			nGaps++
		}
	}
	if nGaps == 0 {
		t.Fatal("fixture has no gap over 20 kb; the gap check would be empty")
	}
	for _, method := range []string{MethodHMM, MethodRules} {
		cfg := DefaultConfig()
		cfg.Method = method
		cfg.MaxGapKB = 20
		cfg.Rules.MinKB = 20 // the region is 0.7 Mb long
		cfg.Rules.MaxHet = 1
		r := collect(t, cfg, samples, contigs, sites)
		cr := r.Chroms[0]
		span := cr.LastPos - cr.FirstPos + 1
		if len(cr.Runs) == 0 {
			t.Errorf("%s: no runs at all", method)
		}
		covered := make([]int64, len(samples))
		for _, run := range cr.Runs {
			if run.LengthBP() > span {
				t.Errorf("%s: run %+v longer than the span %d", method, run, span)
			}
			covered[run.Sample] += run.LengthBP()
			if method == MethodHMM && !(run.Quality > 0 && run.Quality <= 1+1e-12) {
				t.Errorf("%s: quality %g out of (0,1]", method, run.Quality)
			}
		}
		for s, c := range covered {
			if c > span/2 {
				t.Errorf("%s: sample %s has %d bp of runs in %d bp", method, samples[s], c, span)
			}
		}
		checkRuns(t, r, sites, contigs, 20_000)
		t.Logf("%s: %d runs, per-sample bp %v of %d", method, len(cr.Runs), covered, span)
	}
}
