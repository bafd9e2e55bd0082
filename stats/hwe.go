package stats

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// HWEResult holds the Hardy-Weinberg test of one genotype-count triple.
// Undefined values (monomorphic site, no calls) are NaN.
type HWEResult struct {
	P        float64 // two-sided p
	MidP     float64 // P - P(observed)/2
	Deficit  float64 // P(n_het <= observed): small for a heterozygote deficit
	Excess   float64 // P(n_het >= observed): small for a heterozygote excess
	PObs     float64 // probability of the observed count given n and allele counts (NaN for chisq)
	ChiSq    float64 // Pearson 1-df statistic, for the inflation factor
	Computed bool    // false when the test is undefined
}

// tieTol is the relative tolerance under which another outcome counts as
// being as probable as the observed one (ties in the exact test's
// definition; log scale).
var tieTol = math.Log1p(1e-7)

// tailCut: outcomes whose log-probability lies this far below every
// reference used are dropped (relative contribution < e^-80 each).
const tailCut = 80.0

// HWEExact is the exact test of Hardy-Weinberg equilibrium of Wigginton,
// Cutler & Abecasis (2005, Am J Hum Genet 76:887-893) for nAA, nAB, nBB
// diploid genotype counts. The two-sided p is the sum of the
// probabilities of every outcome with the same n and allele counts whose
// probability does not exceed the observed one's (compared with a relative
// tolerance of 1e-7, so that exact ties are counted as the definition
// intends). MidP follows Graffelman & Moreno (2013, Stat Appl Genet Mol
// Biol 12:433-448): p minus half the observed outcome's probability.
//
// Probabilities are carried as logarithms relative to the outcome near
// the mode, and sums are formed relative to their largest term, so n up to
// millions neither overflows nor underflows (p below ~1e-308 reads 0).
// Outcomes more than e^80 less probable than every reference are skipped,
// so the cost is O(min(minor allele count, sqrt(n)*c)).
func HWEExact(nAA, nAB, nBB int64) HWEResult {
	r := HWEResult{P: math.NaN(), MidP: math.NaN(), Deficit: math.NaN(), Excess: math.NaN(), PObs: math.NaN(), ChiSq: math.NaN()}
	n := nAA + nAB + nBB
	if n == 0 || nAA < 0 || nAB < 0 || nBB < 0 {
		return r
	}
	homR, homC := nAA, nBB
	if homR > homC {
		homR, homC = homC, homR
	}
	nRare := 2*homR + nAB // rare allele copies, <= n
	if nRare == 0 {
		return r
	}
	nCom := 2*n - nRare
	r.ChiSq = chiSqStat(nAA, nAB, nBB)
	// Start near the mode (Wigginton et al. 2005, appendix), matching parity.
	mid := int64(float64(nRare) * float64(nCom) / float64(2*n))
	if (nRare-mid)%2 != 0 {
		mid++
	}
	if mid > nRare {
		mid -= 2
	}
	obs := nAB
	// logStep returns log P(h+2)/P(h).
	logUp := func(h int64) float64 {
		hr := (nRare - h) / 2
		hc := n - h - hr
		return math.Log(4 * float64(hr) * float64(hc) / (float64(h+2) * float64(h+1)))
	}
	// Pass 1: the log-probability of the observed count relative to mid.
	logObs := 0.0
	for h := mid; h < obs; h += 2 {
		logObs += logUp(h)
	}
	for h := mid; h > obs; h -= 2 {
		logObs -= logUp(h - 2)
	}
	// References for the sums (their sets' largest terms, or above).
	refTwo := logObs
	refLow, refHigh := logObs, logObs
	if obs > mid {
		refLow = math.Max(0, logObs)
	}
	if obs < mid {
		refHigh = math.Max(0, logObs)
	}
	floor := math.Min(0, logObs) - tailCut
	var sTot, sTwo, sLow, sHigh float64
	// Every reference is logObs or 0 (refTwo is logObs; refLow and refHigh
	// are logObs or max(0, logObs)), and l-0 is l exactly, so each term
	// needs at most two exponentials, exp(l) and exp(l-logObs), instead of
	// one per sum; the sums are bit-for-bit those of one exponential per
	// sum and reference (TestHWEExactSharedExp).
	lowObs, highObs := refLow != 0, refHigh != 0 // reference is logObs (not 0)
	add := func(h int64, l float64) {
		e := math.Exp(l)
		sTot += e
		eo, haveEo := 0.0, false
		obsTerm := func() float64 {
			if !haveEo {
				eo, haveEo = math.Exp(l-logObs), true
			}
			return eo
		}
		if l <= logObs+tieTol {
			sTwo += obsTerm()
		}
		if h <= obs {
			if lowObs {
				sLow += obsTerm()
			} else {
				sLow += e
			}
		}
		if h >= obs {
			if highObs {
				sHigh += obsTerm()
			} else {
				sHigh += e
			}
		}
	}
	// negligible reports whether no later term of a walk can change any
	// sum: the walk is past the mode (the distribution is log-concave, so
	// terms only shrink from there), every sum already holds a term of 1
	// (the mode's or the observed outcome's, relative to its reference),
	// and both exponentials of this term are below 2^-54 (e^-38 < 2^-54),
	// less than half an ulp of a sum >= 1, so adding them or any smaller
	// term rounds back to the same sum. Stopping there gives bit-for-bit
	// the sums of the walk to the tailCut floor.
	negligible := func(l, prev float64) bool {
		return l < prev && l < -38 && l-logObs < -38 && sTwo >= 1 && sLow >= 1 && sHigh >= 1
	}
	// Pass 2: walk down and up from mid, accumulating.
	l := 0.0
	for h := mid; h >= nRare%2; h -= 2 {
		prev := l
		if h != mid {
			l -= logUp(h)
		}
		add(h, l)
		if h <= obs && l < floor || negligible(l, prev) {
			break
		}
	}
	l = 0
	for h := mid + 2; h <= nRare; h += 2 {
		prev := l
		l += logUp(h - 2)
		add(h, l)
		if h >= obs && l < floor || negligible(l, prev) {
			break
		}
	}
	logTot := math.Log(sTot)
	pObs := math.Exp(logObs - logTot)
	r.P = clamp01(sTwo * math.Exp(refTwo-logTot))
	r.Deficit = clamp01(sLow * math.Exp(refLow-logTot))
	r.Excess = clamp01(sHigh * math.Exp(refHigh-logTot))
	r.MidP = clamp01(r.P - pObs/2)
	r.PObs = pObs
	r.Computed = true
	return r
}

// chiSqStat is Pearson's 1-df goodness-of-fit statistic for
// Hardy-Weinberg proportions, n (4 nAA nBB - nAB^2)^2 / ((2nAA+nAB)^2 (2nBB+nAB)^2)
// (common practice).
func chiSqStat(nAA, nAB, nBB int64) float64 {
	n := float64(nAA + nAB + nBB)
	a, h, b := float64(nAA), float64(nAB), float64(nBB)
	d := 4*a*b - h*h
	den := (2*a + h) * (2*b + h)
	if den == 0 {
		return math.NaN()
	}
	return n * (d / den) * (d / den)
}

var chi1 = distuv.ChiSquared{K: 1}

// HWEChiSq is the 1-df chi-square test of Hardy-Weinberg proportions, an
// alternative to HWEExact for very large samples where every cell is well
// filled (common practice). Its one-sided p-values come from the normal
// approximation z = sign(f)*sqrt(X^2) with f = 1 - Ho/He (positive for a
// heterozygote deficit): Deficit = P(Z >= z), Excess = P(Z <= z). MidP
// and PObs have no meaning here and are NaN.
func HWEChiSq(nAA, nAB, nBB int64) HWEResult {
	r := HWEResult{P: math.NaN(), MidP: math.NaN(), Deficit: math.NaN(), Excess: math.NaN(), PObs: math.NaN(), ChiSq: math.NaN()}
	n := nAA + nAB + nBB
	if n == 0 || (2*nAA+nAB) == 0 || (2*nBB+nAB) == 0 {
		return r
	}
	x := chiSqStat(nAA, nAB, nBB)
	r.ChiSq = x
	r.P = clamp01(chi1.Survival(x))
	z := math.Sqrt(x)
	// Sign: deficit when 4 nAA nBB > nAB^2.
	if 4*float64(nAA)*float64(nBB) < float64(nAB)*float64(nAB) {
		z = -z
	}
	r.Deficit = clamp01(0.5 * math.Erfc(z/math.Sqrt2))
	r.Excess = clamp01(0.5 * math.Erfc(-z/math.Sqrt2))
	r.Computed = true
	return r
}

func clamp01(x float64) float64 {
	switch {
	case x < 0:
		return 0
	case x > 1:
		return 1
	}
	return x
}

// hweCache memoises test results by genotype-count triple for one worker.
// It is bounded: when full it is emptied (results are a pure function of
// the key, so output does not depend on cache state).
type hweCache struct {
	chisq bool
	m     map[[3]int64]HWEResult
	max   int
}

func newHWECache(chisq bool, max int) *hweCache {
	return &hweCache{chisq: chisq, m: make(map[[3]int64]HWEResult), max: max}
}

func (c *hweCache) test(nAA, nAB, nBB int64) HWEResult {
	k := [3]int64{nAA, nAB, nBB}
	if r, ok := c.m[k]; ok {
		return r
	}
	var r HWEResult
	if c.chisq {
		r = HWEChiSq(nAA, nAB, nBB)
	} else {
		r = HWEExact(nAA, nAB, nBB)
	}
	if len(c.m) >= c.max {
		clear(c.m)
	}
	c.m[k] = r
	return r
}
