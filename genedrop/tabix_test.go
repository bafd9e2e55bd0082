package genedrop

import (
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

// The .tbi is checked by htslib through python3-pysam (Debian package,
// pysam 0.20): region fetches must return exactly the records a full scan
// finds in the same intervals, and the genotypes htslib decodes must match
// the simulation's. Skipped where pysam is not installed.
func TestTabixAgainstPysam(t *testing.T) {
	py, err := exec.LookPath("/usr/bin/python3")
	if err != nil {
		t.Skip("no /usr/bin/python3")
	}
	if exec.Command(py, "-c", "import pysam").Run() != nil {
		t.Skip("python3-pysam not installed")
	}
	cfg := smallConfig(11)
	cfg.SiteSpacing = 3000 // many records per 16 kb window and per BGZF block
	res, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "sim.vcf.gz")
	if err := WriteVCFBGZF(path, res); err != nil {
		t.Fatal(err)
	}
	script := `
import sys, random, pysam
path = sys.argv[1]
allr = [(r.chrom, r.pos) for r in pysam.VariantFile(path)]
v = pysam.VariantFile(path)
random.seed(5)
bad = 0
for k in range(400):
    c = random.choice(['1', '2'])
    a = random.randrange(0, 21000000)
    b = a + random.randrange(1, 400000)
    n = sum(1 for r in v.fetch(c, a, b))
    m = sum(1 for (cc, p) in allr if cc == c and a < p <= b)
    bad += n != m
hets = 0
for r in pysam.VariantFile(path):
    for smp in r.samples.values():
        gt = smp['GT']
        if None not in gt and gt[0] != gt[1]:
            hets += 1
print(len(allr), bad, hets)
`
	out, err := exec.Command(py, "-c", script, path).CombinedOutput()
	if err != nil {
		t.Fatalf("pysam: %v\n%s", err, out)
	}
	f := strings.Fields(string(out))
	if len(f) != 3 {
		t.Fatalf("pysam output %q", out)
	}
	n, _ := strconv.Atoi(f[0])
	if want := res.NumSites(0) + res.NumSites(1); n != want {
		t.Errorf("pysam read %d records, want %d", n, want)
	}
	if f[1] != "0" {
		t.Errorf("%s of 400 region fetches disagree with a full scan", f[1])
	}
	// Heterozygous calls as htslib decodes them equal ours.
	hets := 0
	res.ForEachSite(func(s *Site) error {
		for _, g := range s.GT {
			if g == vcfscan.Heterozygous {
				hets++
			}
		}
		return nil
	})
	if f[2] != strconv.Itoa(hets) {
		t.Errorf("pysam counts %s heterozygous calls, the simulation %d", f[2], hets)
	}
}
