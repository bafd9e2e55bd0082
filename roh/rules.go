package roh

import (
	"container/heap"
	"math"
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
// r.MaxKBPerSite. Resolving by length rather than by a left-to-right scan
// makes the result independent of the direction of the scan (up to exact
// length ties), which a greedy scan is not.
func rulesRuns(ch *chromData, s int, code []uint8, r *Rules, maxGap int64) []Run {
	n := len(code)
	hom := func(t int) bool { return code[t] == 0 || code[t] == 2 }
	var cands candHeap
	minBP := r.MinKB * 1000
	// ok applies the length, count and density thresholds; a window that
	// fails them has no part that passes, so it is never queued.
	ok := func(a, b int) bool {
		bp := float64(ch.pos[b] - ch.pos[a] + 1)
		ns := b - a + 1
		return bp >= minBP && ns >= r.MinSites && bp/1000/float64(ns) <= r.MaxKBPerSite
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
				pushTrimmed(&cands, ch, code, a, acc[k][0]-1, ok)
			}
			a = acc[k][1] + 1
		}
		if a <= c.b {
			pushTrimmed(&cands, ch, code, a, c.b, ok)
		}
	}
	runs := make([]Run, 0, len(acc))
	for _, w := range acc {
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

func pushTrimmed(h *candHeap, ch *chromData, code []uint8, a, b int, ok func(a, b int) bool) {
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
