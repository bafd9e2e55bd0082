package roh

import (
	"math/rand/v2"
	"testing"
)

// ageBenchData is nSamples x nSites of genotype codes on one chromosome
// (one site per 5 kb at 1 cM/Mb, uniform frequencies in [0.05, 0.95],
// Hardy-Weinberg calls with one planted homozygous stretch of 300 sites
// per 2,000 per sample), the same shape as benchBatches.
func ageBenchData(nSamples, nSites int) (pos []int64, cm, freq []float64, codes [][]uint8) {
	rng := rand.New(rand.NewPCG(1, 1))
	pos = make([]int64, nSites)
	cm = make([]float64, nSites)
	freq = make([]float64, nSites)
	for i := range pos {
		pos[i] = int64(i+1) * 5000
		cm[i] = float64(pos[i]) / 1e6
		freq[i] = 0.05 + 0.9*rng.Float64()
	}
	codes = make([][]uint8, nSamples)
	for s := range codes {
		c := make([]uint8, nSites)
		for i := range c {
			g := uint8(hwe(rng, freq[i]))
			if (i+s*37)%2000 < 300 {
				g = uint8(2 * rng.IntN(2))
			}
			c[i] = g
		}
		codes[s] = c
	}
	return
}

// BenchmarkAgesFit measures the age model with the default 8+1 classes at
// 1,000 samples on a 5,000-site chromosome: building the shared tables
// once, then per sample the emission lookup and the EM fit (default at
// most 20 rounds). It reports CPU ns per genotype in total and per
// forward-backward round, and the mean rounds per sample.
func BenchmarkAgesFit(b *testing.B) {
	const ns, nsites = 1000, 5000
	pos, cm, freq, codes := ageBenchData(ns, nsites)
	cfg := DefaultAgeConfig()
	if err := cfg.Validate(); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	var cpu float64
	rounds := 0
	for it := 0; it < b.N; it++ {
		c0 := cpuSeconds()
		tab := NewAgeTables(cfg, pos, cm, freq, nil)
		var w AgeWorker
		for s := 0; s < ns; s++ {
			w.LoadCodes(tab, codes[s])
			f := w.Fit(tab, cfg)
			rounds += f.Rounds
		}
		cpu += cpuSeconds() - c0
	}
	g := float64(b.N) * ns * nsites
	b.ReportMetric(cpu*1e9/g, "cpu-ns/genotype")
	b.ReportMetric(cpu*1e9/(float64(nsites)*float64(rounds)), "cpu-ns/genotype-round")
	b.ReportMetric(float64(rounds)/float64(b.N*ns), "rounds/sample")
}

// BenchmarkAgesPass measures one forward-backward pass (fixed mixing, no
// EM) of the 8+1-class model at 1,000 samples: the floor of any design
// that decodes every site once.
func BenchmarkAgesPass(b *testing.B) {
	const ns, nsites = 1000, 5000
	pos, cm, freq, codes := ageBenchData(ns, nsites)
	cfg := DefaultAgeConfig()
	if err := cfg.Validate(); err != nil {
		b.Fatal(err)
	}
	rho := cfg.StartMixing()
	tab := NewAgeTables(cfg, pos, cm, freq, nil)
	b.ResetTimer()
	var cpu float64
	for it := 0; it < b.N; it++ {
		c0 := cpuSeconds()
		var w AgeWorker
		for s := 0; s < ns; s++ {
			w.LoadCodes(tab, codes[s])
			w.Posteriors(tab, rho)
		}
		cpu += cpuSeconds() - c0
	}
	b.ReportMetric(cpu*1e9/(float64(b.N)*ns*nsites), "cpu-ns/genotype")
}
