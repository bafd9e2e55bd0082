package roh

import (
	"io"
	"math/rand/v2"
	"testing"
)

// BenchmarkWriteRuns formats 200,000 runs of 1,000 samples (CPU ns per
// run).
func BenchmarkWriteRuns(b *testing.B) {
	rng := rand.New(rand.NewPCG(7, 7))
	r := &Result{Method: MethodHMM, Samples: sampleNames(1000), Classes: []float64{1, 2, 4, 8, 16}}
	for c := 0; c < 4; c++ {
		ch := ChromResult{Name: string(rune('1' + c))}
		for i := 0; i < 50_000; i++ {
			start := rng.Int64N(2e8)
			l := 1000 + rng.Int64N(5e6)
			ch.Runs = append(ch.Runs, Run{Sample: i % 1000, Start: start, End: start + l,
				StartCM: float64(start) / 1e6 * 1.1, EndCM: float64(start+l) / 1e6 * 1.1,
				NSites: int(l / 3000), NHet: rng.IntN(3), Quality: 0.9 + 0.1*rng.Float64()})
		}
		r.Chroms = append(r.Chroms, ch)
	}
	b.ResetTimer()
	c0 := cpuSeconds()
	for i := 0; i < b.N; i++ {
		if err := r.WriteRuns(io.Discard); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric((cpuSeconds()-c0)*1e9/float64(b.N)/200_000, "cpu_ns/run")
}
