package stats

import "math"

// xTailCut: outcomes whose probability lies more than e^50 below the
// larger of the mode's and the observed outcome's are not visited; each
// contributes less than 2e-22 of the sums it would enter, and the walk
// visits far fewer than 10^9 outcomes, so the relative effect on any
// result is below 1e-12.
const xTailCut = 50.0

// xFloorMin: outcomes below e^-700 relative to the reference outcome
// (near the mode) are not visited: divided by the total (at least 1),
// all of them together change no result by more than about 1e-290, so
// results below that are approximate (and below ~1e-308 read 0).
const xFloorMin = -700.0

// HWEExactX is the exact test for Hardy-Weinberg equilibrium at an
// X-chromosomal (hemizygous in males) biallelic site of Graffelman & Weir
// (2016, Heredity 116:558-568). It jointly tests Hardy-Weinberg
// proportions in females and equal allele frequencies in females and
// males, conditional on the numbers of females and males and on the total
// count of each allele over all 2*nF + nM X chromosomes.
//
// Arguments are the female genotype counts (fAA, fAB, fBB) and the male
// allele counts (mA, mB). Under the null, with nA = 2fAA + fAB + mA copies
// of allele A among N = 2nF + nM chromosomes, the probability of an
// outcome with mA males carrying A and fAB heterozygous females is
//
//	P(mA, fAB | nA) = nF! nM! 2^fAB / (fAA! fAB! fBB! mA! mB!) / C(N, nA)
//
// (the product of the females' multinomial and the males' binomial
// probabilities divided by the binomial probability of nA; the allele
// frequency cancels). The outcome space is two-dimensional (mA, fAB).
//
// P is the sum of the probabilities of every outcome at most as probable
// as the observed one (ties within a relative 1e-7, as in HWEExact); MidP
// is P minus half the observed outcome's probability (Graffelman & Moreno
// 2013). The one-sided tails concern the female heterozygote count under
// the same joint null: Deficit = P(fAB <= observed), small when females
// have too few heterozygotes; Excess = P(fAB >= observed), small when they
// have too many. PObs is the observed outcome's probability. ChiSq is NaN
// (the X test has no 1-df statistic for the inflation factor).
//
// With no males the test is HWEExact of the females' counts. The result
// is undefined (Computed false, NaN values) when there are no female calls
// (nothing to test: the male counts alone are the conditioning total) or
// the site is monomorphic among the tested samples.
//
// Cost: the walk starts near the joint mode and goes out row by row (male
// count mA); in each row it visits the outcomes within e^50 of the row's
// mode that some sum needs, and jumps (log-gamma bisection) to the
// stretches of tail that the two-sided and one-sided sums need beyond
// them, never below e^-700 of the mode. That is about 100*sd(mA)*sd(fAB)
// outcomes near equilibrium, a few multiplications each, and a few
// log-gamma evaluations per row for deviant sites. Rare variants have
// tiny outcome spaces. Measured (BenchmarkHWEExactX, CPU time, half of
// the samples male, machine load ~19 on 2 cores): n = 10^4 about 1 ms at
// equilibrium and 6 ms for a strongly deviant site; n = 10^5 about 10 ms
// and 26 ms. Results are exact to about 1e-12 relative (1e-10 where the
// log-gamma jumps are used at n ~ 10^5); p below ~1e-290 is approximate.
func HWEExactX(fAA, fAB, fBB, mA, mB int64) HWEResult {
	r := HWEResult{P: nan, MidP: nan, Deficit: nan, Excess: nan, PObs: nan, ChiSq: nan}
	if fAA < 0 || fAB < 0 || fBB < 0 || mA < 0 || mB < 0 {
		return r
	}
	nF := fAA + fAB + fBB
	nM := mA + mB
	nA := 2*fAA + fAB + mA
	nTot := 2*nF + nM
	if nF == 0 || nA == 0 || nA == nTot {
		return r
	}
	x := xSpace{nF: nF, nM: nM, nA: nA}
	// Reference outcome: near the joint mode (males at the expected count,
	// females at their row's mode).
	m0 := int64(math.Round(float64(nM) * float64(nA) / float64(nTot)))
	m0 = min(max(m0, x.mLo()), x.mHi())
	h0 := x.rowMid(m0)

	// Log-probability of the observed outcome relative to (m0, h0).
	logObs := 0.0
	{
		m, h, l := m0, h0, 0.0
		for m < mA {
			m, h, l = x.nextRow(m, h, l, +1)
		}
		for m > mA {
			m, h, l = x.nextRow(m, h, l, -1)
		}
		for h < fAB {
			l += math.Log(x.up2(m, h))
			h += 2
		}
		for h > fAB {
			h -= 2
			l -= math.Log(x.up2(m, h))
		}
		logObs = l
	}
	w := xWalk{x: &x, ho: fAB, logObs: logObs}
	w.floor = math.Max(math.Min(0, logObs)-xTailCut, xFloorMin)
	w.tieObs = math.Exp(logObs + tieTol)
	pObs := math.Exp(logObs) // relative to the reference; 0 when below e^-745
	row := w.row

	// Rows outward from m0 in both directions; stop a direction when a
	// row's largest term is below the floor and smaller than the previous
	// row's (the joint log-probability is concave in (mA, fAB) over the
	// reals, so row maxima only fall from there on).
	prevBest := row(m0, h0, 0)
	for dir := int64(-1); dir <= 1; dir += 2 {
		m, h, l := m0, h0, 0.0
		prev := prevBest
		for {
			if dir > 0 && m >= x.mHi() || dir < 0 && m <= x.mLo() {
				break
			}
			m, h, l = x.nextRow(m, h, l, dir)
			b := row(m, h, l)
			if b < w.floor && b < prev {
				break
			}
			prev = b
		}
	}
	// Results: sums over the total, computed as ratios (the total is at
	// least the reference term, 1).
	r.PObs = clamp01(pObs / w.sTot)
	r.P = clamp01(w.sTwo / w.sTot)
	r.Deficit = clamp01(w.sLow / w.sTot)
	r.Excess = clamp01(w.sHigh / w.sTot)
	r.MidP = clamp01(r.P - r.PObs/2)
	r.Computed = true
	return r
}

// xSpace is the outcome space of HWEExactX: rows mA (male A count), and in
// each row the female heterozygote counts h of the right parity.
type xSpace struct{ nF, nM, nA int64 }

// mLo and mHi bound the rows: mA in [max(0, nA-2nF), min(nM, nA)].
func (x *xSpace) mLo() int64 { return max(0, x.nA-2*x.nF) }
func (x *xSpace) mHi() int64 { return min(x.nM, x.nA) }

// hRange is the range of female heterozygote counts in row m: k = nA - m
// female A alleles, h in [k mod 2, min(k, 2nF-k)] in steps of 2.
func (x *xSpace) hRange(m int64) (lo, hi int64) {
	k := x.nA - m
	return k & 1, min(k, 2*x.nF-k)
}

// rowMid is a female heterozygote count near the mode of row m (the
// expected count k(2nF-k)/(2nF-1) rounded to the row's parity), as in the
// autosomal walk of Wigginton et al. (2005).
func (x *xSpace) rowMid(m int64) int64 {
	k := x.nA - m
	lo, hi := x.hRange(m)
	mid := int64(float64(k) * float64(2*x.nF-k) / float64(2*x.nF))
	if (mid-k)%2 != 0 {
		mid++
	}
	return min(max(mid, lo), hi)
}

// homs returns the female homozygote counts (A and B) at (m, h).
func (x *xSpace) homs(m, h int64) (hA, hB int64) {
	hA = (x.nA - m - h) / 2
	return hA, x.nF - h - hA
}

// up2 is P(m, h+2) / P(m, h) = 4 hA hB / ((h+1)(h+2)).
func (x *xSpace) up2(m, h int64) float64 {
	hA, hB := x.homs(m, h)
	return 4 * float64(hA) * float64(hB) / (float64(h+1) * float64(h+2))
}

// diagUp is P(m+1, h+1) / P(m, h) = 2 hA mB / ((h+1)(m+1)); it is zero
// when (m+1, h+1) lies outside the space (hA = 0).
func (x *xSpace) diagUp(m, h int64) float64 {
	hA, _ := x.homs(m, h)
	return 2 * float64(hA) * float64(x.nM-m) / (float64(h+1) * float64(m+1))
}

// diagDown is P(m+1, h-1) / P(m, h) = h mB / (2 (hB+1)(m+1)); zero when
// h = 0.
func (x *xSpace) diagDown(m, h int64) float64 {
	_, hB := x.homs(m, h)
	return float64(h) * float64(x.nM-m) / (2 * float64(hB+1) * float64(m+1))
}

// nextRow moves from (m, h) with log-probability l to row m+dir (dir +1
// or -1), landing on that row's rowMid, and returns the new point and its
// log-probability. The caller guarantees that row m+dir exists.
func (x *xSpace) nextRow(m, h int64, l float64, dir int64) (int64, int64, float64) {
	var m2, h2 int64
	if dir > 0 {
		// One diagonal step from (m, h) to (m+1, h±1).
		m2 = m + 1
		if h >= 1 {
			h2 = h - 1
			l += math.Log(x.diagDown(m, h))
		} else {
			h2 = h + 1
			l += math.Log(x.diagUp(m, h))
		}
	} else {
		// (m-1, h') with (m-1, h') -> (m, h) a diagonal step.
		m2 = m - 1
		if h >= 1 {
			h2 = h - 1 // (m-1, h-1) -> (m, h) is diagUp from the lower point
			l -= math.Log(x.diagUp(m2, h2))
		} else {
			h2 = h + 1 // (m-1, h+1) -> (m, h) is diagDown from the lower point
			l -= math.Log(x.diagDown(m2, h2))
		}
	}
	mid := x.rowMid(m2)
	for h2 < mid {
		l += math.Log(x.up2(m2, h2))
		h2 += 2
	}
	for h2 > mid {
		h2 -= 2
		l -= math.Log(x.up2(m2, h2))
	}
	return m2, h2, l
}

// xWalk sums the rows of HWEExactX. All values are relative to the
// reference outcome (near the joint mode).
type xWalk struct {
	x                       *xSpace
	ho                      int64   // observed female heterozygote count
	logObs, floor           float64 // log of the observed outcome; walk floor
	tieObs                  float64 // linear: terms <= tieObs are at most as probable as the observed
	sTot, sTwo, sLow, sHigh float64
	m                       int64 // current row
	lm, gm                  float64
	hm                      int64
}

// add puts one outcome (h, linear value v) into every sum it belongs to.
func (w *xWalk) add(h int64, v float64) {
	w.sTot += v
	if v <= w.tieObs {
		w.sTwo += v
	}
	if h <= w.ho {
		w.sLow += v
	}
	if h >= w.ho {
		w.sHigh += v
	}
}

// g is the h-dependent part of the log-probability of (w.m, h).
func (w *xWalk) g(h int64) float64 {
	hA, hB := w.x.homs(w.m, h)
	a, _ := math.Lgamma(float64(hA) + 1)
	b, _ := math.Lgamma(float64(h) + 1)
	c, _ := math.Lgamma(float64(hB) + 1)
	return float64(h)*math.Ln2 - a - b - c
}

// lAt is the log-probability of (w.m, h) from the row's mode by
// log-gamma (used to jump over outcomes no sum needs).
func (w *xWalk) lAt(h int64) float64 { return w.lm + w.g(h) - w.gm }

// row sums row m whose anchor mid has log-probability l, and returns the
// row's largest log-probability. In each direction from the row's mode it
// visits (1) the outcomes within e^xTailCut of the mode (for the total
// and the tails that contain the mode), (2) when the observed outcome is
// less probable than those, the outcomes at most as probable as it, from
// where the row crosses its probability down to e^xTailCut below it,
// found by bisection on log-gamma values, and (3) when the observed
// heterozygote count lies beyond the mode's window, the outcomes from it
// outwards down to e^xTailCut below its probability (the one-sided tail
// in this row). Everything else is below e^-xTailCut of some term already
// in each sum it belongs to (or below the floor). Every visited outcome is
// tested for every sum, and none is visited twice.
func (w *xWalk) row(m, mid int64, l float64) float64 {
	x := w.x
	w.m = m
	lo, hi := x.hRange(m)
	// Climb from mid to the row's mode (rows are log-concave in h).
	hm, lm := mid, l
	for hm+2 <= hi {
		r := x.up2(m, hm)
		if r <= 1 {
			break
		}
		lm += math.Log(r)
		hm += 2
	}
	if hm == mid {
		for hm-2 >= lo {
			r := x.up2(m, hm-2)
			if r >= 1 {
				break
			}
			lm -= math.Log(r)
			hm -= 2
		}
	}
	w.hm, w.lm, w.gm = hm, lm, 0
	jumps := lm-xTailCut > w.floor // is anything beyond the mode's window needed?
	mode := true
	if jumps {
		w.gm = w.g(hm)
		// The mode's window matters to the total only within e^xTailCut
		// of the reference, to the two-sided sum only when the whole row
		// is at most as probable as the observed outcome, and to a
		// one-sided tail containing the mode only within e^xTailCut of
		// that tail's sum so far (a lower bound of its final value, as
		// rows are visited from the centre outwards).
		mode = lm >= -xTailCut || lm <= w.logObs+tieTol ||
			hm <= w.ho && !(lm < math.Log(w.sLow)-xTailCut) ||
			hm >= w.ho && !(lm < math.Log(w.sHigh)-xTailCut)
	}
	w.side(lo, hi, -1, jumps, mode)
	w.side(lo, hi, +1, jumps, mode)
	return lm
}

// side walks one direction (dir -1: h below the mode, the mode included;
// +1: above it). jumps: windows beyond the mode's may be needed (and
// w.gm is set); mode: the mode's own window is needed.
func (w *xWalk) side(lo, hi, dir int64, jumps, mode bool) {
	x := w.x
	m, hm, lm := w.m, w.hm, w.lm
	type window struct {
		start int64
		thr   float64 // stop below this log-probability
	}
	var wins [3]window
	n := 0
	first := hm
	if dir > 0 {
		first = hm + 2
	}
	if first < lo || first > hi {
		return
	}
	if mode {
		wins[n] = window{first, math.Max(w.floor, lm-xTailCut)}
		n++
	}
	inRange := func(h int64) bool { return h >= lo && h <= hi && (dir < 0 && h <= hm || dir > 0 && h > hm) }
	if jumps {
		// Crossing of the observed probability.
		c := w.logObs + tieTol
		if lm > c {
			// Outcomes k steps from the mode: h = hm + dir*2k.
			far := (hm - lo) / 2
			if dir > 0 {
				far = (hi - hm) / 2
			}
			if far > 0 && w.lAt(hm+dir*2*far) <= c {
				a, b := int64(0), far // lAt(hm+dir*2a) > c >= lAt(hm+dir*2b)
				for b-a > 1 {
					k := (a + b) / 2
					if w.lAt(hm+dir*2*k) <= c {
						b = k
					} else {
						a = k
					}
				}
				if h := hm + dir*2*b; inRange(h) {
					wins[n] = window{h, math.Max(w.floor, w.logObs-xTailCut)}
					n++
				}
			}
		}
		// The one-sided tail beyond the observed count: its first member
		// of the row's parity.
		t := w.ho
		if (t-lo)%2 != 0 {
			t -= dir
		}
		if inRange(t) && (t-hm)*dir > 0 {
			wins[n] = window{t, math.Max(w.floor, w.lAt(t)-xTailCut)}
			n++
		}
	}
	// Visit windows in walking order; a window starting inside ground
	// already covered continues from where the walk stopped.
	ws := wins[:n]
	for i := 1; i < len(ws); i++ { // insertion sort by distance from the mode
		for j := i; j > 0 && (ws[j].start-ws[j-1].start)*dir < 0; j-- {
			ws[j], ws[j-1] = ws[j-1], ws[j]
		}
	}
	next := first // first unvisited h in walking order
	var v float64 // value at next-dir (the last visited)
	visited := false
	for _, win := range ws {
		h := win.start
		var cur float64
		if visited && (h-next)*dir <= 0 {
			h = next // continue the walk
			if dir < 0 {
				cur = v / x.up2(m, h)
			} else {
				cur = v * x.up2(m, h-2)
			}
		} else if h == hm {
			cur = math.Exp(lm)
		} else if !visited && h == first {
			cur = math.Exp(lm) * x.up2(m, hm)
		} else {
			cur = math.Exp(w.lAt(h))
		}
		linThr := math.Exp(win.thr)
		for {
			w.add(h, cur)
			v, visited = cur, true
			next = h + 2*dir
			if next < lo || next > hi || cur < linThr {
				break
			}
			h = next
			if dir < 0 {
				cur /= x.up2(m, h)
			} else {
				cur *= x.up2(m, h-2)
			}
		}
		if next < lo || next > hi {
			return
		}
	}
}
