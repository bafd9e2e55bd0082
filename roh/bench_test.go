package roh

import (
	"math/rand/v2"
	"runtime"
	"syscall"
	"testing"

	"fgauge/vcfscan"
)

// benchBatches builds nSites sites for nSamples samples on one chromosome,
// 1 site per 5 kb, in batches of 1,000 records, with HWE calls plus a
// planted stretch per sample.
func benchBatches(nSamples, nSites int, withPL bool) ([]*vcfscan.Batch, [][]float64, []vcfscan.Contig) {
	rng := rand.New(rand.NewPCG(1, 1))
	contigs := []vcfscan.Contig{{Name: "1", Length: int64(nSites) * 5000}}
	var bs []*vcfscan.Batch
	var fs [][]float64
	const size = 1000
	for i := 0; i < nSites; i += size {
		n := min(size, nSites-i)
		b := &vcfscan.Batch{Seq: int64(len(bs)), NSamples: nSamples, GT: make([]vcfscan.Geno, n*nSamples)}
		f := make([]float64, n)
		if withPL {
			b.PL = make([]uint16, 3*n*nSamples)
			b.HasPL = make([]bool, n)
		}
		for k := 0; k < n; k++ {
			pos := int64(i+k+1) * 5000
			b.Records = append(b.Records, vcfscan.Record{ChromID: 0, Pos: pos})
			p := 0.05 + 0.9*rng.Float64()
			f[k] = p
			for s := 0; s < nSamples; s++ {
				g := hwe(rng, p)
				if (i+k+s*37)%2000 < 300 {
					g = vcfscan.Geno(2 * rng.IntN(2))
				}
				b.GT[k*nSamples+s] = g
				if withPL {
					pl := b.PL[3*(k*nSamples+s):]
					pl[0], pl[1], pl[2] = 30, 30, 30
					pl[g] = 0
					b.HasPL[k] = true
				}
			}
		}
		bs = append(bs, b)
		fs = append(fs, f)
	}
	return bs, fs, contigs
}

// BenchmarkCollect measures storing one chromosome's calls (1,000 samples,
// 20,000 sites) and reports the heap held per sample-site before
// detection; the bound in chromData's comment is 0.25 bytes plus 28/N
// bytes of per-site data (0.278 at N = 1,000).
func BenchmarkCollect(b *testing.B) {
	const ns, nsites = 1000, 20000
	bs, fs, contigs := benchBatches(ns, nsites, false)
	samples := sampleNames(ns)
	b.ResetTimer()
	var perCall, cpu float64
	for it := 0; it < b.N; it++ {
		b.StopTimer()
		var m0, m1 runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&m0)
		b.StartTimer()
		c0 := cpuSeconds()
		cfg := DefaultConfig()
		cfg.Method = MethodRules // no HMM sweep while storing
		c, _ := NewCollector(cfg, samples, contigs)
		for i, bt := range bs {
			if err := c.AddBatch(bt, fs[i]); err != nil {
				b.Fatal(err)
			}
		}
		cpu += cpuSeconds() - c0
		b.StopTimer()
		runtime.GC()
		runtime.ReadMemStats(&m1)
		perCall = float64(m1.HeapAlloc-m0.HeapAlloc) / float64(ns*nsites)
		c.Close() // skip detection
		b.StartTimer()
	}
	b.ReportMetric(perCall, "heap_bytes/sample-site")
	b.ReportMetric(cpu*1e9/float64(b.N)/float64(ns*nsites), "cpu_ns/call")
}

// BenchmarkDetect measures collection plus detection per call, for each
// detector, one worker, 1,000 samples and 5,000 sites.
func BenchmarkDetect(b *testing.B) {
	const ns, nsites = 1000, 5000
	for _, tc := range []struct {
		name   string
		method string
		fit    bool
		pl     bool
	}{
		{"hmm", MethodHMM, false, false},
		{"hmm_pl", MethodHMM, false, true},
		{"hmm_fit", MethodHMM, true, false},
		{"rules", MethodRules, false, false},
	} {
		b.Run(tc.name, func(b *testing.B) {
			bs, fs, contigs := benchBatches(ns, nsites, tc.pl)
			samples := sampleNames(ns)
			cfg := DefaultConfig()
			cfg.Method = tc.method
			cfg.Fit = tc.fit
			b.ResetTimer()
			c0 := cpuSeconds()
			for it := 0; it < b.N; it++ {
				c, _ := NewCollector(cfg, samples, contigs)
				for i, bt := range bs {
					if err := c.AddBatch(bt, fs[i]); err != nil {
						b.Fatal(err)
					}
				}
				if _, err := c.Finish(); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/float64(ns*nsites), "cpu_ns/call")
		})
	}
}

// cpuSeconds is the CPU time (user + system) of the process so far: less
// sensitive than wall time to other programs sharing the machine.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}

// BenchmarkDetectLongChrom runs the HMM on one long chromosome (100
// samples, 200,000 sites), where the per-site tables no longer fit in
// cache: memory traffic, not arithmetic, sets the cost per call there.
func BenchmarkDetectLongChrom(b *testing.B) {
	const ns, nsites = 100, 200000
	bs, fs, contigs := benchBatches(ns, nsites, false)
	samples := sampleNames(ns)
	b.ResetTimer()
	c0 := cpuSeconds()
	for it := 0; it < b.N; it++ {
		c, _ := NewCollector(DefaultConfig(), samples, contigs)
		for i, bt := range bs {
			if err := c.AddBatch(bt, fs[i]); err != nil {
				b.Fatal(err)
			}
		}
		if _, err := c.Finish(); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/float64(ns*nsites), "cpu_ns/call")
}
