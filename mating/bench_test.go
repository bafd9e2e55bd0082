package mating

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// BenchmarkGenomic times the packed path on 200 sires x 1,000 dams x
// 50,000 sites (one twentieth of the target problem's pairs) at several
// missing shares, packing excluded; ns/pair-site is the figure to compare.
func BenchmarkGenomic(b *testing.B) {
	const nS, nD, nSites = 200, 1000, 50000
	asm := popDot2x2
	defer func() { popDot2x2 = asm }()
	for _, tc := range []struct {
		missing float64
		kernel  string
	}{{0, "go"}, {0, "default"}, {0.01, "default"}, {0.05, "default"}} {
		missing := tc.missing
		popDot2x2 = asm
		if tc.kernel == "go" {
			popDot2x2 = popDot2x2Go // the portable kernel, for the ratio
		}
		b.Run(fmt.Sprintf("missing=%g/kernel=%s", missing, tc.kernel), func(b *testing.B) {
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

// BenchmarkAllocate times the solver on 200 sires x 20,000 dams of
// invented costs: no limit, a limit of 120 (capacity 1.2 times the dams)
// and a limit of 100 (capacity equal to the dams, the tightest case).
func BenchmarkAllocate(b *testing.B) {
	const nS, nD = 200, 20000
	for _, limit := range []int{nD, 120, 100} {
		b.Run(fmt.Sprintf("limit=%d", limit), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(9, 10))
			cost := randomCosts(rng, nS, nD)
			limits := make([]int, nS)
			for s := range limits {
				limits[s] = limit
			}
			var moves int64
			for b.Loop() {
				a, err := Allocate(context.Background(), cost, AllocOptions{Limits: limits, Ceiling: math.Inf(1)})
				if err != nil {
					b.Fatal(err)
				}
				moves = a.Moves
			}
			b.ReportMetric(float64(moves), "moves")
		})
	}
}

// BenchmarkSharedSegments times the shared-segment coancestry per pair
// and site on random (unrelated) genotypes, where opposite homozygotes
// cut the genome into many short stretches, against the genomic kernel's
// figure in BenchmarkGenomic.
func BenchmarkSharedSegments(b *testing.B) {
	const nS, nD, nSites = 20, 100, 50000
	rng := rand.New(rand.NewPCG(7, 8))
	batch, _ := randomCohort(rng, nS+nD, nSites, 0.01)
	for k := range batch.Records {
		batch.Records[k].Pos = int64(k)*50_000 + 1 // 2,500 Mb: chance stretches stay below 3 Mb
	}
	p := NewSegmentPacker(seq(0, nS), seq(nS, nD))
	p.Add(batch)
	b.ResetTimer()
	for b.Loop() {
		if _, err := p.SharedSegments(context.Background(), 1, SegmentOptions{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(nS*nD)/nSites, "ns/pair-site")
}
