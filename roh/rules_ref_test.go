package roh

import (
	"container/heap"
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// rulesRunsRef is the plain per-site version of rulesRuns, kept as the
// obviously-correct reference the fast path is compared with.
//
// A candidate run is a window of consecutive sites that starts and ends on
// a homozygous call, contains at most r.MaxHet heterozygous and
// r.MaxMissing missing calls, and has no two consecutive sites more than
// maxGap bp apart. The maximal candidates (not contained in another) may
// overlap; they are resolved longest first: a candidate is accepted
// unless it overlaps an accepted run, in which case its parts outside the
// accepted runs (trimmed to homozygous ends) become candidates again.
// Accepted runs must reach r.MinKB, r.MinSites and the density
// r.MinSitesPerMb. Resolving by length rather than by a left-to-right scan
// makes the result independent of the direction of the scan (up to exact
// length ties), which a greedy scan is not.
func rulesRunsRef(ch *chromData, s int, code []uint8, r *Rules, maxGap int64) []Run {
	n := len(code)
	hom := func(t int) bool { return code[t] == 0 || code[t] == 2 }
	var cands candHeap
	minBP := r.MinKB * 1000
	// ok applies the length, count and density thresholds; a window that
	// fails them has no part that passes, so it is never queued.
	ok := func(a, b int) bool {
		bp := float64(ch.pos[b] - ch.pos[a] + 1)
		ns := b - a + 1
		return bp >= minBP && ns >= r.MinSites && float64(ns)*1e6 >= r.MinSitesPerMb*bp
	}
	// segments between large gaps
	lo := 0
	for lo < n {
		hi := lo
		for hi+1 < n && ch.pos[hi+1]-ch.pos[hi] <= maxGap {
			hi++
		}
		// two pointers over [lo,hi]
		nh, nm := 0, 0
		right := lo - 1 // window is [l, right]
		lastEnd := -1
		for l := lo; l <= hi; l++ {
			if right < l-1 {
				right = l - 1
				nh, nm = 0, 0
			}
			for right+1 <= hi {
				g := code[right+1]
				if g == 1 && nh == r.MaxHet || g == 3 && nm == r.MaxMissing {
					break
				}
				right++
				if g == 1 {
					nh++
				} else if g == 3 {
					nm++
				}
			}
			if hom(l) {
				e := right
				for e >= l && !hom(e) {
					e--
				}
				if e >= l && e > lastEnd {
					if ok(l, e) {
						cands = append(cands, cand{ch.pos[e] - ch.pos[l] + 1, l, e})
					}
					lastEnd = e
				}
			}
			if right >= l { // drop l from the window
				switch code[l] {
				case 1:
					nh--
				case 3:
					nm--
				}
			}
		}
		lo = hi + 1
	}
	heap.Init(&cands)
	var acc [][2]int // accepted, sorted by start index
	for cands.Len() > 0 {
		c := heap.Pop(&cands).(cand)
		// first accepted run ending at or after c.a
		i := sort.Search(len(acc), func(i int) bool { return acc[i][1] >= c.a })
		if i == len(acc) || acc[i][0] > c.b {
			acc = append(acc, [2]int{})
			copy(acc[i+1:], acc[i:])
			acc[i] = [2]int{c.a, c.b}
			continue
		}
		// split around accepted runs
		a := c.a
		for k := i; k < len(acc) && acc[k][0] <= c.b; k++ {
			if acc[k][0]-1 >= a {
				pushTrimmedRef(&cands, ch, code, a, acc[k][0]-1, ok)
			}
			a = acc[k][1] + 1
		}
		if a <= c.b {
			pushTrimmedRef(&cands, ch, code, a, c.b, ok)
		}
	}
	runs := make([]Run, 0, len(acc))
	isHet := func(t int) bool { return code[t] == 1 }
	bad := func(t int) bool { return code[t] == 1 || code[t] == 3 }
	for _, w := range acc {
		w[0], w[1] = trimEdges(w[0], w[1], isHet, bad, r.EdgeHomSites)
		if w[0] > w[1] || !ok(w[0], w[1]) {
			continue
		}
		run := Run{Sample: s, Start: ch.pos[w[0]], End: ch.pos[w[1]], StartCM: ch.cm[w[0]], EndCM: ch.cm[w[1]],
			NSites: w[1] - w[0] + 1, Quality: math.NaN()}
		for t := w[0]; t <= w[1]; t++ {
			switch code[t] {
			case 1:
				run.NHet++
			case 3:
				run.NMissing++
			}
		}
		runs = append(runs, run)
	}
	return runs
}

func pushTrimmedRef(h *candHeap, ch *chromData, code []uint8, a, b int, ok func(a, b int) bool) {
	for a <= b && code[a] != 0 && code[a] != 2 {
		a++
	}
	for b >= a && code[b] != 0 && code[b] != 2 {
		b--
	}
	if a <= b && ok(a, b) {
		heap.Push(h, cand{ch.pos[b] - ch.pos[a] + 1, a, b})
	}
}

// rulesBoth runs the fast and the reference rule detectors on one
// sample's codes and reports whether they agree.
func rulesBoth(t *testing.T, codes []uint8, pos []int64, r Rules, maxGap int64) {
	t.Helper()
	ch := newChromData(0, "1", 0, 1)
	ch.pos = pos
	ch.cm = make([]float64, len(pos))
	ch.geno[0] = make([]uint64, (len(codes)+31)/32)
	for i, g := range codes {
		ch.geno[0][i>>5] |= uint64(g&3) << (uint(i&31) * 2)
	}
	var sc hmmScratch
	fast := rulesRuns(ch, 0, &sc, &r, maxGap)
	cs := make([]uint8, len(codes))
	ch.unpack(0, cs)
	ref := rulesRunsRef(ch, 0, cs, &r, maxGap)
	if len(fast) != len(ref) {
		t.Fatalf("fast %d runs, reference %d\nfast %+v\nref  %+v", len(fast), len(ref), fast, ref)
	}
	for i := range fast {
		f, g := fast[i], ref[i]
		if f.Start != g.Start || f.End != g.End || f.NSites != g.NSites || f.NHet != g.NHet || f.NMissing != g.NMissing {
			t.Fatalf("run %d: fast %+v, reference %+v", i, f, g)
		}
	}
}

// The event-based rule detector agrees with the per-site reference on
// random calls with stretches of homozygosity, gaps, and several
// threshold settings.
func TestRulesFastMatchesReference(t *testing.T) {
	rules := []Rules{
		{MaxHet: 0, MaxMissing: 0, MinKB: 0, MinSites: 1, MinSitesPerMb: 1e-6},
		{MaxHet: 1, MaxMissing: 2, MinKB: 100, MinSites: 5, MinSitesPerMb: 10},
		{MaxHet: 1, MaxMissing: 2, MinKB: 100, MinSites: 5, MinSitesPerMb: 10, EdgeHomSites: 10},
		{MaxHet: 3, MaxMissing: 1, MinKB: 500, MinSites: 20, MinSitesPerMb: 20, EdgeHomSites: 3},
		{MaxHet: 8, MaxMissing: 200, MinKB: 1000, MinSites: 100, MinSitesPerMb: 10},
	}
	rng := rand.New(rand.NewPCG(9, 9))
	for trial := 0; trial < 60; trial++ {
		n := 1 + rng.IntN(3000)
		codes := make([]uint8, n)
		pos := make([]int64, n)
		p := int64(0)
		inRun := false
		for i := range codes {
			p += 1 + rng.Int64N(20_000)
			if rng.IntN(300) == 0 {
				p += 2_000_000
			}
			pos[i] = p
			if rng.IntN(200) == 0 {
				inRun = !inRun
			}
			switch {
			case rng.IntN(50) == 0:
				codes[i] = 3
			case inRun && rng.IntN(100) != 0:
				codes[i] = uint8(2 * rng.IntN(2))
			default:
				codes[i] = uint8(rng.IntN(3))
			}
		}
		for _, r := range rules {
			rulesBoth(t, codes, pos, r, 1_000_000)
		}
	}
}

// FuzzRules compares the fast rule detector with the reference on
// arbitrary calls (2 bits per input byte) at 10 kb spacing.
func FuzzRules(f *testing.F) {
	f.Add([]byte{0, 2, 0, 1, 0, 0, 3, 2, 2, 1}, uint8(1), uint8(1))
	f.Add([]byte{1, 1, 1}, uint8(0), uint8(0))
	f.Fuzz(func(t *testing.T, data []byte, maxHet, maxMiss uint8) {
		if len(data) == 0 || len(data) > 5000 {
			return
		}
		codes := make([]uint8, len(data))
		pos := make([]int64, len(data))
		p := int64(0)
		for i, b := range data {
			codes[i] = b & 3
			p += 10_000
			if b&0x80 != 0 { // a gap over maxGap before this site
				p += 100_000
			}
			pos[i] = p
		}
		r := Rules{MaxHet: int(maxHet % 6), MaxMissing: int(maxMiss % 6), MinKB: 0, MinSites: 1, MinSitesPerMb: 1e-6,
			EdgeHomSites: int(maxHet / 6 % 4)}
		rulesBoth(t, codes, pos, r, 15_000)
	})
}
