package stats

import (
	"math"

	"fgauge/vcfscan"
)

// siteKey is what a site's derived values depend on: its diploid counts
// (hom_ref, het, hom_alt), its haploid calls (call_rate counts them as
// calls) and the number of selected samples.
type siteKey [5]int64

// siteInfo is everything about a site that is a pure function of its
// siteKey: heterozygosities, f_site, the HWE test and its histogram bins,
// the formatted float columns of its sites.tsv row, and (cohort
// frequencies) its per-sample contribution table. Sites with the same
// counts recur often, the more so the smaller the cohort, so caching these
// makes the per-site cost (exponentials and logarithms of the exact test,
// float formatting, 128-bit fixed-point conversions) mostly a map look-up;
// results are identical because each is computed once by the same code.
type siteInfo struct {
	ho, he, fsite float64
	fsiteFixed    Sum128
	hweRes        HWEResult
	pBin, chiBin  int32
	rowOff        int32 // the float columns of the row: rows[rowOff:rowEnd]
	rowEnd        int32
	tabBase       vcfscan.Geno // base genotype of tab; 255 when tab is not filled
	tab           siteTab
	hweHits       int64 // sites with this test not yet in the totals (siteCache.flushHWE)
	idx           int32 // the entry's number in the cache
}

// siteCache memoises siteInfo by siteKey for one worker. It is bounded:
// when full it is emptied (entries are pure functions of the key, so
// output does not depend on the cache's state). The look-up is an
// open-addressing table of entry numbers (linear probing, at most half
// full), cheaper than a Go map for this one fixed key type.
type siteCache struct {
	slots []int32 // entry number + 1; 0 is an empty slot
	keys  []siteKey
	infos []siteInfo
	rows  []byte
	max   int

	// hweOpen lists the entries whose hweHits are not yet in the totals.
	hweOpen []int32
}

func newSiteCache(max int) *siteCache {
	n := 1
	for n < 2*max {
		n *= 2
	}
	return &siteCache{slots: make([]int32, n), max: max}
}

func (k *siteKey) hash() uint64 {
	x := uint64(k[0])*0x9e3779b97f4a7c15 + uint64(k[1])*0xc2b2ae3d27d4eb4f +
		uint64(k[2])*0x165667b19e3779f9 + uint64(k[3])*0x27d4eb2f165667c5 + uint64(k[4])*0x85ebca77c2b2ae63
	x ^= x >> 31
	x *= 0xd6e8feb86659fd93
	return x ^ x>>32
}

// get returns the entry for k and whether it was already there; a new
// entry is zeroed (but for its number) and must be filled by the caller. Before the cache is
// emptied, the HWE tests its entries counted are added to hwe.
func (c *siteCache) get(k siteKey, hwe *HWESummary) (*siteInfo, bool) {
	mask := uint64(len(c.slots) - 1)
	h := k.hash() & mask
	for {
		i := c.slots[h]
		if i == 0 {
			break
		}
		if c.keys[i-1] == k {
			return &c.infos[i-1], true
		}
		h = (h + 1) & mask
	}
	if len(c.infos) >= c.max {
		c.flushHWE(hwe)
		clear(c.slots)
		c.keys = c.keys[:0]
		c.infos = c.infos[:0]
		c.rows = c.rows[:0]
		h = k.hash() & mask
	}
	c.slots[h] = int32(len(c.infos) + 1)
	c.keys = append(c.keys, k)
	c.infos = append(c.infos, siteInfo{idx: int32(len(c.infos))})
	return &c.infos[len(c.infos)-1], false
}

// flushHWE adds the HWE tests counted in the entries since the last flush
// to h (the same sums as adding each site's test in turn).
func (c *siteCache) flushHWE(h *HWESummary) {
	for _, i := range c.hweOpen {
		si := &c.infos[i]
		h.addBinnedN(&si.hweRes, si.pBin, si.chiBin, si.hweHits)
		si.hweHits = 0
	}
	c.hweOpen = c.hweOpen[:0]
}

// countHWE counts one more site whose test is si's.
func (c *siteCache) countHWE(si *siteInfo) {
	if si.hweHits == 0 {
		c.hweOpen = append(c.hweOpen, int32(si.idx))
	}
	si.hweHits++
}

// site returns the cached derived values of a site with diploid counts
// n0, n1, n2 and haploid haploid calls among nSel selected samples,
// computing them on a miss.
func (w *Worker) site(n0, n1, n2, haploid int64, nSel int) *siteInfo {
	si, ok := w.sites.get(siteKey{n0, n1, n2, haploid, int64(nSel)}, &w.t.HWETally)
	if ok {
		return si
	}
	si.ho, si.he, si.fsite, si.hweRes = siteStats(n0, n1, n2, w.cache)
	if !math.IsNaN(si.fsite) {
		si.fsiteFixed = fixed(si.fsite)
	}
	if si.hweRes.Computed {
		si.pBin, si.chiBin = hweBins(&si.hweRes)
	}
	nCalled := n0 + n1 + n2
	p := nan
	if nCalled > 0 {
		p = float64(n1+2*n2) / float64(2*nCalled)
	}
	c := w.sites
	off := len(c.rows)
	c.rows = appendSiteFloats(c.rows, nCalled, haploid, nSel, p, si.ho, si.he, si.fsite, &si.hweRes)
	si.rowOff, si.rowEnd = int32(off), int32(len(c.rows))
	si.tabBase = 255
	return si
}

// cohortTab returns the per-sample table for the cohort frequency of the
// site with base genotype base, filling it on first use.
func (si *siteInfo) cohortTab(p float64, nCalled int64, base vcfscan.Geno) *siteTab {
	if si.tabBase != base {
		si.tab.fill(p, nCorr(nCalled), base)
		si.tabBase = base
	}
	return &si.tab
}
