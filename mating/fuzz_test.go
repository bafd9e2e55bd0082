package mating

import (
	"context"
	"math"
	"testing"

	"fgauge/vcfscan"
)

// FuzzGenomic compares the packed path with the plain product (Reference)
// on genotypes decoded from the fuzzer's bytes: the first two bytes give
// the numbers of sires and dams, the rest the calls (code = byte % 6, so
// missing and haploid calls occur), site-major.
func FuzzGenomic(f *testing.F) {
	f.Add([]byte{1, 1, 0, 1, 2, 1})
	f.Add([]byte{2, 3, 0, 1, 2, 3, 4, 5, 2, 2, 1, 0, 0, 1, 2, 2, 1, 0, 3, 3, 3, 3, 3})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 3 {
			return
		}
		nS, nD := 1+int(data[0]%5), 1+int(data[1]%9)
		n := nS + nD
		calls := data[2:]
		nSites := len(calls) / n
		if nSites == 0 {
			return
		}
		b := &vcfscan.Batch{NSamples: n, Records: make([]vcfscan.Record, nSites), GT: make([]vcfscan.Geno, n*nSites)}
		x := make([]vcfscan.Geno, n*nSites)
		for k := 0; k < nSites; k++ {
			for i := 0; i < n; i++ {
				g := vcfscan.Geno(calls[k*n+i] % 6)
				b.GT[k*n+i] = g
				x[i*nSites+k] = g
			}
		}
		q := make([]float64, nSites)
		CohortFreqs{}.Fill(b, q)
		want, werr := Reference(x, nS, nD, q)
		p := NewPacker(seq(0, nS), seq(nS, nD), nil)
		p.Add(b)
		got, err := p.Genomic(context.Background(), 2)
		if (err == nil) != (werr == nil) {
			t.Fatalf("error %v, reference error %v", err, werr)
		}
		if err != nil {
			return
		}
		for i := range want.V {
			if math.Abs(got.V[i]-want.V[i]) > 1e-9*math.Max(1, math.Abs(want.V[i])) {
				t.Fatalf("pair %d: %v, reference %v", i, got.V[i], want.V[i])
			}
		}
	})
}

// FuzzAllocate compares the solver's total with enumeration on tiny
// instances decoded from the fuzzer's bytes.
func FuzzAllocate(f *testing.F) {
	f.Add([]byte{2, 3, 1, 2, 10, 20, 30, 40, 50, 60})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 2 {
			return
		}
		nS, nD := 1+int(data[0]%3), 1+int(data[1]%6)
		data = data[2:]
		if len(data) < nS+nS*nD {
			return
		}
		limits := make([]int, nS)
		for s := range limits {
			limits[s] = int(data[s]) % (nD + 1)
		}
		cost := &Matrix{Sires: nS, Dams: nD, V: make([]float64, nS*nD)}
		for i := range cost.V {
			cost.V[i] = float64(data[nS+i]%32) / 64 // ties are frequent
		}
		ceiling := 0.4
		want := bruteForce(cost, limits, ceiling)
		got, err := Allocate(context.Background(), cost, AllocOptions{Limits: limits, Ceiling: ceiling})
		if math.IsInf(want, 1) {
			if err == nil {
				t.Fatalf("enumeration finds no plan; got total %v", got.Total)
			}
			return
		}
		if err != nil {
			t.Fatalf("%v; enumeration %v", err, want)
		}
		if math.Abs(got.Total-want) > 1e-12 {
			t.Fatalf("total %v, enumeration %v", got.Total, want)
		}
		checkPlan(t, cost, limits, ceiling, got)
	})
}
