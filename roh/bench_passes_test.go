package roh

import (
	"testing"

	"fgauge/vcfscan"
)

// BenchmarkPasses times each HMM pass alone on one sample of 5,000 sites
// (CPU ns per site), to see where the per-call cost of detection goes.
func BenchmarkPasses(b *testing.B) {
	const n = 5000
	bs, fs, contigs := benchBatches(1, n, false)
	ch := wholeChrom(b, bs, fs, 1)
	c, _ := NewCollector(DefaultConfig(), []string{"x"}, contigs)
	c.prepare(ch)
	c.Close()
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

// wholeChrom joins batches of one chromosome into the whole-chromosome
// layout.
func wholeChrom(tb testing.TB, bs []*vcfscan.Batch, fs [][]float64, ns int) *chromData {
	p, err := NewPieceCollector(DefaultConfig(), ns)
	if err != nil {
		tb.Fatal(err)
	}
	for i, bt := range bs {
		if err := p.AddBatch(bt, fs[i]); err != nil {
			tb.Fatal(err)
		}
	}
	if err := p.finish(); err != nil {
		tb.Fatal(err)
	}
	defer p.Close()
	ch, err := p.col.chroms[0].materialize()
	if err != nil {
		tb.Fatal(err)
	}
	ch.name = "1"
	return ch
}

// benchWindow builds one full window of 4,096 sites for ns samples (the
// sites of benchBatches, in the middle of a chromosome) and its table.
func benchWindow(tb testing.TB, ns int) (geometry, *window, *siteTable, []hmmState) {
	bs, fs, _ := benchBatches(ns, int(maxWindowSites), false)
	g := newGeometry(ns, 1<<40, true)
	w := &window{}
	g.alloc(w)
	w.reset(3, 3*g.w, 40)
	for i, b := range bs {
		for k, rec := range b.Records {
			lt := w.n
			w.n++
			w.pos = append(w.pos, rec.Pos+40_000_000)
			w.freq = append(w.freq, fs[i][k])
			w.cm = append(w.cm, float64(rec.Pos+40_000_000)/1e6)
			w.plSite = append(w.plSite, -1)
			for s := 0; s < ns; s++ {
				w.geno[s*g.ww+lt>>5] |= uint64(b.GT[k*ns+s]&3) << (2 * uint(lt&31))
			}
		}
	}
	var tab siteTable
	tab.size(w.n)
	tab.buildSites(w, DefaultConfig(), 0, w.n, false)
	st := make([]hmmState, ns)
	for s := range st {
		st[s] = hmmState{a: 0.05, b: 0.95, va: 0.05, vn: 0.95, ba: 1, bn: 1, st: stN}
	}
	return g, w, &tab, st
}

// BenchmarkSweeps times each sweep of the windowed HMM alone, one worker,
// on one window of 4,096 sites and 1,000 samples (CPU ns per call), and
// the per-site table (CPU ns per site).
func BenchmarkSweeps(b *testing.B) {
	const ns = 1000
	g, w, tab, st := benchWindow(b, ns)
	var sc sweepScratch
	calls := float64(ns * w.n)
	b.Run("table", func(b *testing.B) {
		c0 := cpuSeconds()
		for i := 0; i < b.N; i++ {
			tab.buildSites(w, DefaultConfig(), 0, w.n, false)
		}
		b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/float64(w.n), "cpu_ns/site")
	})
	b.Run("forward", func(b *testing.B) {
		c0 := cpuSeconds()
		for i := 0; i < b.N; i++ {
			for s := 0; s < ns; s += 2 {
				g.forwardPair(w, tab, &sc, 0.05, &st[s], &st[s+1], s, s+1)
			}
		}
		b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/calls, "cpu_ns/call")
	})
	b.Run("reverse", func(b *testing.B) {
		c0 := cpuSeconds()
		for i := 0; i < b.N; i++ {
			b.StopTimer()
			for s := 0; s < ns; s += 2 {
				g.forwardPair(w, tab, &sc, 0.05, &st[s], &st[s+1], s, s+1)
			}
			b.StartTimer()
			c0 -= 0
			for s := 0; s < ns; s += 2 {
				g.reversePair(w, tab, &sc, &st[s], &st[s+1], s, s+1)
			}
		}
		b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/calls/2, "cpu_ns/call_both")
	})
	b.Run("posterior", func(b *testing.B) {
		acc := make([]runAcc, ns)
		var out []Run
		c0 := cpuSeconds()
		for i := 0; i < b.N; i++ {
			for s := 0; s < ns; s++ {
				out = out[:0]
				g.posteriorSample(w, tab, &sc, 0.05, 1e6, s, &acc[s], &out)
			}
		}
		b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/calls, "cpu_ns/call")
	})
}
