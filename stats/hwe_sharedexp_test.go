package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestHWEExactSharedExp checks that HWEExact, which shares exponentials
// between its sums, returns bit-for-bit the results of the plain
// formulation with one exponential per sum (hweExactFourExp, the earlier
// implementation kept here as the reference, which walks every outcome to
// the tailCut floor) over every count triple with n <= 40 and random
// triples up to n = 20,500.
func TestHWEExactSharedExp(t *testing.T) {
	check := func(a, h, b int64) {
		got, want := HWEExact(a, h, b), hweExactFourExp(a, h, b)
		same := func(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) || (x != x && y != y) }
		if !same(got.P, want.P) || !same(got.MidP, want.MidP) || !same(got.Deficit, want.Deficit) ||
			!same(got.Excess, want.Excess) || !same(got.PObs, want.PObs) || !same(got.ChiSq, want.ChiSq) || got.Computed != want.Computed {
			t.Fatalf("(%d,%d,%d): got %+v, reference %+v", a, h, b, got, want)
		}
	}
	for n := int64(0); n <= 40; n++ {
		for a := int64(0); a <= n; a++ {
			for h := int64(0); a+h <= n; h++ {
				check(a, h, n-a-h)
			}
		}
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 3000; i++ {
		n := 1 + rng.Int64N(5000)
		a := rng.Int64N(n + 1)
		h := rng.Int64N(n - a + 1)
		check(a, h, n-a-h)
		// and near Hardy-Weinberg proportions, where most outcomes fall
		q := rng.Float64()
		a = int64(float64(n)*(1-q)*(1-q)) + rng.Int64N(5)
		h = int64(float64(n)*2*q*(1-q)) + rng.Int64N(5)
		if a+h <= n {
			check(a, h, n-a-h)
		}
	}
	// Large cohorts near Hardy-Weinberg proportions, where the walks stop
	// early on negligible terms.
	for i := 0; i < 3000; i++ {
		n := 500 + rng.Int64N(20000)
		q := rng.Float64()
		a := int64(float64(n)*(1-q)*(1-q)) + rng.Int64N(41) - 20
		h := int64(float64(n)*2*q*(1-q)) + rng.Int64N(41) - 20
		if a >= 0 && h >= 0 && a+h <= n {
			check(a, h, n-a-h)
		}
	}
}

func hweExactFourExp(nAA, nAB, nBB int64) HWEResult {
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
	add := func(h int64, l float64) {
		sTot += math.Exp(l)
		if l <= logObs+tieTol {
			sTwo += math.Exp(l - refTwo)
		}
		if h <= obs {
			sLow += math.Exp(l - refLow)
		}
		if h >= obs {
			sHigh += math.Exp(l - refHigh)
		}
	}
	// Pass 2: walk down and up from mid, accumulating.
	l := 0.0
	for h := mid; h >= nRare%2; h -= 2 {
		if h != mid {
			l -= logUp(h)
		}
		add(h, l)
		if h <= obs && l < floor {
			break
		}
	}
	l = 0
	for h := mid + 2; h <= nRare; h += 2 {
		l += logUp(h - 2)
		add(h, l)
		if h >= obs && l < floor {
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

// BenchmarkHWEExactShared compares HWEExact with the one-exponential-per-sum
// reference on counts near Hardy-Weinberg proportions at n = 1,000.
func BenchmarkHWEExactShared(b *testing.B) {
	for _, tc := range []struct {
		name string
		f    func(a, h, b int64) HWEResult
	}{{"shared", HWEExact}, {"four_exp", hweExactFourExp}} {
		b.Run(tc.name, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				tc.f(300, 500, 200+int64(i%50))
			}
		})
	}
}
