package roh

import "testing"

// BenchmarkPasses times each HMM pass alone on one sample of 5,000 sites
// (CPU ns per site), to see where the per-call cost of detection goes.
func BenchmarkPasses(b *testing.B) {
	const n = 5000
	bs, fs, contigs := benchBatches(1, n, false)
	c, _ := NewCollector(DefaultConfig(), []string{"x"}, contigs)
	for i, bt := range bs {
		if err := c.AddBatch(bt, fs[i]); err != nil {
			b.Fatal(err)
		}
	}
	ch := c.cur
	ch.flushStage()
	c.prepare(ch, &chromWork{})
	var sc hmmScratch
	sc.code = grow(sc.code, n)
	ch.unpack(0, sc.code)
	sc.fillEmissions(ch, 0)
	f := 0.05
	b.Run("forward", func(b *testing.B) {
		c0 := cpuSeconds()
		for i := 0; i < b.N; i++ {
			sc.forward(ch.trans, f, false)
		}
		b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/n, "cpu_ns/site")
	})
	b.Run("fused", func(b *testing.B) {
		c0 := cpuSeconds()
		for i := 0; i < b.N; i++ {
			sc.forwardViterbi(ch, ch.trans, f, true)
		}
		b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/n, "cpu_ns/site")
	})
	b.Run("backward", func(b *testing.B) {
		c0 := cpuSeconds()
		for i := 0; i < b.N; i++ {
			sc.backward(ch.trans, f, ch.cm, nil, sc.path)
		}
		b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/n, "cpu_ns/site")
	})
	b.Run("unpack", func(b *testing.B) {
		c0 := cpuSeconds()
		for i := 0; i < b.N; i++ {
			ch.unpack(0, sc.code)
		}
		b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/n, "cpu_ns/site")
	})
}
