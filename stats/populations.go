package stats

import (
	"bufio"
	"fgauge/internal/numfmt"
	"io"
	"math"
	"math/bits"
	"sort"
	"strings"
)

// sortedBlocks returns the block keys in genomic order (chromosome name,
// then window), so that jackknife arithmetic runs in a fixed order.
func (t *Totals) sortedBlocks() []BlockKey {
	keys := make([]BlockKey, 0, len(t.Blocks))
	for k := range t.Blocks {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i].Chrom != keys[j].Chrom {
			return keys[i].Chrom < keys[j].Chrom
		}
		return keys[i].Index < keys[j].Index
	})
	return keys
}

// wcJackknife returns the genome-wide ratio estimate and its delete-one
// block jackknife standard error for the sums picked by get.
//
// Blocks are genomic windows (chromosome, (pos-1)/JackknifeBlockBP), not
// runs of K consecutive sites: window sums are keyed by position, so
// shards and threads that split a chromosome anywhere add into the same
// keys and merge exactly, whereas blocks of K consecutive sites cannot be
// re-formed once a chromosome has been split. The SE is the usual
// delete-one jackknife over the g non-empty blocks,
// sqrt((g-1)/g * sum_k (est_-k - mean est_-)^2) (Efron 1982; common
// practice); NA with fewer than two blocks.
func (t *Totals) wcJackknife(get func(*BlockAcc) *WCSums, est func(*WCSums) float64) (value, se float64, blocks int, sites int64) {
	var total WCSums
	keys := t.sortedBlocks()
	used := keys[:0:0]
	for _, k := range keys {
		s := get(t.Blocks[k])
		if s.N == 0 {
			continue
		}
		total.merge(s)
		used = append(used, k)
	}
	value = est(&total)
	g := len(used)
	se = nan
	if g >= 2 && !math.IsNaN(value) {
		loo := make([]float64, g)
		var mean float64
		for i, k := range used {
			r := total.sub(get(t.Blocks[k]))
			loo[i] = est(&r)
			mean += loo[i]
		}
		mean /= float64(g)
		var ss float64
		for _, v := range loo {
			ss += (v - mean) * (v - mean)
		}
		se = math.Sqrt(float64(g-1) / float64(g) * ss)
	}
	return value, se, g, total.N
}

// PopulationsHeader is the header of populations.tsv.
func PopulationsHeader() string {
	return headerLine(FilePopulations)
}

// popSampleCounts returns the number of samples per population and pooled.
func (t *Totals) popSampleCounts() []int64 {
	n := make([]int64, len(t.PopNames)+1)
	for _, p := range t.PopOf {
		if p >= 0 {
			n[p]++
			n[len(t.PopNames)]++
		}
	}
	return n
}

// PooledName is the population column of the genome-wide row.
const PooledName = "all_pooled"

// WritePopulations writes populations.tsv: one row per population, then
// a row "all_pooled".
//
// Per-population rows: mean_het_observed and mean_het_expected are means
// over the sites where the population has at least one diploid call (He
// with Nei's small-sample correction); f_is = 1 - sum Ho / sum He over
// those sites; share_hwe_p_below_1e6 is the share of the population's
// tested sites with hwe_p < 1e-6; f_is_se, f_st, f_st_se, f_it, f_it_se
// are NA.
//
// The all_pooled row treats every sample assigned to a population as one
// group for n_samples, the mean heterozygosities and the HWE share, but
// its f_is is Weir & Cockerham's (1984) f, with f_st their theta and f_it
// their F, genome-wide ratios of summed components, each with its block
// jackknife standard error.
func (t *Totals) WritePopulations(w io.Writer) error {
	bw := bufio.NewWriter(w)
	bw.WriteString(PopulationsHeader() + "\n")
	ns := t.popSampleCounts()
	for k := range t.Groups {
		g := &t.Groups[k]
		name := PooledName
		if k < len(t.PopNames) {
			name = t.PopNames[k]
		}
		ho, he := g.HoSum.Float64(), g.HeSum.Float64()
		row := []string{name, itoa(ns[k]), ftoa(ratio(ho, float64(g.Sites))), ftoa(ratio(he, float64(g.Sites)))}
		if k < len(t.PopNames) {
			fis := nan
			if he > 0 {
				fis = 1 - ho/he
			}
			row = append(row, ftoa(fis), ftoa(ratio(float64(g.BelowE6), float64(g.Tested))), numfmt.NA, numfmt.NA, numfmt.NA, numfmt.NA, numfmt.NA)
		} else {
			all := func(b *BlockAcc) *WCSums { return &b.All }
			fis, fisSE, _, _ := t.wcJackknife(all, (*WCSums).fis)
			fst, fstSE, _, _ := t.wcJackknife(all, (*WCSums).theta)
			fit, fitSE, _, _ := t.wcJackknife(all, (*WCSums).fit)
			row = append(row, ftoa(fis), ftoa(ratio(float64(g.BelowE6), float64(g.Tested))), ftoa(fisSE), ftoa(fst), ftoa(fstSE), ftoa(fit), ftoa(fitSE))
		}
		bw.WriteString(strings.Join(row, "\t"))
		bw.WriteByte('\n')
	}
	return bw.Flush()
}

// PairwiseHeader is the header of populations_pairwise.tsv.
func PairwiseHeader() string {
	return headerLine(FilePairwise)
}

// WritePairwise writes populations_pairwise.tsv: Weir & Cockerham (1984)
// theta for every pair of populations (a before b in population-file
// order), with its block jackknife SE and the number of sites where both
// had calls and the pair was polymorphic.
func (t *Totals) WritePairwise(w io.Writer) error {
	bw := bufio.NewWriter(w)
	bw.WriteString(PairwiseHeader() + "\n")
	j := 0
	for a := 0; a < len(t.PopNames); a++ {
		for b := a + 1; b < len(t.PopNames); b++ {
			jj := j
			get := func(bl *BlockAcc) *WCSums { return &bl.Pairs[jj] }
			fst, se, _, n := t.wcJackknife(get, (*WCSums).theta)
			bw.WriteString(strings.Join([]string{t.PopNames[a], t.PopNames[b], ftoa(fst), ftoa(se), itoa(n)}, "\t"))
			bw.WriteByte('\n')
			j++
		}
	}
	return bw.Flush()
}

// HasPopulations reports whether populations were given.
func (t *Totals) HasPopulations() bool { return t.PopOf != nil }

// SitesSummary is the run.json "sites" section: the Hardy-Weinberg tests,
// the genomic inflation of their chi-square statistics, the mean f_site,
// the QQ points and where the estimators' allele frequencies came from.
// Fields are in the order run.json lists them.
type SitesSummary struct {
	Frequencies FreqSummary      `json:"frequencies"`
	HWEMethod   string           `json:"hwe_method"`
	Below1e10   int64            `json:"hwe_p_below_1e10"`
	Below1e3    int64            `json:"hwe_p_below_1e3"`
	Below1e6    int64            `json:"hwe_p_below_1e6"`
	Lambda      numfmt.JSONFloat `json:"lambda"`      // genomic inflation factor; null without tests
	MeanFSite   numfmt.JSONFloat `json:"mean_f_site"` // null without polymorphic sites
	QQ          [][2]float64     `json:"qq"`          // [expected, observed] -log10 p
	Tested      int64            `json:"tested"`
}

// FreqSummary says where the per-sample estimators' allele frequencies
// came from ("cohort", "population", "info" or "panel") and, for INFO or
// panel frequencies, how many sites lacked one.
type FreqSummary struct {
	PanelAbsent   *int64 `json:"data_sites_absent_from_panel,omitempty"`
	PanelMismatch *int64 `json:"data_sites_allele_mismatch,omitempty"`
	PanelSites    *int64 `json:"panel_sites,omitempty"`
	PanelNeverMet *int64 `json:"panel_sites_never_met,omitempty"`
	InfoMissing   *int64 `json:"sites_without_info_value,omitempty"`
	Source        string `json:"source"`
}

// PopulationSummary is the run.json "populations" section: names, samples
// per population, samples not assigned to one, and the genome-wide Weir &
// Cockerham f_st, f_is, f_it with their block jackknife SEs, sites used
// and blocks.
type PopulationSummary struct {
	FIS              numfmt.JSONFloat `json:"f_is"`
	FISSE            numfmt.JSONFloat `json:"f_is_se"`
	FIT              numfmt.JSONFloat `json:"f_it"`
	FITSE            numfmt.JSONFloat `json:"f_it_se"`
	FST              numfmt.JSONFloat `json:"f_st"`
	FSTSE            numfmt.JSONFloat `json:"f_st_se"`
	JackknifeBlockBP int64            `json:"jackknife_block_bp"`
	JackknifeBlocks  int              `json:"jackknife_blocks"`
	NSamples         map[string]int64 `json:"n_samples"`
	Names            []string         `json:"names"`
	// SamplesNotListed are the selected samples absent from the
	// populations file (left out of population statistics).
	SamplesNotListed   []string `json:"samples_not_listed"`
	SamplesUnassigned  int64    `json:"samples_unassigned"`
	SitesUsed          int64    `json:"sites_used"`
	UnassignedFirst100 []string `json:"unassigned_first_100"`
}

// Summary returns the run.json "sites" section.
func (t *Totals) Summary() *SitesSummary {
	h := &t.HWETally
	fr := FreqSummary{Source: t.Freqs.String()}
	p := func(v int64) *int64 { return &v }
	switch t.Freqs {
	case FreqInfo:
		fr.InfoMissing = p(t.Freq.InfoMissing)
	case FreqPanel:
		var met int64
		for _, w := range t.Freq.PanelMet {
			met += int64(bits.OnesCount64(w))
		}
		fr.PanelSites = p(int64(t.Freq.PanelSize))
		fr.PanelNeverMet = p(int64(t.Freq.PanelSize) - met)
		fr.PanelAbsent = p(t.Freq.PanelAbsent)
		fr.PanelMismatch = p(t.Freq.PanelMismatch)
	}
	return &SitesSummary{
		Frequencies: fr,
		HWEMethod:   t.HWEMethod,
		Tested:      h.Tested,
		Below1e3:    h.Below[0],
		Below1e6:    h.Below[1],
		Below1e10:   h.Below[2],
		Lambda:      numfmt.JSONFloat(t.lambda()),
		MeanFSite:   numfmt.JSONFloat(ratio(h.FSite.Float64(), float64(h.FSiteN))),
		QQ:          t.qq(defaultQQPoint),
	}
}

// PopulationSummary returns the run.json "populations" section, nil
// without populations.
func (t *Totals) PopulationSummary() *PopulationSummary {
	if t.PopOf == nil {
		return nil
	}
	all := func(b *BlockAcc) *WCSums { return &b.All }
	fst, fstSE, g, n := t.wcJackknife(all, (*WCSums).theta)
	fis, fisSE, _, _ := t.wcJackknife(all, (*WCSums).fis)
	fit, fitSE, _, _ := t.wcJackknife(all, (*WCSums).fit)
	ns := t.popSampleCounts()
	per := map[string]int64{}
	for i, name := range t.PopNames {
		per[name] = ns[i]
	}
	unassigned, notListed := []string{}, []string{}
	for i, p := range t.PopOf {
		if p < 0 {
			notListed = append(notListed, t.Samples[i])
			if len(unassigned) < 100 {
				unassigned = append(unassigned, t.Samples[i])
			}
		}
	}
	return &PopulationSummary{
		Names:              t.PopNames,
		UnassignedFirst100: unassigned,
		SamplesNotListed:   notListed,
		NSamples:           per,
		SamplesUnassigned:  int64(len(t.PopOf)) - ns[len(t.PopNames)],
		FST:                numfmt.JSONFloat(fst), FSTSE: numfmt.JSONFloat(fstSE),
		FIS: numfmt.JSONFloat(fis), FISSE: numfmt.JSONFloat(fisSE),
		FIT: numfmt.JSONFloat(fit), FITSE: numfmt.JSONFloat(fitSE),
		SitesUsed:        n,
		JackknifeBlocks:  g,
		JackknifeBlockBP: t.JackknifeBlockBP,
	}
}

// lambda is the genomic inflation factor of the HWE chi-square
// statistics: median / the median of chi-square(1) (common practice), with the median read
// from a histogram of 1000 bins per decade (bin centre; within 0.12%).
func (t *Totals) lambda() float64 {
	h := t.HWETally.ChiHist
	var n int64
	keys := make([]int32, 0, len(h))
	for k, v := range h {
		keys = append(keys, k)
		n += v
	}
	if n == 0 {
		return nan
	}
	sort.Slice(keys, func(i, j int) bool { return keys[i] < keys[j] })
	target := (n + 1) / 2 // lower median
	var c int64
	for _, k := range keys {
		c += h[k]
		if c >= target {
			if k == chiZeroBin {
				return 0
			}
			return math.Pow(10, (float64(k)+0.5)/chiBinsPerDec+chiMinLog10) / lambdaDivisor
		}
	}
	return nan
}

// qq returns up to about npts points [expected, observed] of -log10 p,
// at ranks spaced evenly on a log scale from the smallest p; observed
// values are bin centres of a 0.01-wide histogram of -log10 p, capped at
// 330 (p = 0 and p < 1e-330).
func (t *Totals) qq(npts int) [][2]float64 {
	h := t.HWETally.PHist
	var n int64
	keys := make([]int32, 0, len(h))
	for k, v := range h {
		keys = append(keys, k)
		n += v
	}
	if n == 0 {
		return [][2]float64{}
	}
	sort.Slice(keys, func(i, j int) bool { return keys[i] > keys[j] }) // smallest p first
	var ranks []int64
	for i := 0; i < npts; i++ {
		r := int64(math.Round(math.Pow(float64(n), float64(i)/float64(npts-1))))
		if len(ranks) == 0 || r > ranks[len(ranks)-1] {
			ranks = append(ranks, r)
		}
	}
	out := make([][2]float64, 0, len(ranks))
	var c int64
	ki := 0
	for _, r := range ranks {
		for ki < len(keys) && c+h[keys[ki]] < r {
			c += h[keys[ki]]
			ki++
		}
		if ki >= len(keys) {
			break
		}
		obs := (float64(keys[ki]) + 0.5) / pBinsPerUnit
		if keys[ki] == pMaxBin {
			obs = pMaxBin / pBinsPerUnit
		}
		exp := -math.Log10((float64(r) - 0.5) / float64(n))
		out = append(out, [2]float64{round6(exp), round6(obs)})
	}
	return out
}

func round6(x float64) float64 { return math.Round(x*1e6) / 1e6 }
