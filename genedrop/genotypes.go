package genedrop

import (
	"errors"
	"math"
	"math/rand/v2"

	"fgauge/vcfscan"
)

// Site is one simulated site with the calls of every sample (in
// Result.Samples order). The slices are reused between calls of the
// ForEachSite callback: copy what you keep.
type Site struct {
	Chrom    int // index into Result.Chromosomes
	Index    int // site index on its chromosome
	Pos      int64
	CM       float64
	Ref, Alt byte
	// PoolFreq is the ALT allele frequency in the ancestral pool.
	PoolFreq float64
	// True holds the genotypes before observation error.
	True []vcfscan.Geno
	// GT holds the observed calls (errors, missing, or called from reads).
	GT []vcfscan.Geno
	// DP and PL (three per sample: 0/0, 0/1, 1/1) are set only when
	// Config.Depth > 0.
	DP []int32
	PL []uint16
}

// ErrNoSites is returned by ForEachSite when Config.NoSites was set.
var ErrNoSites = errors.New("simulation ran without sites")

// ForEachSite calls fn for every site in chromosome and position order.
// The observation noise is drawn from its own stream seeded by
// Config.Seed, so every call sees the same data. It stops at the first
// error fn returns.
func (r *Result) ForEachSite(fn func(*Site) error) error {
	if r.sites == nil {
		return ErrNoSites
	}
	cfg := &r.Config
	obs := rand.New(rand.NewPCG(cfg.Seed, 0xbf58476d1ce4e5b9))
	n := len(r.Samples)
	s := &Site{True: make([]vcfscan.Geno, n), GT: make([]vcfscan.Geno, n)}
	if cfg.Depth > 0 {
		s.DP = make([]int32, n)
		s.PL = make([]uint16, 3*n)
	}
	hapCur := make([][2]int32, n)
	founderCur := make([]int32, len(r.founders))
	labelAllele := make([]uint8, len(r.founders))
	var alle [2]uint8
	for c := range r.Chromosomes {
		ss := &r.sites[c]
		for i := range hapCur {
			hapCur[i] = [2]int32{}
		}
		for l := range founderCur {
			founderCur[l] = 0
		}
		for k, pos := range ss.pos {
			cm := ss.cm[k]
			word, bit := k/64, uint(k%64)
			// Allele of every founder copy at this site, from its mosaic.
			for label, mosaics := range r.founders {
				ms := mosaics[c]
				f := founderCur[label]
				for int(f) < len(ms)-1 && ms[f].End <= cm {
					f++
				}
				founderCur[label] = f
				labelAllele[label] = uint8(ss.anc[ms[f].Anc][word] >> bit & 1)
			}
			for i := 0; i < n; i++ {
				hc := &hapCur[i]
				for h := 0; h < 2; h++ {
					hs := r.haps[i][c][h]
					j := hc[h]
					for int(j) < len(hs)-1 && hs[j].End <= cm {
						j++
					}
					hc[h] = j
					alle[h] = labelAllele[hs[j].Label]
				}
				s.True[i] = vcfscan.Geno(alle[0] + alle[1])
				if cfg.Depth > 0 {
					r.observeReads(obs, s, i, alle)
				} else {
					s.GT[i] = observe(obs, s.True[i], cfg.GenotypeError)
				}
				if cfg.MissingRate > 0 && obs.Float64() < cfg.MissingRate {
					s.GT[i] = vcfscan.Missing
				}
			}
			s.Chrom, s.Index, s.Pos, s.CM = c, k, pos, cm
			s.Ref, s.Alt, s.PoolFreq = ss.ref[k], ss.alt[k], ss.freq[k]
			if err := fn(s); err != nil {
				return err
			}
		}
	}
	return nil
}

// observe applies a symmetric genotype error: with probability e the call
// becomes one of the two other genotypes, each equally likely.
func observe(rng *rand.Rand, g vcfscan.Geno, e float64) vcfscan.Geno {
	if e == 0 || rng.Float64() >= e {
		return g
	}
	return (g + 1 + vcfscan.Geno(rng.IntN(2))) % 3
}

// observeReads draws a Poisson number of reads, each from a random copy
// with base error ReadError, and fills DP, PL and the most likely GT.
// Genotype likelihoods follow the usual binomial read model (common
// practice, e.g. Li 2011, Bioinformatics 27:2987).
func (r *Result) observeReads(rng *rand.Rand, s *Site, i int, alle [2]uint8) {
	e := r.Config.ReadError
	dp := poisson(rng, r.Config.Depth)
	nalt := 0
	for k := 0; k < dp; k++ {
		a := alle[rng.IntN(2)]
		if rng.Float64() < e {
			a ^= 1
		}
		nalt += int(a)
	}
	s.DP[i] = int32(dp)
	pl := s.PL[3*i : 3*i+3]
	if dp == 0 {
		pl[0], pl[1], pl[2] = 0, 0, 0
		s.GT[i] = vcfscan.Missing
		return
	}
	nref := dp - nalt
	var ll [3]float64
	for g := 0; g < 3; g++ {
		pAlt := float64(g)/2*(1-e) + (1-float64(g)/2)*e
		ll[g] = float64(nalt)*math.Log10(pAlt) + float64(nref)*math.Log10(1-pAlt)
	}
	best := 0
	for g := 1; g < 3; g++ {
		if ll[g] > ll[best] {
			best = g
		}
	}
	for g := 0; g < 3; g++ {
		v := math.Round(-10 * (ll[g] - ll[best]))
		pl[g] = uint16(min(v, 65535))
	}
	s.GT[i] = vcfscan.Geno(best)
}

// poisson draws from Poisson(mean) by inversion (fine for the small means
// of low-depth sequencing; large means use a normal approximation).
func poisson(rng *rand.Rand, mean float64) int {
	if mean > 60 {
		return max(0, int(math.Round(mean+math.Sqrt(mean)*rng.NormFloat64())))
	}
	u := rng.Float64()
	p := math.Exp(-mean)
	cum := p
	k := 0
	for u > cum && k < 1000 {
		k++
		p *= mean / float64(k)
		cum += p
	}
	return k
}
