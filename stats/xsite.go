package stats

import (
	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

// XTally counts one non-PAR X site's calls by sex for the X-chromosomal
// Hardy-Weinberg test (HWEExactX). Males are hemizygous whatever the
// coding: a haploid call ("0", "1") and a diploid homozygous call ("0/0",
// "1/1") each count one allele; a male heterozygous call is a genotyping
// error, counted in MaleHet and otherwise treated as missing. Females'
// diploid calls are genotype counts; a female's haploid call cannot be
// tested and is counted in FemaleHaploid. Samples of unknown sex are left
// out of the test and counted. The zero value is an empty tally; reuse
// one per site with Reset.
type XTally struct {
	Female           [3]int64 // female hom ref, het, hom alt calls
	FemaleHaploid    int64    // female haploid calls (not tested)
	MaleRef, MaleAlt int64    // male reference and alternate allele counts
	MaleHet          int64    // male heterozygous calls: errors, set missing
	UnknownSex       int64    // calls of samples of unknown sex (not tested)
}

// Reset empties the tally for the next site.
func (t *XTally) Reset() { *t = XTally{} }

// Add counts one sample's call; sex is the sample's sex for the test
// (given, else inferred). It reports whether the call is a male
// heterozygous call, which the caller counts against the sample (the
// per-sample count is also sexcheck.Acc.XHet for a male) and treats as
// missing everywhere else.
func (t *XTally) Add(sex sexcheck.Sex, g vcfscan.Geno) (maleHetError bool) {
	if g == vcfscan.Missing {
		return false
	}
	switch sex {
	case sexcheck.Female:
		if g <= vcfscan.HomAlt {
			t.Female[g]++
		} else {
			t.FemaleHaploid++
		}
	case sexcheck.Male:
		switch g {
		case vcfscan.HomRef, vcfscan.HaploidRef:
			t.MaleRef++
		case vcfscan.HomAlt, vcfscan.HaploidAlt:
			t.MaleAlt++
		case vcfscan.Heterozygous:
			t.MaleHet++
			return true
		}
	default:
		t.UnknownSex++
	}
	return false
}

// AddCalls counts a site's calls with sexes[i] the sex of sample i, and
// adds each male heterozygous call to maleHet[i] (when maleHet is not
// nil).
func (t *XTally) AddCalls(sexes []sexcheck.Sex, calls []vcfscan.Geno, maleHet []int64) {
	for i, g := range calls {
		if t.Add(sexes[i], g) && maleHet != nil {
			maleHet[i]++
		}
	}
}

// Test returns the exact X-chromosomal test of the tally (HWEExactX).
func (t *XTally) Test() HWEResult {
	return HWEExactX(t.Female[0], t.Female[1], t.Female[2], t.MaleRef, t.MaleAlt)
}

// XRow holds the values an X row of sites.tsv adds or replaces: the
// male allele counts and male heterozygous (error) calls, the calls left
// out for unknown sex, the female counts tested, and the X test, whose P,
// MidP, Deficit and Excess take the places of the autosomal test's
// values. AltFreq is the alternate-allele frequency over the tested X
// chromosomes, (Female[1] + 2 Female[2] + MaleAlt) / (2 nFemales +
// nMales), NaN without tested calls.
type XRow struct {
	Female           [3]int64
	MaleRef, MaleAlt int64
	MaleHet          int64
	UnknownSex       int64
	FemaleHaploid    int64
	AltFreq          float64
	Equilibrium      HWEResult
}

// Row computes the row values, testing through cache (nil: no cache).
func (t *XTally) Row(cache *XHWECache) XRow {
	r := XRow{Female: t.Female, MaleRef: t.MaleRef, MaleAlt: t.MaleAlt, MaleHet: t.MaleHet,
		UnknownSex: t.UnknownSex, FemaleHaploid: t.FemaleHaploid, AltFreq: nan}
	chrom := 2*(t.Female[0]+t.Female[1]+t.Female[2]) + t.MaleRef + t.MaleAlt
	if chrom > 0 {
		r.AltFreq = float64(t.Female[1]+2*t.Female[2]+t.MaleAlt) / float64(chrom)
	}
	if cache != nil {
		r.Equilibrium = cache.Test(t)
	} else {
		r.Equilibrium = t.Test()
	}
	return r
}

// XHWECache memoises HWEExactX results by count tuple for one worker
// (not safe for concurrent use). It is bounded: when full it is emptied;
// results are a pure function of the key, so output does not depend on
// the cache.
type XHWECache struct {
	m   map[[5]int64]HWEResult
	max int
}

// NewXHWECache returns a cache holding at most max results (max <= 0:
// 1<<14).
func NewXHWECache(max int) *XHWECache {
	if max <= 0 {
		max = 1 << 14
	}
	return &XHWECache{m: make(map[[5]int64]HWEResult), max: max}
}

// Test returns HWEExactX of the tally's counts.
func (c *XHWECache) Test(t *XTally) HWEResult {
	k := [5]int64{t.Female[0], t.Female[1], t.Female[2], t.MaleRef, t.MaleAlt}
	if r, ok := c.m[k]; ok {
		return r
	}
	r := HWEExactX(k[0], k[1], k[2], k[3], k[4])
	if len(c.m) >= c.max {
		clear(c.m)
	}
	c.m[k] = r
	return r
}
