package stats

import (
	"math/rand/v2"
	"testing"

	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

// BenchmarkAppendXRow: one non-PAR X row of 1,000 samples (half male,
// haploid-coded; females in Hardy-Weinberg proportions at p = 0.3), the
// X exact test included; reported per call (genotype).
func BenchmarkAppendXRow(b *testing.B) {
	const n = 1000
	rng := rand.New(rand.NewPCG(1, 2))
	sexes := make([]sexcheck.Sex, n)
	sites := make([][]vcfscan.Geno, 64)
	for i := range sexes {
		sexes[i] = sexcheck.Female
		if i%2 == 0 {
			sexes[i] = sexcheck.Male
		}
	}
	for k := range sites {
		sites[k] = make([]vcfscan.Geno, n)
		for i := range sites[k] {
			a, c := rng.Float64() < 0.3, rng.Float64() < 0.3
			switch {
			case sexes[i] == sexcheck.Male && a:
				sites[k][i] = vcfscan.HaploidAlt
			case sexes[i] == sexcheck.Male:
				sites[k][i] = vcfscan.HaploidRef
			case a && c:
				sites[k][i] = vcfscan.HomAlt
			case a || c:
				sites[k][i] = vcfscan.Heterozygous
			}
		}
	}
	rec := &vcfscan.Record{Pos: 1000, Ref: []byte("A"), Alt: []byte("G")}
	var buf []byte
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		buf = AppendXRow(buf[:0], []byte("X"), rec, sites[i%len(sites)], sexes, nil, true)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/genotype")
}
