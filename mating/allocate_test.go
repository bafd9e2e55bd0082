package mating

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

// bruteForce returns the minimum total over every assignment of dams to
// sires within the limits (Inf when none), by enumeration.
func bruteForce(cost *Matrix, limits []int, ceiling float64) float64 {
	nS, nD := cost.Sires, cost.Dams
	load := make([]int, nS)
	best := math.Inf(1)
	var rec func(d int, total float64)
	rec = func(d int, total float64) {
		if d == nD {
			best = min(best, total)
			return
		}
		for s := 0; s < nS; s++ {
			v := cost.At(s, d)
			if load[s] >= limits[s] || v > ceiling {
				continue
			}
			load[s]++
			rec(d+1, total+v)
			load[s]--
		}
	}
	rec(0, 0)
	return best
}

func randomCosts(rng *rand.Rand, nS, nD int) *Matrix {
	m := &Matrix{Sires: nS, Dams: nD, V: make([]float64, nS*nD)}
	for i := range m.V {
		m.V[i] = rng.Float64()*0.3 - 0.05
	}
	return m
}

// TestAllocateBruteForce compares the solver with enumeration on small
// invented instances, tight and loose, with and without a ceiling.
func TestAllocateBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for it := 0; it < 400; it++ {
		nS, nD := 1+rng.IntN(4), 1+rng.IntN(7)
		cost := randomCosts(rng, nS, nD)
		limits := make([]int, nS)
		for s := range limits {
			limits[s] = rng.IntN(nD + 1)
		}
		ceiling := math.Inf(1)
		if it%3 == 0 {
			ceiling = 0.15
		}
		want := bruteForce(cost, limits, ceiling)
		got, err := Allocate(context.Background(), cost, AllocOptions{Limits: limits, Ceiling: ceiling})
		if math.IsInf(want, 1) {
			var ie *InfeasibleError
			if !errors.As(err, &ie) {
				t.Fatalf("instance %d: infeasible by enumeration, got %v, %v", it, got, err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("instance %d: %v (enumeration found %v)", it, err, want)
		}
		if math.Abs(got.Total-want) > 1e-12 {
			t.Fatalf("instance %d: total %v, enumeration %v", it, got.Total, want)
		}
		checkPlan(t, cost, limits, ceiling, got)
	}
}

// checkPlan checks the limits, the ceiling and the totals of a plan.
func checkPlan(t *testing.T, cost *Matrix, limits []int, ceiling float64, a *Allocation) {
	t.Helper()
	load := make([]int, cost.Sires)
	var total float64
	for d, s := range a.SireOf {
		load[s]++
		v := cost.At(s, d)
		if v > ceiling {
			t.Fatalf("dam %d on sire %d: cost %v above the ceiling %v", d, s, v, ceiling)
		}
		total += v
	}
	for s, n := range load {
		if n > limits[s] {
			t.Fatalf("sire %d has %d dams, limit %d", s, n, limits[s])
		}
	}
	if total != a.Total {
		t.Fatalf("total %v, recomputed %v", a.Total, total)
	}
}
