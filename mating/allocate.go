package mating

import (
	"context"
	"fmt"
	"math"
	"strings"
)

// AllocOptions constrains an allocation.
type AllocOptions struct {
	// Limits is the largest number of dams each sire may be given (one
	// per sire, in the matrix's sire order). A limit above the number of
	// dams means no limit.
	Limits []int
	// Ceiling: a pair whose cost is above it is never used. NaN or +Inf
	// means no ceiling. A pair whose cost is NaN is never used either.
	Ceiling float64
	// SireIDs and DamIDs name the animals in errors (optional).
	SireIDs, DamIDs []string
}

// Allocation is an optimal plan: SireOf[d] is the sire of dam d.
type Allocation struct {
	SireOf []int
	Total  float64 // sum of the chosen pairs' costs, added in dam order
	Mean   float64 // Total / number of dams
	Max    float64 // largest chosen cost
	// Moves counts dams moved to another sire by augmenting paths (a
	// measure of how tight the problem was).
	Moves int64
}

// InfeasibleError says which dams cannot be served.
type InfeasibleError struct {
	// NoSire lists dams whose every pair is above the ceiling (or has an
	// undefined cost).
	NoSire []int
	// Unserved lists further dams left without a place once every other
	// dam was placed: each had, at the time, only sires already full
	// (Hall's condition fails for them and the dams on those sires).
	// Which dams are left over is not unique; the count is.
	Unserved []int
	// FullSires are the sires the last unserved dam could reach.
	FullSires []int
	Capacity  int // sum of the sire limits (each capped at the number of dams)
	Dams      int
	sireIDs   []string
	damIDs    []string
}

func (e *InfeasibleError) Error() string {
	var b strings.Builder
	b.WriteString("mating: no allocation serves every dam")
	if e.Capacity < e.Dams {
		fmt.Fprintf(&b, ": the sires' limits add up to %d places for %d dams", e.Capacity, e.Dams)
	}
	if len(e.NoSire) > 0 {
		fmt.Fprintf(&b, "; %d dam(s) have every pair above the ceiling: %s", len(e.NoSire), e.names(e.NoSire, e.damIDs))
	}
	if len(e.Unserved) > 0 {
		fmt.Fprintf(&b, "; %d dam(s) left without a place (e.g. %s), the sires open to them being full (%s)",
			len(e.Unserved), e.names(e.Unserved, e.damIDs), e.names(e.FullSires, e.sireIDs))
	}
	return b.String()
}

// names lists up to 10 animals by id (or index).
func (e *InfeasibleError) names(idx []int, ids []string) string {
	var parts []string
	for i, k := range idx {
		if i == 10 {
			parts = append(parts, fmt.Sprintf("and %d more", len(idx)-10))
			break
		}
		if k < len(ids) {
			parts = append(parts, ids[k])
		} else {
			parts = append(parts, fmt.Sprint("#", k))
		}
	}
	return strings.Join(parts, ", ")
}

// Allocate returns the allocation of every dam to one sire that minimises
// the total (hence the mean) of cost over the chosen pairs, with no sire
// above its limit and no pair above the ceiling. cost is sires x dams.
//
// It is a transportation problem (Hitchcock 1941), solved exactly as a
// minimum-cost flow by successive shortest paths (Ford & Fulkerson 1962;
// Edmonds & Karp 1972, Journal of the ACM 19:248-264, for the potentials
// that keep Dijkstra's reduced costs non-negative): dams are added one at a
// time, and each is placed along a shortest augmenting path, which may move
// already placed dams from sire to sire. The flow after each step is of
// minimum cost for the dams placed so far, so the final plan is optimal.
// Because only sires have spare capacity, paths are searched over the sire
// nodes alone (O(sires^2) per dam): the cost of moving from sire a to sire
// b is the smallest c(d,b) - c(d,a) over the dams d on a, kept in one
// indexed heap per (a,b). Ties go to the lower index, so the result is
// deterministic. Costs are compared as float64: the total is optimal up to
// rounding of sums of the costs.
//
// An infeasible request returns an *InfeasibleError naming the dams that
// cannot be served (after placing all the others).
func Allocate(ctx context.Context, cost *Matrix, opt AllocOptions) (*Allocation, error) {
	nS, nD := cost.Sires, cost.Dams
	if len(opt.Limits) != nS {
		return nil, fmt.Errorf("mating: Allocate: %d limits for %d sires", len(opt.Limits), nS)
	}
	ceiling := opt.Ceiling
	if math.IsNaN(ceiling) {
		ceiling = math.Inf(1)
	}
	a := &allocator{nS: nS, nD: nD, c: make([]float64, nS*nD)}
	capTotal := 0
	a.capacity = make([]int, nS)
	for s, l := range opt.Limits {
		if l < 0 {
			return nil, fmt.Errorf("mating: Allocate: sire %d has a negative limit %d", s, l)
		}
		a.capacity[s] = min(l, nD)
		capTotal += a.capacity[s]
	}
	// Dam-major costs, +Inf where a pair may not be used.
	for s := 0; s < nS; s++ {
		for d := 0; d < nD; d++ {
			v := cost.V[s*nD+d]
			if math.IsNaN(v) || v > ceiling {
				v = math.Inf(1)
			}
			a.c[d*nS+s] = v
		}
	}
	a.init()
	ie := &InfeasibleError{Capacity: capTotal, Dams: nD, sireIDs: opt.SireIDs, damIDs: opt.DamIDs}
	for d := 0; d < nD; d++ {
		if d%256 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		row := a.c[d*nS : (d+1)*nS]
		open := false
		for _, v := range row {
			if !math.IsInf(v, 1) {
				open = true
				break
			}
		}
		if !open {
			ie.NoSire = append(ie.NoSire, d)
			continue
		}
		if !a.place(d) {
			ie.Unserved = append(ie.Unserved, d)
			ie.FullSires = ie.FullSires[:0]
			for s := 0; s < nS; s++ {
				if a.seen[s] {
					ie.FullSires = append(ie.FullSires, s)
				}
			}
		}
	}
	if len(ie.NoSire) > 0 || len(ie.Unserved) > 0 {
		return nil, ie
	}
	out := &Allocation{SireOf: make([]int, nD), Max: math.Inf(-1), Moves: a.moves}
	for d := 0; d < nD; d++ {
		s := int(a.sireOf[d])
		out.SireOf[d] = s
		v := cost.V[s*nD+d]
		out.Total += v
		out.Max = max(out.Max, v)
	}
	if nD > 0 {
		out.Mean = out.Total / float64(nD)
	} else {
		out.Max = math.NaN()
	}
	return out, nil
}

// allocator is the state of the successive-shortest-path solver.
type allocator struct {
	nS, nD   int
	c        []float64 // dam-major costs, +Inf for pairs not allowed
	capacity []int
	load     []int
	sireOf   []int32
	pos      []int32    // dam-major: position of dam d in heap (sireOf[d], b)
	heaps    []moveHeap // (a,b) -> dams on a keyed by c(d,b) - c(d,a)
	pi       []float64  // sire potentials
	piT      float64    // sink potential
	dist     []float64  // Dijkstra scratch
	seen     []bool     // settled in the last search
	prev     []int32    // previous sire on the path, -1 from the new dam
	prevDam  []int32    // dam moved along the edge into this sire
	moves    int64
}

type moveEntry struct {
	key float64
	dam int32
}

// moveHeap is a binary min-heap of dams by key, ties by dam index, with
// positions recorded in allocator.pos.
type moveHeap []moveEntry

func (a *allocator) init() {
	nS := a.nS
	a.load = make([]int, nS)
	a.sireOf = make([]int32, a.nD)
	for d := range a.sireOf {
		a.sireOf[d] = -1
	}
	a.pos = make([]int32, a.nD*nS)
	a.heaps = make([]moveHeap, nS*nS)
	a.pi = make([]float64, nS)
	a.dist = make([]float64, nS)
	a.seen = make([]bool, nS)
	a.prev = make([]int32, nS)
	a.prevDam = make([]int32, nS)
}

func less(x, y moveEntry) bool {
	return x.key < y.key || (x.key == y.key && x.dam < y.dam)
}

// up and down restore heap order around position i of heap (a,b).
func (a *allocator) up(h moveHeap, b, i int) {
	e := h[i]
	for i > 0 {
		p := (i - 1) / 2
		if !less(e, h[p]) {
			break
		}
		h[i] = h[p]
		a.pos[int(h[i].dam)*a.nS+b] = int32(i)
		i = p
	}
	h[i] = e
	a.pos[int(e.dam)*a.nS+b] = int32(i)
}

func (a *allocator) down(h moveHeap, b, i int) {
	e := h[i]
	n := len(h)
	for {
		l := 2*i + 1
		if l >= n {
			break
		}
		if r := l + 1; r < n && less(h[r], h[l]) {
			l = r
		}
		if !less(h[l], e) {
			break
		}
		h[i] = h[l]
		a.pos[int(h[i].dam)*a.nS+b] = int32(i)
		i = l
	}
	h[i] = e
	a.pos[int(e.dam)*a.nS+b] = int32(i)
}

// attach puts dam d on sire s and into the heaps (s, b).
func (a *allocator) attach(d int, s int) {
	nS := a.nS
	a.sireOf[d] = int32(s)
	row := a.c[d*nS : (d+1)*nS]
	cs := row[s]
	for b := 0; b < nS; b++ {
		if b == s {
			continue
		}
		hp := &a.heaps[s*nS+b]
		*hp = append(*hp, moveEntry{row[b] - cs, int32(d)})
		a.up(*hp, b, len(*hp)-1)
	}
}

// detach takes dam d off its sire's heaps.
func (a *allocator) detach(d int) {
	nS := a.nS
	s := int(a.sireOf[d])
	for b := 0; b < nS; b++ {
		if b == s {
			continue
		}
		hp := &a.heaps[s*nS+b]
		h := *hp
		i := int(a.pos[d*nS+b])
		last := len(h) - 1
		if i != last {
			h[i] = h[last]
			a.pos[int(h[i].dam)*nS+b] = int32(i)
			*hp = h[:last]
			a.down(*hp, b, i)
			a.up(*hp, b, i)
		} else {
			*hp = h[:last]
		}
	}
	a.sireOf[d] = -1
}

// place adds dam d along a shortest augmenting path; false when no sire
// with spare capacity can be reached.
func (a *allocator) place(d int) bool {
	nS := a.nS
	inf := math.Inf(1)
	row := a.c[d*nS : (d+1)*nS]
	for s := 0; s < nS; s++ {
		a.dist[s] = row[s] - a.pi[s] // +Inf stays +Inf
		a.seen[s] = false
		a.prev[s] = -1
		a.prevDam[s] = -1
	}
	distT, last := inf, -1
	for {
		u, du := -1, inf
		for s := 0; s < nS; s++ {
			if !a.seen[s] && a.dist[s] < du {
				u, du = s, a.dist[s]
			}
		}
		if u < 0 || du >= distT {
			break
		}
		a.seen[u] = true
		if a.load[u] < a.capacity[u] {
			if v := du + a.pi[u] - a.piT; v < distT {
				distT, last = v, u
			}
		}
		base := du + a.pi[u]
		hs := a.heaps[u*nS : (u+1)*nS]
		for b := 0; b < nS; b++ {
			if a.seen[b] || len(hs[b]) == 0 {
				continue
			}
			top := hs[b][0]
			if v := base + top.key - a.pi[b]; v < a.dist[b] {
				a.dist[b] = v
				a.prev[b] = int32(u)
				a.prevDam[b] = top.dam
			}
		}
	}
	if last < 0 {
		return false
	}
	// Potentials: pi += min(dist, distT) keeps reduced costs non-negative.
	for s := 0; s < nS; s++ {
		a.pi[s] += min(a.dist[s], distT)
	}
	a.piT += distT
	// Augment along the path, from its end back to the new dam.
	a.load[last]++
	cur := last
	for a.prev[cur] >= 0 {
		from, dm := int(a.prev[cur]), int(a.prevDam[cur])
		a.detach(dm)
		a.attach(dm, cur)
		a.moves++
		cur = from
	}
	a.attach(d, cur)
	return true
}
