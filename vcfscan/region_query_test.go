package vcfscan

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
	"time"
)

// TestRegionQueries checks that a region query through Open returns
// exactly the kept rows of a full scan restricted to the regions, for VCF
// with .tbi and BCF with .csi.
func TestRegionQueries(t *testing.T) {
	for _, path := range []string{
		"../testdata/chr22_1000g.vcf.gz", "../testdata/bcf/chr22_1000g.bcf",
		"../testdata/cohort189.vcf.gz", "../testdata/bcf/cohort189.bcf",
		"../testdata/bcf/test-haploidX.bcf",
	} {
		opt := Options{IncludeFiltered: true, WantPL: true, InfoKey: "AF"}
		full := bcfScanFile(t, path, opt)
		var raw []rawRecord
		for _, r := range full.recs {
			raw = append(raw, rawRecord{r.Chrom, r.Pos})
		}
		for name, regs := range regionCases(raw) {
			t.Run(filepath.Base(path)+"/"+name, func(t *testing.T) {
				o := opt
				o.Regions = regs
				got := bcfScanFile(t, path, o)
				set := newRegionSet(regs)
				want := bcfScanResult{samples: full.samples}
				for _, r := range full.recs {
					if set.overlaps(r.Chrom, r.Pos, r.Pos+int64(len(r.Ref))-1) {
						want.recs = append(want.recs, r)
					}
				}
				if name != "before_all" && name != "gap" && len(want.recs) == 0 {
					t.Fatal("no kept row in the region; the case proves nothing")
				}
				bcfCompareScans(t, name, want, got, false)
			})
		}
	}
}

// TestRegionOpenErrors checks that Open passes index problems on.
func TestRegionOpenErrors(t *testing.T) {
	dir := t.TempDir()
	raw, err := os.ReadFile("../testdata/bcf/cohort189.bcf")
	if err != nil {
		t.Fatal(err)
	}
	bcf := filepath.Join(dir, "c.bcf")
	if err := os.WriteFile(bcf, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	reg := []Region{{Chrom: "1", Start: 10000, End: 11000}}
	if _, err := Open(bcf, Options{Regions: reg}); !errors.Is(err, ErrNoIndex) {
		t.Errorf("Open with missing index: %v, want ErrNoIndex", err)
	}
	idx, err := os.ReadFile("../testdata/bcf/cohort189.bcf.csi")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(bcf+".csi", idx, 0o644); err != nil {
		t.Fatal(err)
	}
	old := time.Now().Add(-time.Hour)
	if err := os.Chtimes(bcf+".csi", old, old); err != nil {
		t.Fatal(err)
	}
	if _, err := Open(bcf, Options{Regions: reg}); !errors.Is(err, ErrStaleIndex) {
		t.Errorf("Open with stale index: %v, want ErrStaleIndex", err)
	}
}

// TestRegionQueryVCFWithCSI reads a VCF through a CSI index (names in the
// auxiliary field, written by python3-pysam 0.20.0) instead of its tabix
// index, and checks the rows against a full scan.
func TestRegionQueryVCFWithCSI(t *testing.T) {
	dir := t.TempDir()
	vcf := filepath.Join(dir, "chr22_1000g.vcf.gz")
	for _, c := range [][2]string{{"../testdata/chr22_1000g.vcf.gz", vcf}, {"../testdata/bcf/chr22_1000g.vcf.gz.csi", vcf + ".csi"}} {
		b, err := os.ReadFile(c[0])
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(c[1], b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	regs := []Region{{"22", 50500000, 50600000}, {"22", 50900000, 0}}
	full := bcfScanFile(t, vcf, Options{})
	got := bcfScanFile(t, vcf, Options{Regions: regs})
	want := bcfScanResult{samples: full.samples}
	set := newRegionSet(regs)
	for _, r := range full.recs {
		if set.overlaps(r.Chrom, r.Pos, r.Pos) {
			want.recs = append(want.recs, r)
		}
	}
	if len(want.recs) < 100 {
		t.Fatalf("only %d rows in the regions", len(want.recs))
	}
	bcfCompareScans(t, "vcf+csi", want, got, false)
}
