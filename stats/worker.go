package stats

import (
	"bytes"
	"fgauge/internal/numfmt"
	"math"
	"strconv"

	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

var nan = math.NaN()

// Per-sample fixed-point sums, indexes into SampleAcc.Sums. The first
// nVarying depend on the genotype; the others only on the site.
const (
	sumGRM         = iota // Yang et al. F-hat-I terms
	sumExcessHom          // Yang et al. F-hat-II terms
	sumUniting            // Yang et al. F-hat-III terms
	sumVRNum              // VanRaden (x-2p)^2
	sumHomExpected        // f_hom's expected homozygous calls: sum of 1 - 2pq*2n/(2n-1)
	sumVRDen              // VanRaden 2p(1-p)
	nSums
	nVarying = sumHomExpected
)

// The per-call loops in record unroll the genotype-varying sums; these fail to compile if
// their number changes.
var (
	_ [nVarying - 4]struct{}
	_ [4 - nVarying]struct{}
)

// siteTab is the per-site, per-frequency-group table of contributions,
// precomputed so that per-sample work is a table look-up and a few
// 128-bit adds. Every informative site adds the contribution v0 of a base
// genotype once to the group's base (GroupBase); a sample then adds only
// the difference for another call (delta, genotype-varying sums only), or
// subtracts v0 when it has no diploid call. The base genotype is
// homozygous reference, except at sites where most calls (3 in 4) are
// homozygous alternate (one frequency group only), where it is the
// alternate homozygote. Most calls at most sites are the base genotype, so
// the per-call work is small; the totals Base + Sums are the same integers
// as adding each call's own contribution, whichever base is used.
type siteTab struct {
	informative bool
	v0          [nSums]Sum128       // contribution of the base genotype
	neg0        [nSums]Sum128       // -v0
	delta       [3][nVarying]Sum128 // v[g] - v0 (zero for the base genotype)
}

// fill computes the table for alternate-allele frequency p and base
// genotype base (HomRef or HomAlt); corr is the sample-size factor
// 2n/(2n-1) applied to the expected heterozygosity of f_hom (1 for
// external frequencies).
func (t *siteTab) fill(p, corr float64, base vcfscan.Geno) {
	t.informative = p > 0 && p < 1
	if !t.informative {
		return
	}
	d := 2 * p * (1 - p)
	var v [3][nSums]Sum128
	for g := 0; g < 3; g++ {
		x := float64(g)
		v[g][sumGRM] = fixed((x-2*p)*(x-2*p)/d - 1)
		v[g][sumExcessHom] = fixed(1 - x*(2-x)/d)
		v[g][sumUniting] = fixed((x*x - (1+2*p)*x + 2*p*p) / d)
		v[g][sumVRNum] = fixed((x - 2*p) * (x - 2*p))
	}
	v[base][sumHomExpected] = fixed(1 - d*corr)
	v[base][sumVRDen] = fixed(d)
	t.v0 = v[base]
	for k := range t.v0 {
		t.neg0[k] = t.v0[k].neg()
	}
	for g := 0; g < 3; g++ {
		for k := 0; k < nVarying; k++ {
			t.delta[g][k] = v[g][k]
			t.delta[g][k].SubSum(v[base][k])
		}
	}
}

// Worker computes statistics batch by batch on one goroutine. It is not
// safe for concurrent use; run one per goroutine and merge their Totals.
type Worker struct {
	cfg        *Config
	contigName func(id int) string
	t          *Totals
	cache      *hweCache
	sites      *siteCache
	nPop       int
	tabOf      []int32 // per sample: index into tabs
	tabs       []siteTab
	popCnt     [][4]int64 // per population + pooled: hom_ref, het, hom_alt, called
	nBuf       []int64    // scratch for WC
	altBuf     []int64
	hetBuf     []int64
	pairIdx    [][2]int
	scratch    []byte
	lastChrom  int
	chromName  string
	chromBytes []byte
	lastBlock  BlockKey
	block      *BlockAcc
	lik        likWorker

	// Sex chromosomes (sexsites.go).
	contig   sexcheck.Contig
	deferX   bool
	deferred []Deferred
	xcache   *XHWECache
}

// NewWorker returns a Worker for cfg; contigName maps vcfscan chromosome
// ids to names. cfg must have been validated and must not change.
func NewWorker(cfg *Config, contigName func(id int) string) *Worker {
	w := &Worker{cfg: cfg, contigName: contigName, t: newTotals(cfg), lastChrom: -1, deferX: cfg.Sex.DeferX()}
	w.cache = newHWECache(cfg.HWEMethod == "chisq", 1<<14)
	w.sites = newSiteCache(1 << 13)
	w.nPop = len(cfg.PopNames)
	if cfg.PopOf == nil {
		w.nPop = 0
	}
	w.initLik()
	w.tabOf = w.t.GroupOf
	nt := len(w.t.Base)
	w.tabs = make([]siteTab, nt)
	if w.nPop > 0 {
		w.popCnt = make([][4]int64, w.nPop+1)
		w.nBuf = make([]int64, w.nPop)
		w.altBuf = make([]int64, w.nPop)
		w.hetBuf = make([]int64, w.nPop)
		for i := 0; i < w.nPop; i++ {
			for j := i + 1; j < w.nPop; j++ {
				w.pairIdx = append(w.pairIdx, [2]int{i, j})
			}
		}
	}
	return w
}

// Totals returns the worker's accumulated state (not a copy: stop calling
// ProcessBatch before using it). Its likelihood state (Lik) is the
// worker's own unless ShareLikelihoods was called: then the caller puts
// the shared state in the merged totals.
func (w *Worker) Totals() *Totals {
	w.flushHWE()
	if w.lik.private {
		w.t.Lik = w.lik.shared.Acc()
	}
	return w.t
}

// flushHWE adds the HWE tests counted in the site cache to the totals.
func (w *Worker) flushHWE() { w.sites.flushHWE(&w.t.HWETally) }

// ProcessBatch computes the statistics of every record of b in order. For
// each record it appends its sites.tsv row to sites and its
// sites_by_population rows to popSites (may be nil; unused without
// populations), sets freqs[i] to the alternate-allele frequency used for
// record i (NaN when none), and adds the record's per-sample and
// per-population contributions to the worker's totals. freqs must have
// room for len(b.Records) values.
//
// Records on non-PAR X and Y and on the mitochondrion take sexRecord
// instead (see SexConfig); X rows waiting for the sexes are listed by
// Deferred.
func (w *Worker) ProcessBatch(b *vcfscan.Batch, sites, popSites *bytes.Buffer, freqs []float64) {
	w.deferred = w.deferred[:0]
	for i := range b.Records {
		rec := &b.Records[i]
		w.chrom(rec.ChromID)
		if w.contig.Kind != sexcheck.Autosome {
			if k := w.contig.KindAt(rec.Pos); k != sexcheck.Autosome {
				w.t.Sites++
				freqs[i] = w.sexRecord(k, i, rec, b.Calls(i), sites)
				continue
			}
		}
		lf := w.likSite(b, i)
		freqs[i] = w.record(rec, b.Calls(i), lf, sites, popSites)
		w.likAdd(b, i, freqs[i])
	}
}

func (w *Worker) chrom(id int) {
	if id != w.lastChrom {
		w.lastChrom = id
		w.chromName = w.contigName(id)
		w.chromBytes = append(w.chromBytes[:0], w.chromName...)
		w.contig = w.cfg.Sex.contig(w.chromName)
	}
}

func (w *Worker) record(rec *vcfscan.Record, calls []vcfscan.Geno, lf SiteFreq, sites, popSites *bytes.Buffer) float64 {
	t := w.t
	cfg := w.cfg
	w.chrom(rec.ChromID)
	t.Sites++

	// Cohort genotype counts, and per population when asked.
	var cnt [6]int64
	if w.nPop > 0 {
		for k := range w.popCnt {
			w.popCnt[k] = [4]int64{}
		}
		popOf := cfg.PopOf
		for s, g := range calls {
			cnt[g]++
			if g <= vcfscan.HomAlt {
				if p := popOf[s]; p >= 0 {
					w.popCnt[p][g]++
					w.popCnt[w.nPop][g]++
				}
			}
		}
	} else {
		cnt = countCalls(calls)
	}
	n0, n1, n2 := cnt[vcfscan.HomRef], cnt[vcfscan.Heterozygous], cnt[vcfscan.HomAlt]
	nCalled := n0 + n1 + n2
	cohortP := nan
	if nCalled > 0 {
		cohortP = float64(n1+2*n2) / float64(2*nCalled)
	}

	// Site statistics and row (cached by counts, see siteCache). With
	// likelihoods, He and so f_site are taken at the likelihood frequency
	// (not a function of the counts, so not cached).
	si := w.site(n0, n1, n2, cnt[vcfscan.HaploidRef]+cnt[vcfscan.HaploidAlt], len(calls))
	if si.hweRes.Computed {
		w.sites.countHWE(si)
	}
	he, fsite, fsiteFixed := si.he, si.fsite, si.fsiteFixed
	if lf.Samples > 0 {
		he, fsite = likSiteHet(si.ho, lf)
		if !math.IsNaN(fsite) {
			fsiteFixed = fixed(fsite)
		}
	}
	if !math.IsNaN(fsite) {
		t.HWETally.FSite.AddSum(fsiteFixed)
		t.HWETally.FSiteN++
	}
	w.siteRow(sites, rec, &cnt, si, lf, len(calls), cohortP, he, fsite)

	// Populations: per-population rows and sums, WC components.
	if w.nPop > 0 {
		w.populations(rec, popSites)
	}

	// Frequencies for the per-sample estimators. With one frequency
	// group, calls of a homozygote held by at least 3 calls in 4 are
	// skipped by a branch, which then guesses right often enough to beat
	// adding zero (measured on a U-shaped spectrum; 7 in 8 and 15 in 16
	// gained less): homozygous reference (whose delta is zero) or
	// homozygous alternate (made the base genotype).
	used := cohortP
	base, skipG := vcfscan.HomRef, vcfscan.Geno(255)
	if few := int64(len(calls)) - int64(len(calls))/4; n0 >= few {
		skipG = vcfscan.HomRef
	} else if n2 >= few {
		base, skipG = vcfscan.HomAlt, vcfscan.HomAlt
	}
	switch cfg.Freqs {
	case FreqCohort:
		w.tabs[0] = *si.cohortTab(cohortP, nCalled, base)
	case FreqPopulation:
		for k := 0; k < w.nPop; k++ {
			c := &w.popCnt[k]
			nk := c[0] + c[1] + c[2]
			pk := nan
			if nk > 0 {
				pk = float64(c[1]+2*c[2]) / float64(2*nk)
			}
			w.tabs[k].fill(pk, nCorr(nk), vcfscan.HomRef)
		}
		w.tabs[w.nPop].fill(cohortP, nCorr(nCalled), vcfscan.HomRef)
	case FreqInfo:
		used = rec.InfoValue
		if !(used >= 0 && used <= 1) { // absent, NaN or not a frequency
			used = nan
			t.Freq.InfoMissing++
		}
		w.tabs[0].fill(used, 1, base)
	case FreqPanel:
		p, idx, m := cfg.Panel.lookup(w.chromName, rec.Pos, upper(first(rec.Ref)), upper(first(rec.Alt)))
		switch m {
		case panelFound:
			used = p
			t.Freq.markMet(idx, cfg.Panel.Len())
		case panelAbsent:
			used = nan
			t.Freq.PanelAbsent++
		case panelMismatch:
			used = nan
			t.Freq.PanelMismatch++
		}
		w.tabs[0].fill(used, 1, base)
	}

	// Per-sample accumulation.
	accs := t.PerSample
	for k := range w.tabs {
		if tab := &w.tabs[k]; tab.informative {
			base := &t.Base[k]
			base.Sites++
			for j := range base.Sums {
				base.Sums[j].AddSum(tab.v0[j])
			}
		}
	}
	if len(w.tabs) == 1 {
		tab := &w.tabs[0]
		if tab.informative {
			// One call at an informative site (see siteTab), written out
			// here because a method this size is not inlined. Diploid
			// calls take the same branch-free path (the base genotype's
			// delta is zero) so
			// random genotypes cost no mispredicted branches; where at
			// least 3 calls in 4 are of one homozygote (skipG, the base
			// genotype) a branch skips them (see above).
			for s, g := range calls {
				a := &accs[s]
				a.Counts[g]++
				if g == skipG {
					continue
				}
				if g > vcfscan.HomAlt {
					a.addUncalled(tab)
					continue
				}
				a.HetInformative += int64(g & 1)
				d := &tab.delta[g]
				a.Sums[0].AddSum(d[0])
				a.Sums[1].AddSum(d[1])
				a.Sums[2].AddSum(d[2])
				a.Sums[3].AddSum(d[3])
			}
		} else {
			for s, g := range calls {
				accs[s].Counts[g]++
			}
		}
	} else {
		for s, g := range calls {
			a := &accs[s]
			a.Counts[g]++
			tab := &w.tabs[w.tabOf[s]]
			if !tab.informative {
				continue
			}
			// as in the cohort loop above
			if g > vcfscan.HomAlt {
				a.addUncalled(tab)
				continue
			}
			a.HetInformative += int64(g & 1)
			d := &tab.delta[g]
			a.Sums[0].AddSum(d[0])
			a.Sums[1].AddSum(d[1])
			a.Sums[2].AddSum(d[2])
			a.Sums[3].AddSum(d[3])
		}
	}
	return used
}

// countCalls counts calls by code. Four interleaved tables keep
// consecutive equal codes (the usual case) from waiting on each other's
// increments.
func countCalls(calls []vcfscan.Geno) [6]int64 {
	var c0, c1, c2, c3 [6]int64
	i := 0
	for ; i+4 <= len(calls); i += 4 {
		q := calls[i : i+4 : i+4]
		c0[q[0]]++
		c1[q[1]]++
		c2[q[2]]++
		c3[q[3]]++
	}
	for _, g := range calls[i:] {
		c0[g]++
	}
	for k := range c0 {
		c0[k] += c1[k] + c2[k] + c3[k]
	}
	return c0
}

// addUncalled adds a call without a diploid genotype at an informative
// site (the rare path of the per-call loops in record).
func (a *SampleAcc) addUncalled(tab *siteTab) {
	a.Uncalled++
	for k := range tab.neg0 {
		a.Sums[k].AddSum(tab.neg0[k])
	}
}

func first(b []byte) byte {
	if len(b) == 0 {
		return 0
	}
	return b[0]
}

// nCorr is Nei's (1978) small-sample factor 2n/(2n-1) for n individuals.
func nCorr(n int64) float64 {
	if n <= 0 {
		return 1
	}
	return float64(2*n) / float64(2*n-1)
}

// siteStats returns observed and expected heterozygosity, f_site and the
// HWE test for diploid counts. He carries Nei's (1978, Genetics
// 89:583-590) small-sample correction 2n/(2n-1)*2pq; f_site = 1 - Ho/He.
func siteStats(n0, n1, n2 int64, cache *hweCache) (ho, he, fsite float64, hwe HWEResult) {
	n := n0 + n1 + n2
	if n == 0 {
		return nan, nan, nan, HWEResult{P: nan, MidP: nan, Deficit: nan, Excess: nan, PObs: nan, ChiSq: nan}
	}
	p := float64(n1+2*n2) / float64(2*n)
	ho = float64(n1) / float64(n)
	he = nCorr(n) * 2 * p * (1 - p)
	fsite = nan
	if he > 0 {
		fsite = 1 - ho/he
	}
	hwe = cache.test(n0, n1, n2)
	return
}

func (w *Worker) populations(rec *vcfscan.Record, popSites *bytes.Buffer) {
	t := w.t
	for k := 0; k <= w.nPop; k++ {
		c := &w.popCnt[k]
		c[3] = c[0] + c[1] + c[2]
		ho, he, fsite, hwe := siteStats(c[0], c[1], c[2], w.cache)
		g := &t.Groups[k]
		if c[3] > 0 {
			g.Sites++
			g.HoSum.Add(ho)
			g.HeSum.Add(he)
		}
		if hwe.Computed {
			g.Tested++
			if hwe.P < 1e-6 {
				g.BelowE6++
			}
		}
		if k < w.nPop && popSites != nil {
			b := w.scratch[:0]
			b = append(b, w.chromBytes...)
			b = append(b, '\t')
			b = strconv.AppendInt(b, rec.Pos, 10)
			b = append(b, '\t')
			b = append(b, w.cfg.PopNames[k]...)
			b = append(b, '\t')
			b = strconv.AppendInt(b, c[3], 10)
			b = appendFloat(b, ho)
			b = appendFloat(b, he)
			b = appendFloat(b, fsite)
			b = appendFloat(b, hwe.P)
			b = append(b, '\n')
			popSites.Write(b)
			w.scratch = b
		}
	}
	// Weir & Cockerham components over all populations and per pair.
	for k := 0; k < w.nPop; k++ {
		c := &w.popCnt[k]
		w.nBuf[k], w.altBuf[k], w.hetBuf[k] = c[3], c[1]+2*c[2], c[1]
	}
	blk := w.blockFor(rec.Pos)
	if a, b, c, ok := WeirCockerham(w.nBuf, w.altBuf, w.hetBuf); ok {
		blk.All.add(a, b, c)
	}
	for j, pr := range w.pairIdx {
		i0, i1 := pr[0], pr[1]
		n := [2]int64{w.nBuf[i0], w.nBuf[i1]}
		al := [2]int64{w.altBuf[i0], w.altBuf[i1]}
		h := [2]int64{w.hetBuf[i0], w.hetBuf[i1]}
		if n[0] == 0 || n[1] == 0 {
			continue
		}
		if a, b, c, ok := WeirCockerham(n[:], al[:], h[:]); ok {
			blk.Pairs[j].add(a, b, c)
		}
	}
}

func (w *Worker) blockFor(pos int64) *BlockAcc {
	bp := w.cfg.JackknifeBlockBP
	if bp <= 0 {
		bp = DefaultJackknifeBlockBP
	}
	k := BlockKey{Chrom: w.chromName, Index: (pos - 1) / bp}
	if w.block != nil && k == w.lastBlock {
		return w.block
	}
	b := w.t.Blocks[k]
	if b == nil {
		b = &BlockAcc{Pairs: make([]WCSums, len(w.pairIdx))}
		w.t.Blocks[k] = b
	}
	w.lastBlock, w.block = k, b
	return b
}

func (w *Worker) siteRow(sites *bytes.Buffer, rec *vcfscan.Record, cnt *[6]int64, si *siteInfo, lf SiteFreq, nSel int, p, he, fsite float64) {
	if sites == nil {
		return
	}
	b := w.scratch[:0]
	b = append(b, w.chromBytes...)
	b = append(b, '\t')
	b = strconv.AppendInt(b, rec.Pos, 10)
	b = append(b, '\t')
	b = append(b, rec.Ref...)
	b = append(b, '\t')
	b = append(b, rec.Alt...)
	for _, g := range [...]vcfscan.Geno{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.HomAlt, vcfscan.Missing} {
		b = append(b, '\t')
		b = strconv.AppendInt(b, cnt[g], 10)
	}
	haploid := cnt[vcfscan.HaploidRef] + cnt[vcfscan.HaploidAlt]
	b = append(b, '\t')
	b = strconv.AppendInt(b, haploid, 10)
	if lf.Samples > 0 {
		b = appendSiteFloats(b, cnt[vcfscan.HomRef]+cnt[vcfscan.Heterozygous]+cnt[vcfscan.HomAlt], haploid, nSel, p, si.ho, he, fsite, &si.hweRes)
	} else {
		b = append(b, w.sites.rows[si.rowOff:si.rowEnd]...)
	}
	b = appendFloat(b, lf.AltFreq)
	if w.cfg.Sex.XColumns {
		b = append(b, xNA...)
	}
	b = append(b, '\n')
	sites.Write(b)
	w.scratch = b
}

// appendSiteFloats appends the float columns of a sites.tsv row, from
// alt_freq to hwe_p_more_het (alt_freq_lik follows), each after a tab: all are functions of the
// site's diploid counts (called of them), its haploid calls (call_rate
// counts them as calls) and the number of selected samples nSel, so
// siteCache keeps them formatted under that key.
func appendSiteFloats(b []byte, called, haploid int64, nSel int, p, ho, he, fsite float64, hwe *HWEResult) []byte {
	b = appendFloat(b, p)
	maf := nan
	if !math.IsNaN(p) {
		maf = math.Min(p, 1-p)
	}
	b = appendFloat(b, maf)
	cr := nan // a haploid call counts as a call here, and nowhere else
	if nSel > 0 {
		cr = float64(called+haploid) / float64(nSel)
	}
	b = appendFloat(b, cr)
	b = appendFloat(b, ho)
	b = appendFloat(b, he)
	b = appendFloat(b, fsite)
	b = appendFloat(b, hwe.P)
	b = appendFloat(b, hwe.MidP)
	b = appendFloat(b, hwe.Deficit)
	b = appendFloat(b, hwe.Excess)
	return b
}

// appendFloat appends a tab and x in shortest round-trip form, or NA.
func appendFloat(b []byte, x float64) []byte {
	return numfmt.AppendFloat(append(b, '\t'), x)
}

// SitesHeader is the header line of sites.tsv (no trailing newline),
// without the male-count columns of non-PAR X rows.
func SitesHeader() string {
	return headerLine(FileSites, xSiteColumns...)
}

// SitesHeaderFor is the header line of sites.tsv for cfg: with the
// male-count columns when cfg.Sex.XColumns.
func SitesHeaderFor(cfg *Config) string {
	if cfg.Sex.XColumns {
		return headerLine(FileSites)
	}
	return SitesHeader()
}

// xSiteColumns are the sites.tsv columns of non-PAR X rows only.
var xSiteColumns = []string{"n_male_ref", "n_male_alt", "n_male_het_error", "n_sex_unknown"}

// PopSitesHeader is the header line of sites_by_population.tsv.
func PopSitesHeader() string {
	return headerLine(FilePopSites)
}
