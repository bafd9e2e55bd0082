package mating

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"fgauge/vcfscan"
)

// randomCohort makes nInd animals x nSites genotypes with the given
// missing share, as one batch whose columns are the animals in order.
// Invented data: the truth is the plain product (Reference).
func randomCohort(rng *rand.Rand, nInd, nSites int, missing float64) (*vcfscan.Batch, []vcfscan.Geno) {
	b := &vcfscan.Batch{NSamples: nInd, Records: make([]vcfscan.Record, nSites), GT: make([]vcfscan.Geno, nInd*nSites)}
	x := make([]vcfscan.Geno, nInd*nSites) // animal-major copy
	for k := 0; k < nSites; k++ {
		f := rng.Float64()
		for i := 0; i < nInd; i++ {
			var g vcfscan.Geno
			switch {
			case rng.Float64() < missing:
				g = vcfscan.Missing
				if rng.IntN(10) == 0 {
					g = vcfscan.HaploidAlt // haploid calls count as missing
				}
			default:
				g = vcfscan.Geno(b2i(rng.Float64() < f) + b2i(rng.Float64() < f))
			}
			b.GT[k*nInd+i] = g
			x[i*nSites+k] = g
		}
	}
	return b, x
}

func b2i(v bool) int {
	if v {
		return 1
	}
	return 0
}

func seq(from, n int) []int {
	s := make([]int, n)
	for i := range s {
		s[i] = from + i
	}
	return s
}

// TestGenomicMatchesReference checks the packed popcount path against the
// plain float64 product on invented genotypes with several missing shares
// and site counts around the word and chunk sizes.
func TestGenomicMatchesReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct {
		sires, dams, sites int
		missing            float64
	}{
		{1, 1, 1, 0}, {3, 5, 63, 0}, {3, 5, 64, 0.1}, {4, 70, 65, 0.02},
		{5, 40, sitesPerChunk + 7, 0.01}, {2, 33, 300, 0.9}, {7, 9, 129, 1},
	} {
		b, x := randomCohort(rng, tc.sires+tc.dams, tc.sites, tc.missing)
		q := make([]float64, tc.sites)
		CohortFreqs{}.Fill(b, q)
		q[0] = math.NaN() // one site left out
		want, werr := Reference(x, tc.sires, tc.dams, q)
		for _, threads := range []int{1, 3} {
			p := NewPacker(seq(0, tc.sires), seq(tc.sires, tc.dams), fixedFreqs(q))
			p.Add(b)
			got, err := p.Genomic(context.Background(), threads)
			if (err != nil) != (werr != nil) {
				t.Fatalf("%+v: error %v, reference error %v", tc, err, werr)
			}
			if err != nil {
				continue
			}
			for i := range want.V {
				if d := math.Abs(got.V[i] - want.V[i]); d > 1e-12 {
					t.Fatalf("%+v threads %d: pair %d: %v, reference %v", tc, threads, i, got.V[i], want.V[i])
				}
			}
		}
	}
}

// fixedFreqs hands out given frequencies, one per record in order.
type fixedFreqs []float64

func (f fixedFreqs) Fill(b *vcfscan.Batch, p []float64) { copy(p, f[:len(b.Records)]) }

// TestGenomicBatchSplits: the result does not depend on how the records
// are cut into batches (words of 64 sites straddle batches).
func TestGenomicBatchSplits(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	const nS, nD, nSites = 3, 11, 300
	b, x := randomCohort(rng, nS+nD, nSites, 0.05)
	q := make([]float64, nSites)
	CohortFreqs{}.Fill(b, q)
	q[7], q[64] = math.NaN(), math.NaN()
	want, err := Reference(x, nS, nD, q)
	if err != nil {
		t.Fatal(err)
	}
	for _, cuts := range [][]int{{1, 63, 64, 65, 200}, {5, 6, 7, 8, 9, 130, 299}, {150}} {
		p := NewPacker(seq(0, nS), seq(nS, nD), fixedFreqs(q))
		from := 0
		for _, to := range append(cuts, nSites) {
			sub := &vcfscan.Batch{NSamples: nS + nD, Records: b.Records[from:to], GT: b.GT[from*(nS+nD) : to*(nS+nD)]}
			p.Add(sub)
			p.src = fixedFreqs(q[to:]) // the next batch's frequencies
			from = to
		}
		got, err := p.Genomic(context.Background(), 2)
		if err != nil {
			t.Fatal(err)
		}
		for i := range want.V {
			if math.Abs(got.V[i]-want.V[i]) > 1e-12 {
				t.Fatalf("cuts %v: pair %d: %v, reference %v", cuts, i, got.V[i], want.V[i])
			}
		}
	}
}
