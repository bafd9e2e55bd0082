package stats

import (
	"bytes"
	"strconv"
	"testing"

	"fgauge/vcfscan"
)

// benchBatch is 1,000 simulated samples x 256 sites.
func benchBatch(nSamples, nSites int) (*vcfscan.Batch, []string) {
	names := make([]string, nSamples)
	for i := range names {
		names[i] = "bull_" + strconv.Itoa(i)
	}
	calls := simulateCohort(9, make([]float64, nSamples), nSites)
	b := &vcfscan.Batch{NSamples: nSamples}
	for i, c := range calls {
		b.Records = append(b.Records, vcfscan.Record{Pos: int64(1000 * (i + 1)), Ref: []byte("C"), Alt: []byte("T"), InfoValue: vcfscan.NaN})
		b.GT = append(b.GT, c...)
	}
	return b, names
}

// BenchmarkProcessBatch1000 measures per-site cost at 1,000 samples
// (reported per site and per call).
func BenchmarkProcessBatch1000(b *testing.B) {
	for _, tc := range []struct {
		name string
		pops bool
	}{{"cohort", false}, {"populations4", true}} {
		b.Run(tc.name, func(b *testing.B) {
			batch, names := benchBatch(1000, 256)
			cfg := &Config{Samples: names, MinCallRate: 0.9}
			if tc.pops {
				cfg.PopOf = make([]int, len(names))
				for i := range cfg.PopOf {
					cfg.PopOf[i] = i % 4
				}
				cfg.PopNames = []string{"a", "b", "c", "d"}
				cfg.Freqs = FreqPopulation
			}
			w := NewWorker(cfg, func(int) string { return "chr1" })
			var sites, pop bytes.Buffer
			freqs := make([]float64, len(batch.Records))
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				sites.Reset()
				pop.Reset()
				w.ProcessBatch(batch, &sites, &pop, freqs)
			}
			perSite := float64(b.Elapsed().Nanoseconds()) / float64(b.N*len(batch.Records))
			b.ReportMetric(perSite, "ns/site")
			b.ReportMetric(perSite/1000, "ns/call")
		})
	}
}

// BenchmarkCountFloor is the floor for BenchmarkProcessBatch1000: the
// least per-call work any per-sample statistic needs (one counter
// increment per call), on the same batch. Compare ns/call of the two in
// the same run; the machine may be shared.
func BenchmarkCountFloor(b *testing.B) {
	batch, _ := benchBatch(1000, 256)
	counts := make([][6]int64, 1000)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for r := range batch.Records {
			for s, g := range batch.Calls(r) {
				counts[s][g]++
			}
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(batch.Records)*1000), "ns/call")
}

// BenchmarkProcessCold100 measures the per-site cost at a small cohort
// (100 samples) on 8,192 different simulated sites read once by a fresh
// Worker, so that per-site caches start cold as in a real run (reported
// per site and per call).
func BenchmarkProcessCold100(b *testing.B) {
	const nSamples, nSites, batchSites = 100, 8192, 256
	all, names := benchBatch(nSamples, nSites)
	var batches []*vcfscan.Batch
	for i := 0; i < nSites; i += batchSites {
		batches = append(batches, &vcfscan.Batch{NSamples: nSamples, Records: all.Records[i : i+batchSites],
			GT: all.GT[i*nSamples : (i+batchSites)*nSamples]})
	}
	cfg := &Config{Samples: names, MinCallRate: 0.9}
	var sites bytes.Buffer
	freqs := make([]float64, batchSites)
	b.ReportAllocs()
	for b.Loop() {
		w := NewWorker(cfg, func(int) string { return "chr1" })
		for _, bt := range batches {
			sites.Reset()
			w.ProcessBatch(bt, &sites, nil, freqs)
		}
	}
	perSite := float64(b.Elapsed().Nanoseconds()) / float64(b.N*nSites)
	b.ReportMetric(perSite, "ns/site")
	b.ReportMetric(perSite/nSamples, "ns/call")
}
