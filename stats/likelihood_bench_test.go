package stats

import (
	"syscall"
	"testing"
	"time"
)

// cpuTime is the process's user+system CPU time: on a shared machine the
// wall-clock ns/op of a benchmark depends on the load, CPU time much less.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// perCall reports wall and CPU ns per call of a benchmark loop of calls
// calls per iteration, started at cpu0.
func perCall(b *testing.B, cpu0 time.Duration, calls int) {
	n := float64(b.N * calls)
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/n, "ns/call")
	b.ReportMetric(float64((cpuTime()-cpu0).Nanoseconds())/n, "cpu-ns/call")
}

// benchLowcov is 1,000 samples x 256 sites at mean depth 3 with 1% read
// error (lowcov_sim_test.go), one likelihood triple per call.
func benchLowcov(b *testing.B) [][]uint16 {
	b.Helper()
	var pl [][]uint16
	for len(pl) < 256 {
		c := simulateLowcov(uint64(len(pl)), 64, 3, 0.01)
		for s := range c.pl {
			// 170 animals per cohort: tile to 1,000 samples.
			row := make([]uint16, 0, 3000)
			for len(row) < 3000 {
				row = append(row, c.pl[s][:min(len(c.pl[s]), 3000-len(row))]...)
			}
			pl = append(pl, row)
		}
	}
	return pl[:256]
}

// BenchmarkFLikAdd1000 is the per-call cost of the f_lik accumulation in
// the streaming pass: per site FLikSite.Set, then one FLikSummary.Add per
// call (ns/call). Compare with BenchmarkCountFloor in the same run.
func BenchmarkFLikAdd1000(b *testing.B) {
	pl := benchLowcov(b)
	sum := make([]FLikSummary, 1000)
	freq := make([]float64, len(pl))
	var em SiteFreqEM
	for s := range pl {
		freq[s] = em.Estimate(pl[s]).AltFreq
	}
	var site FLikSite
	b.ResetTimer()
	cpu0 := cpuTime()
	for it := 0; it < b.N; it++ {
		for s, row := range pl {
			if !site.Set(freq[s]) {
				continue
			}
			for i := range sum {
				sum[i].Add(&site, row[3*i], row[3*i+1], row[3*i+2])
			}
		}
	}
	perCall(b, cpu0, len(pl)*1000)
}

// BenchmarkSiteFreqEM1000 is the cost of the site EM at 1,000 samples,
// per call (ns/call: the site's time over its 1,000 calls).
func BenchmarkSiteFreqEM1000(b *testing.B) {
	pl := benchLowcov(b)
	var em SiteFreqEM
	iters := 0
	b.ResetTimer()
	cpu0 := cpuTime()
	for it := 0; it < b.N; it++ {
		for _, row := range pl {
			iters += em.Estimate(row).Iterations
		}
	}
	perCall(b, cpu0, len(pl)*1000)
	b.ReportMetric(float64(iters)/float64(b.N*len(pl)), "iter/site")
}

// BenchmarkDepthAddPL is the per-call cost of the likelihood depth proxy.
func BenchmarkDepthAddPL(b *testing.B) {
	pl := benchLowcov(b)
	acc := make([]DepthAcc, 1000)
	b.ResetTimer()
	cpu0 := cpuTime()
	for it := 0; it < b.N; it++ {
		for _, row := range pl {
			for i := range acc {
				acc[i].AddPL(row[3*i], row[3*i+1], row[3*i+2])
			}
		}
	}
	perCall(b, cpu0, len(pl)*1000)
}

// BenchmarkLikCountFloor is the floor for the benchmarks above, on the same
// triples: one counter increment per call.
func BenchmarkLikCountFloor(b *testing.B) {
	pl := benchLowcov(b)
	cnt := make([]int64, 1000)
	b.ResetTimer()
	cpu0 := cpuTime()
	for it := 0; it < b.N; it++ {
		for _, row := range pl {
			for i := range cnt {
				cnt[i] += int64(row[3*i+1])
			}
		}
	}
	perCall(b, cpu0, len(pl)*1000)
}

// BenchmarkFLikEstimate is the after-the-pass cost of one sample's F.
func BenchmarkFLikEstimate(b *testing.B) {
	c := simulateLowcov(5, 2000, 3, 0.01)
	_, sum := c.likF()
	b.ResetTimer()
	for it := 0; it < b.N; it++ {
		sum[it%len(sum)].Estimate()
	}
}
