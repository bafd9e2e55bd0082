package mating

import (
	"context"
	"fmt"
	"math/rand/v2"
	"testing"
)

// BenchmarkGenomic times the packed path on 200 sires x 1,000 dams x
// 50,000 sites (one twentieth of the target problem's pairs) at several
// missing shares, packing excluded; ns/pair-site is the figure to compare.
func BenchmarkGenomic(b *testing.B) {
	const nS, nD, nSites = 200, 1000, 50000
	for _, missing := range []float64{0, 0.01, 0.05} {
		b.Run(fmt.Sprintf("missing=%g", missing), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(3, 4))
			batch, _ := randomCohort(rng, nS+nD, nSites, missing)
			p := NewPacker(seq(0, nS), seq(nS, nD), nil)
			p.Add(batch)
			p.flush()
			b.ResetTimer()
			for b.Loop() {
				if _, err := p.Genomic(context.Background(), 1); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(nS*nD)/nSites, "ns/pair-site")
		})
	}
}

// BenchmarkPack times packing (frequencies and bit planes) per genotype.
func BenchmarkPack(b *testing.B) {
	const nInd, nSites = 2000, 5000
	rng := rand.New(rand.NewPCG(5, 6))
	batch, _ := randomCohort(rng, nInd, nSites, 0.01)
	b.ResetTimer()
	for b.Loop() {
		p := NewPacker(seq(0, 100), seq(100, nInd-100), nil)
		p.Add(batch)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(nInd*nSites), "ns/genotype")
}
