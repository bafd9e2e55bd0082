package stats

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"testing"
)

// Phred triples whose likelihoods are exactly 0 or 1 (PL >= 3240 maps to
// 0), so the ratios r = b/a below are exact fractions.
var (
	plHet    = [3]uint16{5000, 0, 5000} // L = (0, 1, 0)
	plHomRef = [3]uint16{0, 5000, 5000} // L = (1, 0, 0)
	plNotAlt = [3]uint16{0, 0, 5000}    // L = (1, 1, 0)
	plNone   = [3]uint16{0, 0, 0}       // no reads
	plHapl   = [3]uint16{0, 65535, 30}  // a haploid pair as vcfscan stores it
)

type handSite struct {
	alt float64 // alternate-allele frequency of the site
	pl  [3]uint16
	n   int // this many such sites
}

// TestFLikHandDerived checks per-sample F on one sample whose likelihoods
// make the maximum-likelihood F a closed form. With r = b/a (a = sum_g
// P(g|p,HWE) L(g), b = sum_g P(g|p,IBD) L(g); Vieira et al. 2013) and
// t = r - 1, the score is U(F) = sum_s t_s / (1 + F t_s) and the EM fixed
// point F' = mean_s F r_s/(1 - F + F r_s) is its root. Derivations (p the
// alternate-allele frequency):
//
//   - heterozygote, L = (0,1,0): a = 2p(1-p), b = 0, r = 0, t = -1.
//   - sure 0/0, L = (1,0,0): a = (1-p)^2, b = 1-p, r = 1/(1-p);
//     p = 1/2: r = 2, t = 1; p = 1/4: r = 4/3, t = 1/3.
//   - "not 1/1", L = (1,1,0), p = 1/2: a = 1/4 + 1/2 = 3/4, b = 1/2,
//     r = 2/3, t = -1/3.
//
// Rows: (a) 1 het + 3 sure 0/0 at p = 1/2: -1/(1-F) + 3/(1+F) = 0, F = 1/2,
// and l”(F) = -1/(1-F)^2 - 3/(1+F)^2 = -16/3, SE = sqrt(3/16).
// (b) 4 "not 1/1" + 2 sure 0/0 at p = 1/2: -(4/3)/(1-F/3) + 2/(1+F) = 0,
// so -4(1+F) + 2(3-F) = 0, F = 1/3. (c) 1 het + 7 sure 0/0 at p = 1/4:
// -1/(1-F) + (7/3)/(1+F/3) = 0, 7(1-F) = 3+F, F = 1/2 (the moment
// estimate 1 - 1/3 = 2/3 differs: ML weighs the sure 0/0 by 1/(1-p)).
// (d) 3 het + 1 sure 0/0 at p = 1/2: U(0) = -3 + 1 < 0, so F = 0.
// (e) 4 sure 0/0 at p = 1/2: U(1) = 4 (r-1)/r = 2 > 0, so F = 1.
// (f) row (a) plus calls without information (no reads, haploid, sites
// with p = 0): unchanged. (g) nothing informative: NaN. (h) row (a) with
// unnormalised PL (a constant added to a triple): unchanged.
func TestFLikHandDerived(t *testing.T) {
	for _, tc := range []struct {
		name   string
		sites  []handSite
		f, se  float64
		sites_ int64
	}{
		{"a", []handSite{{0.5, plHet, 1}, {0.5, plHomRef, 3}}, 0.5, math.Sqrt(3.0 / 16), 4},
		{"b", []handSite{{0.5, plNotAlt, 4}, {0.5, plHomRef, 2}}, 1.0 / 3, math.NaN(), 6},
		{"c", []handSite{{0.25, plHet, 1}, {0.25, plHomRef, 7}}, 0.5, math.NaN(), 8},
		{"d", []handSite{{0.5, plHet, 3}, {0.5, plHomRef, 1}}, 0, math.NaN(), 4},
		{"e", []handSite{{0.5, plHomRef, 4}}, 1, math.NaN(), 4},
		{"f", []handSite{{0.5, plHet, 1}, {0.5, plNone, 5}, {0.5, plHapl, 2}, {0.5, plHomRef, 3}, {0, plHomRef, 9}}, 0.5, math.Sqrt(3.0 / 16), 4},
		{"g", []handSite{{0.5, plNone, 5}, {1, plHet, 2}}, math.NaN(), math.NaN(), 0},
		{"h", []handSite{{0.5, [3]uint16{5010, 10, 5010}, 1}, {0.5, [3]uint16{7, 5007, 5007}, 3}}, 0.5, math.Sqrt(3.0 / 16), 4},
	} {
		var sum FLikSummary
		var ratios []float64
		var site FLikSite
		for _, s := range tc.sites {
			for k := 0; k < s.n; k++ {
				site.Set(s.alt)
				sum.Add(&site, s.pl[0], s.pl[1], s.pl[2])
				if r, ok := site.Ratio(s.pl[0], s.pl[1], s.pl[2]); ok {
					ratios = append(ratios, r)
				}
			}
		}
		got, exact := sum.Estimate(), FLikExact(ratios)
		// The summary's error is relative to the information, which is
		// tiny with 4 to 8 sites: 2e-5 here, 1e-4 on real-sized samples
		// (TestFLikSummaryVersusExact); the exact path gets 1e-9.
		for _, g := range []struct {
			what string
			v    FLik
			tol  float64
		}{{"summary", got, 2e-5}, {"exact", exact, 1e-9}} {
			if !near(g.v.F, tc.f, g.tol) {
				t.Errorf("%s %s: F = %.12g, want %.12g", tc.name, g.what, g.v.F, tc.f)
			}
			if !math.IsNaN(tc.se) && !near(g.v.SE, tc.se, 10*g.tol) {
				t.Errorf("%s %s: SE = %.12g, want %.12g", tc.name, g.what, g.v.SE, tc.se)
			}
			if g.v.Sites != tc.sites_ {
				t.Errorf("%s %s: Sites = %d, want %d", tc.name, g.what, g.v.Sites, tc.sites_)
			}
		}
		// The EM of Vieira et al. (2013) itself, iterated on the raw
		// ratios, reaches the same point.
		if len(ratios) > 0 && tc.f > 0 && tc.f < 1 {
			if em := vieiraEM(ratios, 0.1, 1e-13, 100000); !near(em, tc.f, 1e-8) {
				t.Errorf("%s: EM iteration gives %.12g, want %.12g", tc.name, em, tc.f)
			}
		}
	}
}

// vieiraEM iterates F' = mean_s F r_s / (1 - F + F r_s) (Vieira et al. 2013,
// Genome Res 23:1852) from f until a step is below tol.
func vieiraEM(ratios []float64, f, tol float64, maxIter int) float64 {
	for it := 0; it < maxIter; it++ {
		var s float64
		for _, r := range ratios {
			s += f * r / (1 - f + f*r)
		}
		nf := s / float64(len(ratios))
		if math.Abs(nf-f) < tol {
			return nf
		}
		f = nf
	}
	return f
}

func near(a, b, tol float64) bool {
	if math.IsNaN(b) {
		return math.IsNaN(a)
	}
	return math.Abs(a-b) <= tol
}

// TestFLikSummaryVersusExact bounds the summary's approximation: on
// simulated cohorts (truth we control) at mean depth 0.5 to 20 with 1% read
// error, every sample's F from its 440-byte summary is within 1e-4 of the
// exact maximum-likelihood F on its raw ratios (FLikExact), and its
// standard error within 1% (the curvature is approximated less well).
func TestFLikSummaryVersusExact(t *testing.T) {
	var worst float64
	for k, depth := range []float64{0.5, 1, 2, 3, 5, 20, 2, 5, 30} {
		// The last three: a neutral spectrum, mostly rare alleles (large r).
		c := simulateLowcovSpectrum(uint64(100+k), 2000, depth, 0.01, k >= 6)
		lik, _ := c.likF()
		for i, rs := range c.ratios() {
			ex := FLikExact(rs)
			d := math.Abs(lik[i].F - ex.F)
			worst = max(worst, d)
			if d > 1e-4 || lik[i].Sites != ex.Sites || lik[i].Informative != ex.Informative {
				t.Errorf("depth %g sample %d: summary F %.8f (%d sites) exact %.8f (%d sites)", depth, i, lik[i].F, lik[i].Sites, ex.F, ex.Sites)
			}
			if !math.IsNaN(ex.SE) && math.Abs(lik[i].SE/ex.SE-1) > 0.01 {
				t.Errorf("depth %g sample %d: summary SE %.6g exact %.6g", depth, i, lik[i].SE, ex.SE)
			}
		}
	}
	t.Logf("largest |summary F - exact F|: %.2g", worst)
}

// TestFLikMergeExact: splitting a sample's calls over any number of
// summaries (threads, shards) and merging them in any order gives the same
// integers, hence bit-identical estimates.
func TestFLikMergeExact(t *testing.T) {
	c := simulateLowcov(7, 3000, 3, 0.01)
	_, whole := c.likF()
	var em SiteFreqEM
	var site FLikSite
	rng := rand.New(rand.NewPCG(1, 2))
	for _, parts := range []int{2, 3, 7} {
		split := make([][]FLikSummary, parts)
		for k := range split {
			split[k] = make([]FLikSummary, c.nSamples)
		}
		for s := range c.pl {
			if !site.Set(em.Estimate(c.pl[s]).AltFreq) {
				continue
			}
			k := rng.IntN(parts) // a random shard per site
			pl := c.pl[s]
			for i := range split[k] {
				split[k][i].Add(&site, pl[3*i], pl[3*i+1], pl[3*i+2])
			}
		}
		for i := 0; i < c.nSamples; i++ {
			var m FLikSummary
			for _, k := range rng.Perm(parts) {
				m.Merge(&split[k][i])
			}
			if m != whole[i] {
				t.Fatalf("%d parts, sample %d: merged summary differs", parts, i)
			}
			a, b := m.Estimate(), whole[i].Estimate()
			if math.Float64bits(a.F) != math.Float64bits(b.F) || math.Float64bits(a.SE) != math.Float64bits(b.SE) {
				t.Fatalf("%d parts, sample %d: estimates differ", parts, i)
			}
		}
	}
}

// TestFLikPedigreeCohorts is the low-depth check of issue 19: on cohorts
// dropped through an invented pedigree (outbred goats and lines of
// full-sib mating, pedigree F 0 to 0.67; truth we control) and observed at
// mean depth 2, 3 and 5 with 1% read error, f_lik (site frequencies by EM
// from the likelihoods) is within 0.03 on average of the moments F on the
// true genotypes, with correlation >= 0.95. The hard-call moments F is
// logged beside it: its bias is what f_lik is for. Most of f_lik's
// remaining positive mean difference (+0.013 to +0.017) is not depth: the
// outbred animals have a moments F near -0.03 against these cohort
// frequencies, while the likelihood model keeps F in [0, 1] (the same
// +0.012 is seen at depth 30, and per pedigree class the inbred animals
// are within 0.011).
func TestFLikPedigreeCohorts(t *testing.T) {
	for k, depth := range []float64{2, 3, 5} {
		c := simulateLowcov(uint64(20+k), 12000, depth, 0.01)
		truth, hard := c.trueF(), c.hardCallF()
		lik, _ := c.likF()
		fl := make([]float64, len(lik))
		var absDiff, diff, hardBias float64
		for i, l := range lik {
			fl[i] = l.F
			absDiff += math.Abs(l.F - truth[i])
			diff += l.F - truth[i]
			hardBias += hard[i] - truth[i]
		}
		n := float64(len(lik))
		absDiff, diff, hardBias = absDiff/n, diff/n, hardBias/n
		r := correlation(fl, truth)
		t.Logf("depth %g, %d animals: f_lik - true F: mean %+.4f, mean |.| %.4f, correlation %.4f; hard-call F - true F: mean %+.4f (HetOneAlleleRate %.3f)",
			depth, len(lik), diff, absDiff, r, hardBias, HetOneAlleleRate(depth))
		if absDiff > 0.03 || r < 0.95 {
			t.Errorf("depth %g: mean |f_lik - true F| %.4f (want <= 0.03), correlation %.4f (want >= 0.95)", depth, absDiff, r)
		}
		if hardBias < 0.05 {
			t.Errorf("depth %g: hard-call bias %.4f; the simulation should show the bias f_lik corrects", depth, hardBias)
		}
	}
}

// TestSiteFreqEMHand: with sure genotypes the EM returns the allele count
// over 2n in one step; uninformative and haploid calls are ignored; with no
// information the frequency is NaN.
func TestSiteFreqEMHand(t *testing.T) {
	var em SiteFreqEM
	pl := []uint16{}
	for _, tr := range [][3]uint16{plHomRef, plHet, plHet, {5000, 5000, 0}, plNone, plHapl} {
		pl = append(pl, tr[:]...)
	}
	got := em.Estimate(pl)
	// 0/0, 0/1, 0/1, 1/1: (0+1+1+2)/8 = 1/2.
	if !near(got.AltFreq, 0.5, 1e-15) || got.Samples != 4 || !got.Converged {
		t.Errorf("got %+v, want AltFreq 0.5 from 4 samples", got)
	}
	if got := em.Estimate(append([]uint16{}, plNone[:]...)); !math.IsNaN(got.AltFreq) || got.Samples != 0 {
		t.Errorf("no information: got %+v", got)
	}
}

// TestSiteFreqEMNumPy compares the site EM with an independent NumPy
// implementation (testdata/tools/site_em.py: vectorised EM without
// grouping, then Newton polishing; python3-numpy, Debian) on simulated
// low-depth sites (truth we control), within 1e-9.
func TestSiteFreqEMNumPy(t *testing.T) {
	py := "/usr/bin/python3"
	if _, err := os.Stat(py); err != nil {
		t.Skip("no /usr/bin/python3 (Debian python3 with python3-numpy)")
	}
	if err := exec.Command(py, "-c", "import numpy").Run(); err != nil {
		t.Skip("python3-numpy is not installed")
	}
	var in bytes.Buffer
	var sites [][]uint16
	for k, depth := range []float64{0.7, 2, 4, 12} {
		c := simulateLowcov(uint64(50+k), 60, depth, 0.01)
		for s := range c.pl {
			sites = append(sites, c.pl[s])
			for i, v := range c.pl[s] {
				if i > 0 {
					in.WriteByte(' ')
				}
				in.WriteString(strconv.Itoa(int(v)))
			}
			in.WriteByte('\n')
		}
	}
	cmd := exec.Command(py, "../testdata/tools/site_em.py")
	cmd.Stdin = &in
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("site_em.py: %v", err)
	}
	lines := strings.Fields(string(out))
	if len(lines) != len(sites) {
		t.Fatalf("site_em.py printed %d values for %d sites", len(lines), len(sites))
	}
	var em SiteFreqEM
	var worst float64
	for s, pl := range sites {
		want, err := strconv.ParseFloat(lines[s], 64)
		if err != nil {
			t.Fatal(err)
		}
		got := em.Estimate(pl)
		if math.IsNaN(want) != math.IsNaN(got.AltFreq) {
			t.Fatalf("site %d: Go %v, NumPy %v", s, got.AltFreq, want)
		}
		if math.IsNaN(want) {
			continue
		}
		d := math.Abs(got.AltFreq - want)
		worst = max(worst, d)
		if d > 1e-9 || !got.Converged {
			t.Errorf("site %d: Go %.15g (%d iterations, converged %v), NumPy %.15g", s, got.AltFreq, got.Iterations, got.Converged, want)
		}
	}
	t.Logf("%d sites, largest |Go - NumPy| %.2g", len(sites), worst)
}

// TestDepth checks the mean depth from DP and the likelihood proxy on
// simulated reads (Poisson mean 4, 1% error; truth we control). The proxy
// reads low (see AddPL: 1.5% from the read error, about 5% more because
// calls with reads of both alleles, which have more reads, are skipped),
// so it must be within 10% of the true mean, and below it.
func TestDepth(t *testing.T) {
	c := simulateLowcov(3, 3000, 4, 0.01)
	var dp, pl DepthAcc
	var trueSum, n float64
	for s := range c.dp {
		for i := 0; i < 3; i++ { // the first three samples
			dp.AddDP(int(c.dp[s][i]))
			pl.AddPL(c.pl[s][3*i], c.pl[s][3*i+1], c.pl[s][3*i+2])
			trueSum += float64(c.dp[s][i])
			n++
		}
	}
	dp.AddDP(-1) // missing
	if m, src := dp.Mean(); src != DepthDP || !near(m, trueSum/n, 1e-12) {
		t.Errorf("DP mean %v from %v, want %v", m, src, trueSum/n)
	}
	if m, src := pl.Mean(); src != DepthPL || m/(trueSum/n) < 0.9 || m > trueSum/n {
		t.Errorf("PL depth %v from %v, want within 10%% below %v", m, src, trueSum/n)
	} else {
		t.Logf("true mean depth %.4f, likelihood proxy %.4f", trueSum/n, m)
	}
	var none DepthAcc
	if m, src := none.Mean(); !math.IsNaN(m) || src != DepthNone {
		t.Errorf("empty: %v %v", m, src)
	}
}

// TestHetOneAlleleRate: the closed form equals its series
// sum_{d>=1} Pois(d; m) 2^(1-d) / (1 - e^-m) (derived in the doc comment),
// and LowDepth switches at 10.
func TestHetOneAlleleRate(t *testing.T) {
	for _, m := range []float64{0.5, 2, 3, 5, 10, 30} {
		var s float64
		p := math.Exp(-m)
		for d := 1; d < 400; d++ {
			p *= m / float64(d)
			s += p * math.Pow(2, float64(1-d))
		}
		s /= 1 - math.Exp(-m)
		if got := HetOneAlleleRate(m); !near(got, s, 1e-12) {
			t.Errorf("m=%g: %v, series %v", m, got, s)
		}
	}
	if !LowDepth(9.99) || LowDepth(10) || LowDepth(math.NaN()) {
		t.Error("LowDepth threshold")
	}
}

func TestFLikSummarySize(t *testing.T) {
	if got := fmt.Sprint(flikMoments*8 + 16); got != "440" {
		t.Errorf("FLikSummary is %s bytes; update the doc comments", got)
	}
}

// TestFLikSummaryLargeRatios: sites with very large r (homozygous for an
// allele at frequency 1e-4 to 1.2e-7, as an external panel can give) are
// in the summary's upper bins; the estimate stays within 1e-4 of the exact
// one when they are added to simulated samples (depth 3, truth we control).
func TestFLikSummaryLargeRatios(t *testing.T) {
	c := simulateLowcov(3, 2000, 3, 0.01)
	rs := c.ratios()
	for _, extra := range [][]float64{{1e4}, {1e5}, {1e6}, {1e4, 3e5, 8e6}, {60, 200, 2000, 8000}} {
		for i := 0; i < 40; i++ {
			r := append(append([]float64{}, rs[i]...), extra...)
			var s FLikSummary
			for _, v := range r {
				s.AddRatio(v)
			}
			if a, b := s.Estimate(), FLikExact(r); math.Abs(a.F-b.F) > 1e-4 {
				t.Errorf("sample %d with ratios %v: summary %.8f, exact %.8f", i, extra, a.F, b.F)
			}
		}
	}
}
