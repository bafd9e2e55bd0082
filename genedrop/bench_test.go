package genedrop

import (
	"path/filepath"
	"testing"
)

func benchConfig() Config {
	herd, _ := ParseDesign("closed_herd:6:50:3")
	return Config{
		Seed:          1,
		Chromosomes:   []Chromosome{{"1", 100e6, 100}, {"2", 80e6, 80}},
		SiteSpacing:   5000,
		Designs:       []Design{herd},
		GenotypeError: 0.001,
		MissingRate:   0.01,
	}
}

// BenchmarkForEachSite: genotypes of 350 animals at 36,000 sites, read off
// the founder mosaics (the hot loop behind every writer).
func BenchmarkForEachSite(b *testing.B) {
	res, err := Run(benchConfig())
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		calls := 0
		res.ForEachSite(func(s *Site) error { calls += len(s.GT); return nil })
		b.ReportMetric(float64(calls)*float64(b.N)/b.Elapsed().Seconds(), "calls/s")
	}
}

// BenchmarkWriteVCFBGZF: the same data compressed and indexed.
func BenchmarkWriteVCFBGZF(b *testing.B) {
	res, err := Run(benchConfig())
	if err != nil {
		b.Fatal(err)
	}
	dir := b.TempDir()
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := WriteVCFBGZF(filepath.Join(dir, "b.vcf.gz"), res); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkGeneDrop: pedigree, meioses and truth without sites.
func BenchmarkGeneDrop(b *testing.B) {
	cfg := benchConfig()
	cfg.NoSites = true
	cfg.Replicates = 20
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := Run(cfg); err != nil {
			b.Fatal(err)
		}
	}
}

func FuzzParseDesignAndChromosomes(f *testing.F) {
	f.Add("closed_herd:3:10:2", "1:1e6:1,2:5e5")
	f.Add("selfing:4", "x:100")
	f.Fuzz(func(t *testing.T, design, chroms string) {
		if d, err := ParseDesign(design); err == nil {
			if d.Generations < 1 || d.HerdSize < 1 || d.Sires < 1 {
				t.Fatalf("accepted %q as %+v", design, d)
			}
			if back, err := ParseDesign(d.String()); err != nil || back != d {
				t.Fatalf("%q -> %q does not round-trip: %v", design, d.String(), err)
			}
		}
		if cs, err := ParseChromosomes(chroms); err == nil {
			for _, c := range cs {
				if c.Name == "" || c.LengthBP < 1 || !(c.LengthCM > 0) {
					t.Fatalf("accepted %q as %+v", chroms, c)
				}
			}
		}
	})
}

// BenchmarkGeneDropAges: the same gene drop with ages recorded and
// ancestral epochs (lineage tracing of every autozygous stretch).
func BenchmarkGeneDropAges(b *testing.B) {
	cfg := benchConfig()
	cfg.NoSites = true
	cfg.Replicates = 20
	cfg.AncestralEpochs = []Epoch{{16, 20, 0.3}, {64, 10, 0.3}, {256, 5, 0.3}}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := Run(cfg); err != nil {
			b.Fatal(err)
		}
	}
}
