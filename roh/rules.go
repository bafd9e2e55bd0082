package roh

import (
	"container/heap"
	"math"
	"math/bits"
	"sort"
)

// rulesRuns is the rule-based detector for one sample on one chromosome.
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
//
// It works on the packed calls: only the heterozygous and missing calls
// ("events", found 32 sites at a time with bit masks) are visited, since a
// maximal window always starts just after an event and ends just before
// one. rulesRunsRef in the tests is the plain per-site version it is
// checked against.
func rulesRuns(ch *chromData, s int, sc *hmmScratch, r *Rules, maxGap int64) []Run {
	n := len(ch.pos)
	words := ch.geno[s]
	// events: sites whose code has the low bit set (1 het, 3 missing)
	ev, kind := sc.ev[:0], sc.kind[:0]
	for w, v := range words {
		m := v & 0x5555555555555555
		for m != 0 {
			tz := bits.TrailingZeros64(m)
			t := w*32 + tz/2
			if t >= n {
				break
			}
			ev = append(ev, int32(t))
			kind = append(kind, uint8(v>>uint(tz))&3)
			m &= m - 1
		}
	}
	sc.ev, sc.kind = ev, kind
	bad := func(t int) bool { return words[t>>5]>>(uint(t&31)*2)&1 != 0 }

	var cands candHeap
	minBP := r.MinKB * 1000
	// ok applies the length, count and density thresholds; a window that
	// fails them has no part that passes, so it is never queued.
	ok := func(a, b int) bool {
		bp := float64(ch.pos[b] - ch.pos[a] + 1)
		ns := b - a + 1
		return bp >= minBP && ns >= r.MinSites && float64(ns)*1e6 >= r.MinSitesPerMb*bp
	}
	e0 := 0 // first event of the current segment
	lo := 0
	for lo < n {
		hi := lo
		for hi+1 < n && ch.pos[hi+1]-ch.pos[hi] <= maxGap {
			hi++
		}
		e1 := e0 // events of [lo, hi] are ev[e0:e1]
		for e1 < len(ev) && int(ev[e1]) <= hi {
			e1++
		}
		E, K := ev[e0:e1], kind[e0:e1]
		nE := len(E)
		// window after event i (i = -1: from lo) includes events i+1..j
		j := -1
		nh, nm := 0, 0
		lastEnd := -1
		for i := -1; i < nE; i++ {
			if i >= 0 { // event i leaves the window
				if j >= i {
					if K[i] == 1 {
						nh--
					} else {
						nm--
					}
				} else {
					j = i
					nh, nm = 0, 0
				}
			}
			start := lo
			if i >= 0 {
				start = int(E[i]) + 1
			}
			for j+1 < nE {
				k := K[j+1]
				if k == 1 && nh == r.MaxHet || k == 3 && nm == r.MaxMissing {
					break
				}
				j++
				if k == 1 {
					nh++
				} else {
					nm++
				}
			}
			if start > hi || (i+1 < nE && int(E[i+1]) == start) {
				continue // starts on an event: inside the next window
			}
			end := hi
			if j+1 < nE {
				end = int(E[j+1]) - 1
			}
			for jj := j; jj > i && int(E[jj]) == end; jj-- {
				end--
			}
			if end >= start && end > lastEnd {
				if ok(start, end) {
					cands = append(cands, cand{ch.pos[end] - ch.pos[start] + 1, start, end})
				}
				lastEnd = end
			}
		}
		e0 = e1
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
				pushTrimmed(&cands, ch, bad, a, acc[k][0]-1, ok)
			}
			a = acc[k][1] + 1
		}
		if a <= c.b {
			pushTrimmed(&cands, ch, bad, a, c.b, ok)
		}
	}
	runs := make([]Run, 0, len(acc))
	isHet := func(t int) bool { return words[t>>5]>>(uint(t&31)*2)&3 == 1 }
	for _, w := range acc {
		w[0], w[1] = trimEdges(w[0], w[1], isHet, bad, r.EdgeHomSites)
		if w[0] > w[1] || !ok(w[0], w[1]) {
			continue
		}
		run := Run{Sample: s, Start: ch.pos[w[0]], End: ch.pos[w[1]], StartCM: ch.cm[w[0]], EndCM: ch.cm[w[1]],
			NSites: w[1] - w[0] + 1, Quality: math.NaN()}
		k := sort.Search(len(ev), func(k int) bool { return int(ev[k]) >= w[0] })
		for ; k < len(ev) && int(ev[k]) <= w[1]; k++ {
			if kind[k] == 1 {
				run.NHet++
			} else {
				run.NMissing++
			}
		}
		runs = append(runs, run)
	}
	return runs
}

// trimEdges shortens the accepted run [a, b] so that every heterozygous
// call in it has at least edge homozygous calls between it and each end.
// Near a boundary of a true autozygous stretch, a tolerated heterozygote
// followed by a few homozygous calls is more likely the boundary than a
// genotyping error: without this, runs overshoot their true ends by a few
// sites on average and F_ROH is biased upward. It returns a > b when
// nothing is left.
func trimEdges(a, b int, isHet, bad func(int) bool, edge int) (int, int) {
	if edge <= 0 {
		return a, b
	}
	for changed := true; changed && a <= b; {
		changed = false
		hom := 0
		for t := b; t >= a && hom < edge; t-- {
			if isHet(t) {
				b = t - 1
				for b >= a && bad(b) {
					b--
				}
				changed = true
				break
			}
			if !bad(t) {
				hom++
			}
		}
		hom = 0
		for t := a; t <= b && hom < edge; t++ {
			if isHet(t) {
				a = t + 1
				for a <= b && bad(a) {
					a++
				}
				changed = true
				break
			}
			if !bad(t) {
				hom++
			}
		}
	}
	return a, b
}

func pushTrimmed(h *candHeap, ch *chromData, bad func(int) bool, a, b int, ok func(a, b int) bool) {
	for a <= b && bad(a) {
		a++
	}
	for b >= a && bad(b) {
		b--
	}
	if a <= b && ok(a, b) {
		heap.Push(h, cand{ch.pos[b] - ch.pos[a] + 1, a, b})
	}
}

type cand struct {
	bp   int64
	a, b int
}

// candHeap pops the longest candidate first (ties: more sites, then
// earlier start).
type candHeap []cand

func (h candHeap) Len() int { return len(h) }
func (h candHeap) Less(i, j int) bool {
	if h[i].bp != h[j].bp {
		return h[i].bp > h[j].bp
	}
	if h[i].b-h[i].a != h[j].b-h[j].a {
		return h[i].b-h[i].a > h[j].b-h[j].a
	}
	return h[i].a < h[j].a
}
func (h candHeap) Swap(i, j int) { h[i], h[j] = h[j], h[i] }
func (h *candHeap) Push(x any)   { *h = append(*h, x.(cand)) }
func (h *candHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}
