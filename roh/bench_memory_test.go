package roh

import (
	"math/rand/v2"
	"runtime"
	"runtime/debug"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"fgauge/vcfscan"
)

// streamBatches feeds a Collector nSites sites of nSamples samples on one
// chromosome, 1 site per 500 bp, generated batch by batch (so that the
// input itself takes no memory): genotype rows are drawn once per allele
// frequency class and reused, with a planted homozygous stretch per
// sample.
func streamBatches(tb testing.TB, c *Collector, nSamples, nSites int) {
	rng := rand.New(rand.NewPCG(5, 5))
	const classes = 64
	rows := make([][]vcfscan.Geno, classes)
	freqs := make([]float64, classes)
	for k := range rows {
		freqs[k] = 0.05 + 0.9*float64(k)/classes
		rows[k] = make([]vcfscan.Geno, nSamples)
		for s := range rows[k] {
			rows[k][s] = hwe(rng, freqs[k])
		}
	}
	size := max(64, (1<<20)/nSamples)
	b := &vcfscan.Batch{NSamples: nSamples}
	var f []float64
	for i := 0; i < nSites; i += size {
		n := min(size, nSites-i)
		b.Seq = int64(i / size)
		b.Records = b.Records[:0]
		b.GT = grow(b.GT, n*nSamples)
		f = f[:0]
		for k := 0; k < n; k++ {
			t := i + k
			cl := int(uint64(t)*0x9E3779B97F4A7C15>>58) % classes
			b.Records = append(b.Records, vcfscan.Record{ChromID: 0, Pos: int64(t+1) * 500})
			f = append(f, freqs[cl])
			gt := b.GT[k*nSamples : (k+1)*nSamples]
			copy(gt, rows[(cl+t)%classes])
			for s := 0; s < nSamples; s++ {
				if (t+s*7919)%20000 < 1500 {
					gt[s] = 2 * (gt[s] & 1)
				}
			}
		}
		if err := c.AddBatch(b, f); err != nil {
			tb.Fatal(err)
		}
	}
}

// BenchmarkBoundedMemory runs the HMM with the default memory budget on
// the two shapes of the memory targets, one chromosome each: 100 samples
// x 4 million sites and 10,000 samples x 200,000 sites. It reports the
// peak Go heap in use, the process's peak resident memory (run one shape
// per process for a clean figure: -bench 'BoundedMemory/100x'), the bytes
// spilled, and CPU ns per call (generation of the input included).
func BenchmarkBoundedMemory(b *testing.B) {
	for _, tc := range []struct {
		name   string
		ns, nt int
	}{
		{"100x4M", 100, 4_000_000},
		{"10000x200k", 10_000, 200_000},
	} {
		b.Run(tc.name, func(b *testing.B) {
			for it := 0; it < b.N; it++ {
				runtime.GC()
				debug.FreeOSMemory()
				var peak atomic.Uint64
				stop := make(chan struct{})
				go func() {
					var m runtime.MemStats
					for {
						select {
						case <-stop:
							return
						case <-time.After(20 * time.Millisecond):
						}
						runtime.ReadMemStats(&m)
						if v := m.HeapInuse; v > peak.Load() {
							peak.Store(v)
						}
					}
				}()
				cfg := DefaultConfig()
				cfg.Threads = 2
				cfg.TempDir = b.TempDir()
				c0 := cpuSeconds()
				c, err := NewCollector(cfg, sampleNames(tc.ns), []vcfscan.Contig{{Name: "1", Length: int64(tc.nt) * 500}})
				if err != nil {
					b.Fatal(err)
				}
				streamBatches(b, c, tc.ns, tc.nt)
				ms := c.MemoryStats()
				r, err := c.Finish()
				if err != nil {
					b.Fatal(err)
				}
				cpu := cpuSeconds() - c0
				close(stop)
				runs := len(r.Chroms[0].Runs)
				if runs < tc.ns {
					b.Fatalf("only %d runs", runs)
				}
				var ru syscall.Rusage
				syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
				b.ReportMetric(float64(peak.Load())/1e6, "peak_heap_MB")
				b.ReportMetric(float64(ru.Maxrss)/1e3, "peak_rss_MB")
				b.ReportMetric(float64(ms.SpilledBytes)/1e6, "spilled_MB")
				b.ReportMetric(cpu*1e9/float64(tc.ns*tc.nt), "cpu_ns/call")
			}
		})
	}
}

// BenchmarkShapes compares the CPU time per call of the same number of
// calls in two shapes, 100 samples x 1 million sites and 1,000 samples x
// 100,000 sites (one chromosome, default budget, two workers): per-site
// work (tables, collection) shows as a higher cost per call at 100
// samples. "ratio" is the 100-sample figure over the 1,000-sample one.
func BenchmarkShapes(b *testing.B) {
	run := func(ns, nt int) float64 {
		cfg := DefaultConfig()
		cfg.Threads = 2
		cfg.TempDir = b.TempDir()
		c0 := cpuSeconds()
		c, err := NewCollector(cfg, sampleNames(ns), []vcfscan.Contig{{Name: "1", Length: int64(nt) * 500}})
		if err != nil {
			b.Fatal(err)
		}
		streamBatches(b, c, ns, nt)
		if _, err := c.Finish(); err != nil {
			b.Fatal(err)
		}
		return (cpuSeconds() - c0) * 1e9 / float64(ns*nt)
	}
	var small, large float64
	for it := 0; it < b.N; it++ {
		small += run(100, 1_000_000)
		large += run(1000, 100_000)
	}
	b.ReportMetric(small/float64(b.N), "cpu_ns/call_100x1M")
	b.ReportMetric(large/float64(b.N), "cpu_ns/call_1000x100k")
	b.ReportMetric(small/large, "ratio")
}
