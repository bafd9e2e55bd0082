package stats

import (
	"bytes"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

func TestWeirCockerhamLimits(t *testing.T) {
	for _, tc := range []struct {
		name         string
		n, alt, nHet []int64
		theta, fIS   float64 // want (NaN: don't check)
		tol          float64
		ok           bool
	}{
		// Fixed for different alleles: p = 0 and 1, no heterozygotes:
		// s^2 = 1/2, pbar(1-pbar) = 1/4, a = 1/2, b = c = 0, theta = 1
		// (worked by hand from Weir & Cockerham 1984 eqs. 2-4).
		{"fixed_different", []int64{30, 30}, []int64{0, 60}, []int64{0, 0}, 1, math.NaN(), 1e-12, true},
		// Identical samples: s^2 = 0, theta = -(pq - h/4)/(nbar-1) / (a+b+c),
		// slightly negative and of order 1/n (common practice: the
		// estimator is unbiased, so identical samples straddle 0).
		{"identical", []int64{100, 100}, []int64{80, 80}, []int64{48, 48}, 0, math.NaN(), 0.01, true},
		// Identical and at Hardy-Weinberg proportions within: f about 0.
		{"identical_hwe", []int64{100, 100}, []int64{100, 100}, []int64{50, 50}, 0, 0, 0.01, true},
		{"one_population", []int64{30, 0}, []int64{10, 0}, []int64{5, 0}, math.NaN(), math.NaN(), 0, false},
		{"monomorphic", []int64{30, 20}, []int64{0, 0}, []int64{0, 0}, math.NaN(), math.NaN(), 0, false},
	} {
		a, b, c, ok := WeirCockerham(tc.n, tc.alt, tc.nHet)
		if ok != tc.ok {
			t.Errorf("%s: ok %v", tc.name, ok)
			continue
		}
		if !ok {
			continue
		}
		if th := a / (a + b + c); !math.IsNaN(tc.theta) && math.Abs(th-tc.theta) > tc.tol {
			t.Errorf("%s: theta %v, want %v", tc.name, th, tc.theta)
		}
		if f := b / (b + c); !math.IsNaN(tc.fIS) && math.Abs(f-tc.fIS) > tc.tol {
			t.Errorf("%s: f %v, want %v", tc.name, f, tc.fIS)
		}
	}
}

// simulateIslands runs a Wright-Fisher island model: d demes of N diploid
// individuals exchanging a fraction m of genes with the migrant pool each
// generation, nLoci independent biallelic loci; then samples nS
// individuals per deme at Hardy-Weinberg proportions within demes.
// Returns calls (loci x samples) and the deme of each sample.
func simulateIslands(seed uint64, d, N int, m float64, nLoci, gens, nS int) ([][]vcfscan.Geno, []int) {
	rng := rand.New(rand.NewPCG(seed, 2))
	binom := func(k int, p float64) int {
		c := 0
		for i := 0; i < k; i++ {
			if rng.Float64() < p {
				c++
			}
		}
		return c
	}
	calls := make([][]vcfscan.Geno, nLoci)
	popOf := make([]int, d*nS)
	for i := range popOf {
		popOf[i] = i / nS
	}
	p := make([]float64, d)
	for l := range calls {
		p0 := 0.2 + 0.6*rng.Float64()
		for i := range p {
			p[i] = p0
		}
		for g := 0; g < gens; g++ {
			var pbar float64
			for _, x := range p {
				pbar += x
			}
			pbar /= float64(d)
			for i := range p {
				q := (1-m)*p[i] + m*pbar
				p[i] = float64(binom(2*N, q)) / float64(2*N)
			}
		}
		c := make([]vcfscan.Geno, d*nS)
		for s := range c {
			q := p[popOf[s]]
			c[s] = b2g(rng.Float64() < q) + b2g(rng.Float64() < q)
		}
		calls[l] = c
	}
	return calls, popOf
}

// TestIslandModel: at migration-drift equilibrium the island model gives
// F_ST about 1/(1+4Nm) (Wright 1931; common practice; with d demes the
// finite-island value is a little lower, 1/(1+4Nm(d/(d-1))^2)). Also
// checks within-deme random mating gives f (F_IS) about 0, and that the
// jackknife SE is positive and small.
func TestIslandModel(t *testing.T) {
	const d, N, nS = 8, 25, 30
	for _, m := range []float64{0.02, 0.08} {
		calls, popOf := simulateIslands(3, d, N, m, 600, 120, nS)
		names := make([]string, len(popOf))
		pops := make([]string, d)
		for i := range names {
			names[i] = "pig_" + strconv.Itoa(i)
		}
		for i := range pops {
			pops[i] = "farm_" + strconv.Itoa(i)
		}
		cfg := &Config{Samples: names, PopOf: popOf, PopNames: pops, Freqs: FreqPopulation, JackknifeBlockBP: 20_000, MinCallRate: 0.9}
		tot, _ := runCalls(t, cfg, calls, nil)
		s := tot.PopulationSummary()
		fst, se, fis := float64(s.FST), float64(s.FSTSE), float64(s.FIS)
		want := 1 / (1 + 4*N*m)
		wantFinite := 1 / (1 + 4*N*m*math.Pow(float64(d)/float64(d-1), 2))
		t.Logf("m=%v: theta %.4f (SE %.4f), f %.4f; infinite islands %.4f, finite %.4f", m, fst, se, fis, want, wantFinite)
		if fst < wantFinite*0.75 || fst > want*1.25 {
			t.Errorf("m=%v: theta %.4f outside [%.4f, %.4f]", m, fst, wantFinite*0.75, want*1.25)
		}
		if math.Abs(fis) > 0.03 {
			t.Errorf("m=%v: f %.4f, want about 0", m, fis)
		}
		if !(se > 0 && se < 0.05) {
			t.Errorf("m=%v: SE %v", m, se)
		}
		// Pairwise theta of two demes is also positive and of the same order.
		var pw bytes.Buffer
		if err := tot.WritePairwise(&pw); err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(strings.TrimSpace(pw.String()), "\n")
		if len(lines) != 1+d*(d-1)/2 {
			t.Fatalf("%d pairwise lines", len(lines))
		}
		fl := strings.Split(lines[1], "\t")
		v, _ := strconv.ParseFloat(fl[2], 64)
		if !(v > wantFinite*0.5 && v < want*1.6) {
			t.Errorf("pairwise %s", lines[1])
		}
	}
}

// TestWeirCockerhamAgainstR compares the genome-wide theta, f and F on
// cohort189 in three invented herds (popConfig) with an independent plain-R
// implementation of Weir & Cockerham (1984) summed over both alleles
// (testdata/snpstats/wc_theta.R, output wc_theta.tsv; R 4.2.2). Debian's
// archive has no r-cran-hierfstat, which was tried first
// (apt-cache policy r-cran-hierfstat: no candidate).
func TestWeirCockerhamAgainstR(t *testing.T) {
	fx := readVCFFixture(t, "../testdata/cohort189.vcf.gz")
	tot, _, _ := fx.run(t, popConfig(fx, 1_000_000), 0, len(fx.recs), 40)
	_, ref, _ := readTSV(t, "../testdata/snpstats/wc_theta.tsv")
	s := tot.PopulationSummary()
	for _, c := range []struct {
		ref, name string
		got       float64
	}{{"theta", "f_st", float64(s.FST)}, {"f", "f_is", float64(s.FIS)}, {"F", "f_it", float64(s.FIT)}, {"sites", "sites_used", float64(s.SitesUsed)}} {
		want, _ := strconv.ParseFloat(ref[c.ref][1], 64)
		got := c.got
		// Fixed-point sums: about 1e-10 per site.
		if math.Abs(got-want) > 1e-8 {
			t.Errorf("%s: %v, R %v", c.name, got, want)
		}
	}
}

// TestJackknifeSE: over independent replicate simulations whose truth we
// control (island model, independent loci), the spread of genome-wide
// theta should match the block jackknife SE of a single run (common
// practice: the delete-one jackknife estimates the sampling SD of a ratio
// estimator over independent blocks). Checked within a factor of 1.6.
func TestJackknifeSE(t *testing.T) {
	const d, N, nS, reps = 4, 25, 20, 16
	var thetas, ses []float64
	for r := 0; r < reps; r++ {
		calls, popOf := simulateIslands(uint64(100+r), d, N, 0.05, 300, 80, nS)
		names := make([]string, len(popOf))
		for i := range names {
			names[i] = "goat_" + strconv.Itoa(i)
		}
		cfg := &Config{Samples: names, PopOf: popOf, PopNames: []string{"farm_a", "farm_b", "farm_c", "farm_d"},
			Freqs: FreqPopulation, JackknifeBlockBP: 20_000, MinCallRate: 0.9}
		tot, _ := runCalls(t, cfg, calls, nil)
		s := tot.PopulationSummary()
		thetas = append(thetas, float64(s.FST))
		ses = append(ses, float64(s.FSTSE))
	}
	_, v := meanVar(thetas)
	sd := math.Sqrt(v)
	meanSE, _ := meanVar(ses)
	t.Logf("SD of theta over %d replicates %.4f; mean jackknife SE %.4f", reps, sd, meanSE)
	if meanSE > 1.6*sd || meanSE < sd/1.6 {
		t.Errorf("jackknife SE %.4f vs replicate SD %.4f", meanSE, sd)
	}
}
