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
// Cost: the walk starts at the joint mode and visits the outcomes within
// e^50 of the larger of the mode's and the observed outcome's probability
// (but none below e^-700 of the mode): about c*sd(mA)*sd(fAB) outcomes, a
// few multiplications each, with one logarithm per row. Rare variants
// have tiny outcome spaces; see BenchmarkHWEExactX for common ones.
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
	floor := math.Max(math.Min(0, logObs)-xTailCut, xFloorMin)
	linFloor := math.Exp(floor)
	pObs := math.Exp(logObs)            // relative to the reference; 0 when below e^-745
	tieObs := math.Exp(logObs + tieTol) // outcomes with v <= tieObs count as at most as probable
	var sTot, sTwo, sLow, sHigh float64 // all relative to the reference outcome

	// row sums one row, walking from its anchor (mid, value e^l) down and up.
	row := func(m, mid int64, l float64) float64 {
		lo, hi := x.hRange(m)
		best := math.Inf(-1)
		// Down from mid.
		v := math.Exp(l)
		for h := mid; ; {
			if v > best {
				best = v
			}
			sTot += v
			if v <= tieObs {
				sTwo += v
			}
			if h <= fAB {
				sLow += v
			}
			if h >= fAB {
				sHigh += v
			}
			if h-2 < lo {
				break
			}
			prev := v
			v /= x.up2(m, h-2)
			h -= 2
			if v < linFloor && v <= prev {
				break
			}
		}
		// Up from mid.
		v = math.Exp(l)
		for h := mid; h+2 <= hi; {
			prev := v
			v *= x.up2(m, h)
			h += 2
			if v > best {
				best = v
			}
			sTot += v
			if v <= tieObs {
				sTwo += v
			}
			if h <= fAB {
				sLow += v
			}
			if h >= fAB {
				sHigh += v
			}
			if v < linFloor && v <= prev {
				break
			}
		}
		if best == 0 {
			return math.Inf(-1)
		}
		return math.Log(best)
	}
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
			if b < floor && b < prev {
				break
			}
			prev = b
		}
	}
	// Results: sums over the total, computed as ratios (the total is at
	// least the reference term, 1).
	r.PObs = clamp01(pObs / sTot)
	r.P = clamp01(sTwo / sTot)
	r.Deficit = clamp01(sLow / sTot)
	r.Excess = clamp01(sHigh / sTot)
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
