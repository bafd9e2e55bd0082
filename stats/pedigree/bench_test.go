package pedigree

import (
	"math/rand/v2"
	"strconv"
	"testing"
)

// generatedHerd builds a pedigree of n animals in discrete generations of
// size gen, like a closed breeding population with artificial insemination:
// each generation's sires are nSires males of the previous generation, dams
// are random animals of the previous generation, and a share of records
// (unknownShare) lacks the sire or the dam, as field herd books do.
func generatedHerd(n, gen, nSires int, unknownShare float64, seed uint64) []Record {
	rng := rand.New(rand.NewPCG(seed, 7))
	recs := make([]Record, 0, n)
	for len(recs) < n {
		g := len(recs) / gen
		start := (g - 1) * gen
		var sires []int
		if g > 0 {
			for k := 0; k < nSires; k++ {
				sires = append(sires, start+rng.IntN(gen))
			}
		}
		for k := 0; k < gen && len(recs) < n; k++ {
			r := Record{ID: "a" + strconv.Itoa(len(recs))}
			if g > 0 {
				if rng.Float64() >= unknownShare {
					r.Sire = recs[sires[rng.IntN(nSires)]].ID
				}
				if rng.Float64() >= unknownShare {
					r.Dam = recs[start+rng.IntN(gen)].ID
				}
			}
			recs = append(recs, r)
		}
	}
	return recs
}

// BenchmarkInbreeding1M: Inbreeding on a generated herd-book-like pedigree
// of 10^6 animals (20 generations of 50,000, 200 sires per generation, 30%
// of parents unrecorded).
func BenchmarkInbreeding1M(b *testing.B) {
	benchInbreeding(b, generatedHerd(1_000_000, 50_000, 200, 0.3, 1), (*Pedigree).Inbreeding)
}

// BenchmarkInbreedingML1M: the plain Meuwissen-Luo trace on the same
// pedigree.
func BenchmarkInbreedingML1M(b *testing.B) {
	benchInbreeding(b, generatedHerd(1_000_000, 50_000, 200, 0.3, 1), func(p *Pedigree) []float64 { f, _ := p.inbreedingD(); return f })
}

// BenchmarkInbreedingDeep1M: a stress case, the same population with 90% of
// parents recorded, so that every animal of the last generations has
// hundreds of thousands of known ancestors.
func BenchmarkInbreedingDeep1M(b *testing.B) {
	benchInbreeding(b, generatedHerd(1_000_000, 50_000, 200, 0.1, 1), (*Pedigree).Inbreeding)
}

func benchInbreeding(b *testing.B, recs []Record, fn func(*Pedigree) []float64) {
	if testing.Short() {
		b.Skip("1M-animal benchmark skipped in -short mode")
	}
	p, err := FromRecords(recs, "generated")
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	var mean float64
	for i := 0; i < b.N; i++ {
		f := fn(p)
		mean = 0
		for _, v := range f {
			mean += v
		}
		mean /= float64(len(f))
	}
	b.ReportMetric(mean, "mean_F")
}

// BenchmarkBuild1M: reading order checks and parents-first sorting of the
// same 10^6-animal pedigree.
func BenchmarkBuild1M(b *testing.B) {
	if testing.Short() {
		b.Skip("1M-animal benchmark skipped in -short mode")
	}
	recs := generatedHerd(1_000_000, 50_000, 200, 0.1, 1)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FromRecords(recs, "generated"); err != nil {
			b.Fatal(err)
		}
	}
}
