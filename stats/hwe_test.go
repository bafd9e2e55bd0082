package stats

import (
	"bufio"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// hweDefinition enumerates every outcome directly from the closed form of
// Levene (1949) as restated by Wigginton et al. (2005, eq. 2), using
// log-gamma, and sums the outcomes at most as probable as the observed one
// (relative tolerance 1e-7). It is an independent, obviously-correct path
// used for tie rows and for one-sided checks.
func hweDefinition(nAA, nAB, nBB int64) (p, pObs, low, high float64) {
	n := nAA + nAB + nBB
	nA := 2*nAA + nAB
	nB := 2*nBB + nAB
	lf := func(x int64) float64 { v, _ := math.Lgamma(float64(x) + 1); return v }
	logP := func(h int64) float64 {
		a := (nA - h) / 2
		b := (nB - h) / 2
		return lf(n) + lf(nA) + lf(nB) + float64(h)*math.Ln2 - lf(a) - lf(h) - lf(b) - lf(2*n)
	}
	lo := nA % 2
	hi := nA
	if nB < hi {
		hi = nB
	}
	lobs := logP(nAB)
	pObs = math.Exp(lobs)
	for h := lo; h <= hi; h += 2 {
		l := logP(h)
		if l <= lobs+math.Log1p(1e-7) {
			p += math.Exp(l)
		}
		if h <= nAB {
			low += math.Exp(l)
		}
		if h >= nAB {
			high += math.Exp(l)
		}
	}
	return
}

// TestHWEExactGrid compares with testdata/expected/hwe_exact_grid.tsv:
// R package genetics 1.3.8.1.3, HWE.exact (shared/reference tools/hwe_grid.R),
// every polymorphic triple with 2 <= n <= 30 plus 300 random triples up to
// n = 5000. R values above 1 (summation rounding) are clamped to 1. Rows
// flagged tie_in_probability = 1 are checked against the published
// definition instead (HWE.exact counts only the ties that sort first; see
// shared/reference/README.md).
func TestHWEExactGrid(t *testing.T) {
	f, err := os.Open("../testdata/expected/hwe_exact_grid.tsv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Scan() // header
	var rows, ties, maxRel float64
	for sc.Scan() {
		fl := strings.Split(sc.Text(), "\t")
		var c [3]int64
		for i := range c {
			c[i], _ = strconv.ParseInt(fl[i], 10, 64)
		}
		want, _ := strconv.ParseFloat(fl[3], 64)
		want = math.Min(want, 1)
		got := HWEExact(c[0], c[1], c[2])
		if fl[4] == "1" {
			ties++
			def, _, _, _ := hweDefinition(c[0], c[1], c[2])
			if rel := math.Abs(got.P-def) / def; rel > 1e-9 {
				t.Errorf("tie row %v: p=%v, definition %v", c, got.P, def)
			}
			continue
		}
		rows++
		if want == 0 { // R prints 0 for p below its double range
			if got.P > 1e-300 {
				t.Errorf("%v: p=%v, R HWE.exact 0", c, got.P)
			}
			continue
		}
		rel := math.Abs(got.P-want) / want
		maxRel = math.Max(maxRel, rel)
		if rel > 1e-9 {
			t.Errorf("%v: p=%.17g, R HWE.exact %.17g (rel %.3g)", c, got.P, want, rel)
		}
		// Identities (definition of mid-p, Graffelman & Moreno 2013; one-sided tails).
		if d := got.MidP - (got.P - got.PObs/2); math.Abs(d) > 1e-12 {
			t.Errorf("%v: midp identity off by %v", c, d)
		}
		if d := got.Deficit + got.Excess - got.PObs - 1; math.Abs(d) > 1e-12 {
			t.Errorf("%v: deficit+excess-P(obs)-1 = %v", c, d)
		}
	}
	if rows < 5000 || ties != 40 {
		t.Fatalf("read %v rows and %v tie rows; expected 5,654 and 40", rows, ties)
	}
	t.Logf("%v rows vs R, max relative difference %.3g; %v tie rows vs definition", rows, maxRel, ties)
}

// TestHWEExactWorked holds worked values from an independent
// general-purpose library: R 4.2.2 with package genetics 1.3.8.1.3,
//
//	HWE.exact(genotype(c(rep("A/A",a), rep("A/B",h), rep("B/B",b))))$p.value
//
// computed on this machine by testdata/snpstats/hwe_worked.R (output in
// testdata/snpstats/hwe_worked.tsv), and one-sided tails against the
// log-gamma enumeration above.
func TestHWEExactWorked(t *testing.T) {
	f, err := os.Open("../testdata/snpstats/hwe_worked.tsv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Scan()
	n := 0
	for sc.Scan() {
		fl := strings.Split(sc.Text(), "\t")
		var c [3]int64
		for i := range c {
			c[i], _ = strconv.ParseInt(fl[i], 10, 64)
		}
		want, _ := strconv.ParseFloat(fl[3], 64)
		want = math.Min(want, 1)
		got := HWEExact(c[0], c[1], c[2])
		if rel := math.Abs(got.P-want) / want; rel > 1e-9 {
			t.Errorf("%v: p=%.17g, R %.17g", c, got.P, want)
		}
		// R genetics HWE.chisq(correct = FALSE, simulate.p.value = FALSE).
		wantChi, _ := strconv.ParseFloat(fl[4], 64)
		if gc := HWEChiSq(c[0], c[1], c[2]); math.Abs(gc.P-wantChi) > 1e-9*wantChi {
			t.Errorf("%v: chisq p=%.17g, R HWE.chisq %.17g", c, gc.P, wantChi)
		}
		_, pObs, low, high := hweDefinition(c[0], c[1], c[2])
		if rel := math.Abs(got.Deficit-low) / low; rel > 1e-9 {
			t.Errorf("%v: deficit %v, enumeration %v", c, got.Deficit, low)
		}
		if rel := math.Abs(got.Excess-high) / high; rel > 1e-9 {
			t.Errorf("%v: excess %v, enumeration %v", c, got.Excess, high)
		}
		if rel := math.Abs(got.PObs-pObs) / pObs; rel > 1e-9 {
			t.Errorf("%v: P(obs) %v, enumeration %v", c, got.PObs, pObs)
		}
		n++
	}
	if n == 0 {
		t.Fatal("no worked rows")
	}
}

func TestHWEExactLarge(t *testing.T) {
	// n = 10^6: must be finite, in [0,1], and agree with the chi-square test
	// in the bulk (common practice: the two agree for large, balanced cells).
	for _, c := range [][3]int64{{250000, 500000, 250000}, {250400, 499200, 250400}, {999000, 1000, 0}, {500000, 0, 500000}, {999999, 0, 1}} {
		r := HWEExact(c[0], c[1], c[2])
		if !r.Computed || math.IsNaN(r.P) || r.P < 0 || r.P > 1 {
			t.Fatalf("%v: %+v", c, r)
		}
		q := HWEChiSq(c[0], c[1], c[2])
		t.Logf("%v exact %.6g chisq %.6g", c, r.P, q.P)
		if c[0] == 250400 && math.Abs(r.P-q.P) > 0.01 {
			t.Errorf("%v: exact %v vs chisq %v", c, r.P, q.P)
		}
	}
	if r := HWEExact(500000, 0, 500000); r.P != 0 {
		t.Errorf("total deficit at n=1e6: p=%v, want 0 (underflow)", r.P)
	}
}

func TestHWEUndefined(t *testing.T) {
	for _, c := range [][3]int64{{0, 0, 0}, {10, 0, 0}, {0, 0, 7}} {
		if r := HWEExact(c[0], c[1], c[2]); r.Computed || !math.IsNaN(r.P) {
			t.Errorf("%v: want undefined, got %+v", c, r)
		}
	}
}

func BenchmarkHWEExact(b *testing.B) {
	for i := 0; i < b.N; i++ {
		HWEExact(300, 500, 200+int64(i%50))
	}
}

// FuzzHWEExact compares the fast walk from the mode with the direct
// log-gamma enumeration of every outcome (hweDefinition).
func FuzzHWEExact(f *testing.F) {
	f.Add(uint16(10), uint16(45), uint16(45))
	f.Add(uint16(0), uint16(1), uint16(0))
	f.Add(uint16(300), uint16(2), uint16(1))
	f.Fuzz(func(t *testing.T, a, h, b uint16) {
		nAA, nAB, nBB := int64(a%400), int64(h%400), int64(b%400)
		got := HWEExact(nAA, nAB, nBB)
		if 2*nAA+nAB == 0 || 2*nBB+nAB == 0 {
			if got.Computed {
				t.Fatalf("monomorphic %d %d %d computed", nAA, nAB, nBB)
			}
			return
		}
		p, pObs, low, high := hweDefinition(nAA, nAB, nBB)
		for _, c := range [][3]float64{{got.P, p, 0}, {got.PObs, pObs, 1}, {got.Deficit, low, 2}, {got.Excess, high, 3}} {
			w := math.Min(c[1], 1)
			if math.Abs(c[0]-w) > 1e-9*w+1e-300 {
				t.Fatalf("%d %d %d: value %v: %v, enumeration %v", nAA, nAB, nBB, c[2], c[0], w)
			}
		}
	})
}
