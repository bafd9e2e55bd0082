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
}

// siteCache memoises siteInfo by siteKey for one worker. It is bounded:
// when full it is emptied (entries are pure functions of the key, so
// output does not depend on the cache's state).
type siteCache struct {
	idx   map[siteKey]int32
	infos []siteInfo
	rows  []byte
	max   int
}

func newSiteCache(max int) *siteCache {
	return &siteCache{idx: make(map[siteKey]int32), max: max}
}

// get returns the entry for k and whether it was already there; a new
// entry is zeroed and must be filled by the caller.
func (c *siteCache) get(k siteKey) (*siteInfo, bool) {
	if i, ok := c.idx[k]; ok {
		return &c.infos[i], true
	}
	if len(c.infos) >= c.max {
		clear(c.idx)
		c.infos = c.infos[:0]
		c.rows = c.rows[:0]
	}
	c.idx[k] = int32(len(c.infos))
	c.infos = append(c.infos, siteInfo{})
	return &c.infos[len(c.infos)-1], false
}

// site returns the cached derived values of a site with diploid counts
// n0, n1, n2 and haploid haploid calls among nSel selected samples,
// computing them on a miss.
func (w *Worker) site(n0, n1, n2, haploid int64, nSel int) *siteInfo {
	si, ok := w.sites.get(siteKey{n0, n1, n2, haploid, int64(nSel)})
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
