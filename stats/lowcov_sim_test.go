package stats

import (
	"math"
	"math/rand/v2"

	"fgauge/vcfscan"
)

// Low-depth cohorts whose truth we control, generated here rather than by
// the project's gene-drop simulator (stats must not import roh): unlinked
// sites dropped through an invented pedigree of goat lines, then Poisson
// reads with a per-read error, genotype likelihoods by the binomial read
// model (common practice; Li 2011, Bioinformatics 27:2987) as phred
// integers, and hard calls as the most likely genotype (missing without
// reads).

// lowcovCohort is one simulated cohort: per site, per sample.
type lowcovCohort struct {
	nSamples int
	fPed     []float64        // pedigree F of each animal
	truth    [][]uint8        // true genotypes (alternate-allele count)
	pl       [][]uint16       // 3 per sample
	dp       [][]int32        // read depth
	calls    [][]vcfscan.Geno // most likely genotype, Missing at depth 0
}

// goatPedigree returns (sire, dam) per animal, -1 for founders, parents
// first, and each animal's pedigree F. It has 20 unrelated founders'
// offspring, and 10 lines of repeated full-sib mating over 6 generations
// (F 0, 1/4, 3/8, 1/2, 0.59, 0.67) with two animals per generation.
func goatPedigree() (parents [][2]int, fped []float64) {
	add := func(s, d int, f float64) int {
		parents = append(parents, [2]int{s, d})
		fped = append(fped, f)
		return len(parents) - 1
	}
	for i := 0; i < 20; i++ {
		add(-1, -1, 0)
	}
	// Outbred animals: offspring of founder pairs.
	for i := 0; i < 20; i += 2 {
		add(i, i+1, 0)
	}
	// Full-sib lines: F_t = 1/4 + F_{t-1}/2 + F_{t-2}/4 (common practice).
	for line := 0; line < 10; line++ {
		a := add(-1, -1, 0)
		b := add(-1, -1, 0)
		fPrev, fCur := 0.0, 0.0 // F of the pair's parents, of the pair
		for g := 0; g < 6; g++ {
			fNext := 0.25 * (1 + 2*fCur + fPrev)
			if g == 0 {
				fNext = 0 // the founders are unrelated
			}
			c := add(a, b, fNext)
			d := add(a, b, fNext)
			a, b = c, d
			fPrev, fCur = fCur, fNext
		}
	}
	return parents, fped
}

// simulateLowcov drops nSites unlinked sites through the pedigree (founder
// alleles from a U-shaped spectrum with minor frequency >= 0.05) and
// observes them at the given mean depth and read error.
func simulateLowcov(seed uint64, nSites int, depth, readErr float64) *lowcovCohort {
	return simulateLowcovSpectrum(seed, nSites, depth, readErr, false)
}

// simulateLowcovSpectrum is simulateLowcov with, when rare is set, founder
// allele frequencies from a neutral 1/x spectrum on [0.001, 0.5] (most
// sites rare, many fixed or singletons in the cohort).
func simulateLowcovSpectrum(seed uint64, nSites int, depth, readErr float64, rare bool) *lowcovCohort {
	rng := rand.New(rand.NewPCG(seed, 19))
	parents, fped := goatPedigree()
	n := len(parents)
	c := &lowcovCohort{nSamples: n, fPed: fped}
	hap := make([][2]uint8, n)
	for s := 0; s < nSites; s++ {
		q := 0.05 + 0.9*betaHalf(rng)
		if rare {
			q = 0.001 * math.Pow(500, rng.Float64()) // density proportional to 1/q
		}
		for i, p := range parents {
			if p[0] < 0 {
				hap[i] = [2]uint8{b2u(rng.Float64() < q), b2u(rng.Float64() < q)}
				continue
			}
			hap[i] = [2]uint8{hap[p[0]][rng.IntN(2)], hap[p[1]][rng.IntN(2)]}
		}
		tr := make([]uint8, n)
		pl := make([]uint16, 3*n)
		dp := make([]int32, n)
		calls := make([]vcfscan.Geno, n)
		for i := range hap {
			tr[i] = hap[i][0] + hap[i][1]
			d, lik, call := observe(rng, hap[i], depth, readErr)
			dp[i] = int32(d)
			copy(pl[3*i:], lik[:])
			calls[i] = call
		}
		c.truth = append(c.truth, tr)
		c.pl = append(c.pl, pl)
		c.dp = append(c.dp, dp)
		c.calls = append(c.calls, calls)
	}
	return c
}

// betaHalf draws from Beta(1/2, 1/2) (arcsine law: sin^2 of a uniform angle).
func betaHalf(rng *rand.Rand) float64 {
	s := math.Sin(math.Pi / 2 * rng.Float64())
	return s * s
}

func b2u(b bool) uint8 {
	if b {
		return 1
	}
	return 0
}

// observe draws Poisson(depth) reads from the two copies with error e and
// returns the depth, the phred likelihoods normalised to a minimum of 0,
// and the most likely genotype.
func observe(rng *rand.Rand, alle [2]uint8, depth, e float64) (int, [3]uint16, vcfscan.Geno) {
	d := 0
	for l, u := math.Exp(-depth), rng.Float64(); ; d++ {
		u -= l
		if u < 0 {
			break
		}
		l *= depth / float64(d+1)
	}
	if d == 0 {
		return 0, [3]uint16{}, vcfscan.Missing
	}
	nalt := 0
	for k := 0; k < d; k++ {
		a := alle[rng.IntN(2)]
		if rng.Float64() < e {
			a ^= 1
		}
		nalt += int(a)
	}
	var ll [3]float64
	best := 0
	for g := 0; g < 3; g++ {
		pa := float64(g)/2*(1-e) + (1-float64(g)/2)*e
		ll[g] = float64(nalt)*math.Log10(pa) + float64(d-nalt)*math.Log10(1-pa)
		if ll[g] > ll[best] {
			best = g
		}
	}
	var pl [3]uint16
	for g := range pl {
		pl[g] = uint16(min(math.Round(-10*(ll[g]-ll[best])), 65535))
	}
	return d, pl, vcfscan.Geno(best)
}

// momentsF is the excess-homozygosity F of each sample, 1 - O/E with
// E = sum of 2 p (1-p) over the sample's called sites, p the site's
// alternate-allele frequency among called genotypes (the f_hom idea,
// without its small-sample factor; common practice).
func momentsF(nSamples int, geno func(site, i int) (g int, ok bool), nSites int) []float64 {
	obs := make([]float64, nSamples)
	exp := make([]float64, nSamples)
	for s := 0; s < nSites; s++ {
		var alt, called float64
		for i := 0; i < nSamples; i++ {
			if g, ok := geno(s, i); ok {
				alt += float64(g)
				called++
			}
		}
		if called == 0 {
			continue
		}
		p := alt / (2 * called)
		if p == 0 || p == 1 {
			continue
		}
		for i := 0; i < nSamples; i++ {
			if g, ok := geno(s, i); ok {
				exp[i] += 2 * p * (1 - p)
				if g == 1 {
					obs[i]++
				}
			}
		}
	}
	f := make([]float64, nSamples)
	for i := range f {
		f[i] = 1 - obs[i]/exp[i]
	}
	return f
}

func (c *lowcovCohort) trueF() []float64 {
	return momentsF(c.nSamples, func(s, i int) (int, bool) { return int(c.truth[s][i]), true }, len(c.truth))
}

func (c *lowcovCohort) hardCallF() []float64 {
	return momentsF(c.nSamples, func(s, i int) (int, bool) {
		g := c.calls[s][i]
		return int(g), g <= vcfscan.HomAlt
	}, len(c.calls))
}

// likF runs the library as the scan will: per site the EM frequency, then
// every call into its sample's summary.
func (c *lowcovCohort) likF() ([]FLik, []FLikSummary) {
	var em SiteFreqEM
	var site FLikSite
	sum := make([]FLikSummary, c.nSamples)
	for s := range c.pl {
		fr := em.Estimate(c.pl[s])
		if !site.Set(fr.AltFreq) {
			continue
		}
		pl := c.pl[s]
		for i := range sum {
			sum[i].Add(&site, pl[3*i], pl[3*i+1], pl[3*i+2])
		}
	}
	out := make([]FLik, c.nSamples)
	for i := range sum {
		out[i] = sum[i].Estimate()
	}
	return out, sum
}

// ratios returns every sample's raw ratios (for the exact reference).
func (c *lowcovCohort) ratios() [][]float64 {
	var em SiteFreqEM
	var site FLikSite
	out := make([][]float64, c.nSamples)
	for s := range c.pl {
		if !site.Set(em.Estimate(c.pl[s]).AltFreq) {
			continue
		}
		pl := c.pl[s]
		for i := range out {
			if r, ok := site.Ratio(pl[3*i], pl[3*i+1], pl[3*i+2]); ok {
				out[i] = append(out[i], r)
			}
		}
	}
	return out
}

func meanSD(x []float64) (m, sd float64) {
	for _, v := range x {
		m += v
	}
	m /= float64(len(x))
	for _, v := range x {
		sd += (v - m) * (v - m)
	}
	return m, math.Sqrt(sd / float64(len(x)-1))
}

func correlation(x, y []float64) float64 {
	mx, sx := meanSD(x)
	my, sy := meanSD(y)
	var c float64
	for i := range x {
		c += (x[i] - mx) * (y[i] - my)
	}
	return c / float64(len(x)-1) / (sx * sy)
}
