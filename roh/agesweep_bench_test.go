package roh

import (
	"testing"
)

// BenchmarkAgeSweeps measures detection with and without the age classes
// on the same invented cohort (denseCohort: 200 samples, two chromosomes
// of 20,000 sites, planted homozygous stretches), in the same run: CPU
// nanoseconds per genotype of the whole Collector (storing calls, the
// two-state sweeps and, with the age classes, their EM sweeps), for the
// windowed fit with and without the whole-chromosome share, and the
// whole-chromosome fit.
func BenchmarkAgeSweeps(b *testing.B) {
	const ns, nsites = 200, 20000
	contigs, sites := denseCohort(7, ns, nsites)
	bs, fs := batches(sites, ns, 1000)
	for _, tc := range []struct {
		name string
		set  func(*Config)
	}{
		{"off", func(c *Config) { c.Ages = nil }},
		{"windows", func(c *Config) { c.AgeWholeShare = 0 }},
		{"default", func(c *Config) {}},
		{"whole", func(c *Config) { c.AgeWholeChromosome = true }},
	} {
		b.Run(tc.name, func(b *testing.B) {
			cfg := DefaultConfig()
			cfg.Threads = 2
			tc.set(cfg)
			c0 := cpuSeconds()
			for i := 0; i < b.N; i++ {
				col, err := NewCollector(cfg, sampleNames(ns), contigs)
				if err != nil {
					b.Fatal(err)
				}
				for k, bt := range bs {
					if err := col.AddBatch(bt, fs[k]); err != nil {
						b.Fatal(err)
					}
				}
				if _, err := col.Finish(); err != nil {
					b.Fatal(err)
				}
			}
			cpu := cpuSeconds() - c0
			b.ReportMetric(cpu*1e9/(float64(b.N)*ns*2*nsites), "cpu-ns/genotype")
		})
	}
}
