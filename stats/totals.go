package stats

import (
	"errors"
	"fgauge/internal/numfmt"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
	"slices"
	"strings"

	"fgauge/vcfscan"
)

// SampleAcc is one sample's accumulated counts and fixed-point sums,
// relative to its frequency group's GroupBase: the sample's estimator sums
// are Base.Sums + Sums, its informative sites Base.Sites - Uncalled.
type SampleAcc struct {
	Counts         [6]int64 // by vcfscan.Geno code
	Uncalled       int64    // informative sites of its group without a diploid call
	HetInformative int64    // heterozygous calls at informative sites
	Sums           [nSums]Sum128
}

// GroupBase holds, for one frequency group (the cohort, or one
// population), the homozygous-reference contributions of every
// informative site (0 < p < 1) of that group.
type GroupBase struct {
	Sites int64
	Sums  [nSums]Sum128
}

// GroupAcc accumulates one population's (or the pooled sample's)
// heterozygosities and HWE tests over sites.
type GroupAcc struct {
	Sites        int64 // sites where the group has at least one diploid call
	HoSum, HeSum Sum128
	Tested       int64 // sites where the group's HWE test was defined
	BelowE6      int64 // of those, hwe_p < 1e-6
}

// BlockKey names a jackknife block: a genomic window of
// Config.JackknifeBlockBP bases, (pos-1)/block_bp, on a chromosome.
type BlockKey struct {
	Chrom string
	Index int64
}

// BlockAcc holds the Weir & Cockerham sums of one block: over all
// populations, and per pair (index as in pair order i<j).
type BlockAcc struct {
	All   WCSums
	Pairs []WCSums
}

// HWESummary accumulates the cohort-level HWE tests for run.json.
// Histograms are sparse maps so that they merge by key exactly.
type HWESummary struct {
	Tested  int64
	Below   [3]int64 // hwe_p < 1e-3, 1e-6, 1e-10
	FSite   Sum128   // sum of defined f_site
	FSiteN  int64
	ChiHist map[int32]int64 // chi-square statistic, 1000 bins per decade
	PHist   map[int32]int64 // -log10 hwe_p, bins of 0.01
}

const (
	pBinsPerUnit   = 100
	pMaxBin        = 330 * pBinsPerUnit // -log10 p >= 330 (and p = 0) share this bin
	chiBinsPerDec  = 1000
	chiMinLog10    = -12
	chiZeroBin     = math.MinInt32
	defaultQQPoint = 300
)

// lambdaDivisor is the median of the chi-square distribution with one
// degree of freedom (0.45493642...), the expected median of the HWE test
// statistics under the null (common practice), from gonum's quantile.
var lambdaDivisor = distuv.ChiSquared{K: 1}.Quantile(0.5)

func (h *HWESummary) add(r *HWEResult) {
	pb, cb := hweBins(r)
	h.addBinned(r, pb, cb)
}

// hweBins returns the histogram bins of a test's p-value and chi-square
// statistic (cb is meaningless when ChiSq is NaN).
func hweBins(r *HWEResult) (pb, cb int32) {
	pb = int32(pMaxBin)
	if p := r.P; p > 0 {
		pb = int32(math.Min(math.Floor(-math.Log10(p)*pBinsPerUnit), pMaxBin))
		if pb < 0 {
			pb = 0
		}
	}
	cb = int32(chiZeroBin)
	if x := r.ChiSq; x > 0 {
		cb = int32(math.Max(math.Floor((math.Log10(x)-chiMinLog10)*chiBinsPerDec), 0))
	}
	return pb, cb
}

// addBinned is add with the bins of r already computed by hweBins.
func (h *HWESummary) addBinned(r *HWEResult, pb, cb int32) { h.addBinnedN(r, pb, cb, 1) }

// addBinnedN is addBinned n times.
func (h *HWESummary) addBinnedN(r *HWEResult, pb, cb int32, n int64) {
	h.Tested += n
	p := r.P
	if p < 1e-3 {
		h.Below[0] += n
	}
	if p < 1e-6 {
		h.Below[1] += n
	}
	if p < 1e-10 {
		h.Below[2] += n
	}
	h.PHist[pb] += n
	if !math.IsNaN(r.ChiSq) {
		h.ChiHist[cb] += n
	}
}

// FreqCounts records how the estimator frequencies were found.
type FreqCounts struct {
	InfoMissing   int64    // sites without the INFO value
	PanelAbsent   int64    // data sites absent from the panel
	PanelMismatch int64    // data sites whose alleles differ from the panel's
	PanelMet      []uint64 // bitset over panel sites met in the data
	PanelSize     int64
}

func (f *FreqCounts) markMet(i, n int) {
	if f.PanelMet == nil {
		f.PanelMet = make([]uint64, (n+63)/64)
		f.PanelSize = int64(n)
	}
	f.PanelMet[i/64] |= 1 << (i % 64)
}

// Totals is the mergeable state of one or more Workers. Fields are
// exported so that it can be encoded with encoding/gob for shard states.
type Totals struct {
	Samples          []string
	PopOf            []int
	PopNames         []string
	HWEMethod        string
	Freqs            FreqSource
	JackknifeBlockBP int64
	MinCallRate      float64

	Sites     int64 // kept records
	PerSample []SampleAcc
	GroupOf   []int32     // per sample: its frequency group, index into Base
	Base      []GroupBase // per frequency group
	Groups    []GroupAcc  // per population, then the pooled sample
	Blocks    map[BlockKey]*BlockAcc
	HWETally  HWESummary
	Freq      FreqCounts

	// LikFreqs is Config.LikFreqs; Lik is the genotype-likelihood state
	// (f_lik summaries, depth), nil when no record carried PL, GL or DP.
	LikFreqs LikFreqSource
	Lik      *LikAcc
	// Sex holds the sex-check evidence and the count of non-PAR X, Y and
	// MT sites, which stay out of the per-sample autosomal statistics.
	Sex SexTotals
}

func newTotals(cfg *Config) *Totals {
	t := &Totals{
		Samples: cfg.Samples, PopOf: cfg.PopOf, PopNames: cfg.PopNames,
		HWEMethod: cfg.HWEMethod, Freqs: cfg.Freqs, JackknifeBlockBP: cfg.JackknifeBlockBP,
		MinCallRate: cfg.MinCallRate, LikFreqs: cfg.LikFreqs,
		PerSample: make([]SampleAcc, len(cfg.Samples)),
		Blocks:    map[BlockKey]*BlockAcc{},
		HWETally:  HWESummary{ChiHist: map[int32]int64{}, PHist: map[int32]int64{}},
		Sex:       newSexTotals(cfg),
	}
	if t.HWEMethod == "" {
		t.HWEMethod = "exact"
	}
	if t.JackknifeBlockBP <= 0 {
		t.JackknifeBlockBP = DefaultJackknifeBlockBP
	}
	if cfg.PopOf != nil {
		t.Groups = make([]GroupAcc, len(cfg.PopNames)+1)
	}
	t.GroupOf, t.Base = freqGroups(cfg)
	if cfg.Panel != nil {
		t.Freq.PanelSize = int64(cfg.Panel.Len())
	}
	return t
}

// NewTotals returns empty totals for cfg (the identity of Merge).
func NewTotals(cfg *Config) *Totals { return newTotals(cfg) }

// ErrIncompatible is returned by Merge for totals of different runs.
var ErrIncompatible = errors.New("totals from incompatible configurations")

// Merge adds o into t. Merging is exact: associative and commutative bit
// for bit, so any split of the input merges to identical output.
func (t *Totals) Merge(o *Totals) error {
	switch {
	case !slices.Equal(t.Samples, o.Samples):
		return fmt.Errorf("stats: merge: sample lists differ: %w", ErrIncompatible)
	case !slices.Equal(t.PopOf, o.PopOf) || !slices.Equal(t.PopNames, o.PopNames):
		return fmt.Errorf("stats: merge: populations differ: %w", ErrIncompatible)
	case t.HWEMethod != o.HWEMethod || t.Freqs != o.Freqs || t.JackknifeBlockBP != o.JackknifeBlockBP || t.LikFreqs != o.LikFreqs:
		return fmt.Errorf("stats: merge: HWE method, frequency source or jackknife block differ: %w", ErrIncompatible)
	case len(t.Groups) != len(o.Groups):
		return fmt.Errorf("stats: merge: population groups differ: %w", ErrIncompatible)
	}
	t.Sites += o.Sites
	if err := t.Sex.merge(&o.Sex); err != nil {
		return err
	}
	for i := range t.PerSample {
		a, b := &t.PerSample[i], &o.PerSample[i]
		for k := range a.Counts {
			a.Counts[k] += b.Counts[k]
		}
		a.Uncalled += b.Uncalled
		a.HetInformative += b.HetInformative
		for k := range a.Sums {
			a.Sums[k].AddSum(b.Sums[k])
		}
	}
	if !slices.Equal(t.GroupOf, o.GroupOf) || len(t.Base) != len(o.Base) {
		return fmt.Errorf("stats: merge: frequency groups differ: %w", ErrIncompatible)
	}
	for i := range t.Base {
		a, b := &t.Base[i], &o.Base[i]
		a.Sites += b.Sites
		for k := range a.Sums {
			a.Sums[k].AddSum(b.Sums[k])
		}
	}
	for i := range t.Groups {
		a, b := &t.Groups[i], &o.Groups[i]
		a.Sites += b.Sites
		a.HoSum.AddSum(b.HoSum)
		a.HeSum.AddSum(b.HeSum)
		a.Tested += b.Tested
		a.BelowE6 += b.BelowE6
	}
	if t.Blocks == nil {
		t.Blocks = map[BlockKey]*BlockAcc{}
	}
	for k, ob := range o.Blocks {
		tb := t.Blocks[k]
		if tb == nil {
			tb = &BlockAcc{Pairs: make([]WCSums, len(ob.Pairs))}
			t.Blocks[k] = tb
		}
		if len(tb.Pairs) != len(ob.Pairs) {
			return fmt.Errorf("stats: merge: block %s:%d has %d pairs, other %d: %w", k.Chrom, k.Index, len(tb.Pairs), len(ob.Pairs), ErrIncompatible)
		}
		tb.All.merge(&ob.All)
		for j := range tb.Pairs {
			tb.Pairs[j].merge(&ob.Pairs[j])
		}
	}
	h, oh := &t.HWETally, &o.HWETally
	h.Tested += oh.Tested
	for k := range h.Below {
		h.Below[k] += oh.Below[k]
	}
	h.FSite.AddSum(oh.FSite)
	h.FSiteN += oh.FSiteN
	if h.ChiHist == nil {
		h.ChiHist = map[int32]int64{}
	}
	if h.PHist == nil {
		h.PHist = map[int32]int64{}
	}
	for k, v := range oh.ChiHist {
		h.ChiHist[k] += v
	}
	for k, v := range oh.PHist {
		h.PHist[k] += v
	}
	f, of := &t.Freq, &o.Freq
	f.InfoMissing += of.InfoMissing
	f.PanelAbsent += of.PanelAbsent
	f.PanelMismatch += of.PanelMismatch
	if of.PanelSize > f.PanelSize {
		f.PanelSize = of.PanelSize
	}
	if len(of.PanelMet) > len(f.PanelMet) {
		f.PanelMet = append(f.PanelMet, make([]uint64, len(of.PanelMet)-len(f.PanelMet))...)
	}
	for i, v := range of.PanelMet {
		f.PanelMet[i] |= v
	}
	switch {
	case o.Lik == nil:
	case t.Lik == nil:
		t.Lik = NewLikAcc(len(o.Lik.FLik))
		fallthrough
	default:
		if err := t.Lik.Merge(o.Lik); err != nil {
			return fmt.Errorf("stats: merge: %w: %w", err, ErrIncompatible)
		}
	}
	return nil
}

// sampleEstimates are one sample's derived values.
type sampleEstimates struct {
	called, informative, homInformative    int64
	callRate, hetRate, homExp              float64
	fHom, fGRM, fExcess, fUniting, fVanRad float64
	homShare, homShareHWE                  float64 // homInformative and homExp over informative
}

func (t *Totals) estimates(i int) sampleEstimates {
	a := &t.PerSample[i]
	base := &t.Base[t.GroupOf[i]]
	var e sampleEstimates
	e.called = a.Counts[0] + a.Counts[1] + a.Counts[2]
	e.informative = base.Sites - a.Uncalled
	e.homInformative = e.informative - a.HetInformative
	// A haploid call is a call for call_rate, though it stays out of every
	// diploid statistic; non-PAR X, Y and MT sites are not counted at all
	// (the sex columns describe them).
	e.callRate = ratio(float64(e.called+a.Counts[vcfscan.HaploidRef]+a.Counts[vcfscan.HaploidAlt]), float64(t.Sites-t.Sex.other()))
	e.hetRate = ratio(float64(a.Counts[1]), float64(e.called))
	var sums [nSums]float64
	for k := range sums {
		s := base.Sums[k]
		s.AddSum(a.Sums[k])
		sums[k] = s.Float64()
	}
	n := float64(e.informative)
	e.homExp = sums[sumHomExpected]
	e.fHom, e.fGRM, e.fExcess, e.fUniting, e.fVanRad = nan, nan, nan, nan, nan
	e.homShare, e.homShareHWE = nan, nan
	if e.informative > 0 {
		// f_hom, the method-of-moments F of Li & Horvitz (1953, Am J Hum
		// Genet 5:107) summed over the sample's sites: 1 minus the
		// heterozygous calls seen over those Hardy-Weinberg predicts.
		// Written as the homozygous excess over its largest possible
		// value, (hom seen - hom expected)/(sites - hom expected), the
		// same number, computed this way since the first version (the
		// per-sample sum over many sites is common practice).
		e.fHom = ratio(float64(e.homInformative)-e.homExp, n-e.homExp)
		e.homShare = float64(e.homInformative) / n
		e.homShareHWE = e.homExp / n
		e.fGRM = sums[sumGRM] / n
		e.fExcess = sums[sumExcessHom] / n
		e.fUniting = sums[sumUniting] / n
		if d := sums[sumVRDen]; d > 0 {
			e.fVanRad = sums[sumVRNum]/d - 1
		}
	} else {
		e.homExp = nan
	}
	return e
}

// SampleFlags are the warnings of one sample, the flags column of
// samples.tsv. Test them with Has; String gives the column's text.
type SampleFlags uint8

// The per-sample flags, in the order the column lists them.
const (
	// FlagNoCalls: the sample has no diploid call at any kept site.
	FlagNoCalls SampleFlags = 1 << iota
	// FlagLowCallRate: call_rate below Config.MinCallRate.
	FlagLowCallRate
	// FlagHetRateOutlier: het_rate outside the HetRateBand.
	FlagHetRateOutlier
	// FlagEstimatorsDisagree: f_hom > 0.1 while f_uniting_gametes < 0,
	// or the reverse.
	FlagEstimatorsDisagree
	// FlagSexMismatch: given and inferred sex both known and different.
	FlagSexMismatch
	// FlagSexNeither: the X (and Y) pattern fits neither sex.
	FlagSexNeither
	numFlags = iota
)

var flagNames = [numFlags]string{"no_calls", "low_call_rate", "het_rate_outlier", "estimators_disagree", "sex_mismatch", "sex_fits_neither"}

// Has reports whether every flag of g is set in f.
func (f SampleFlags) Has(g SampleFlags) bool { return f&g == g }

// String is the flags column: comma-separated names, "." when none.
func (f SampleFlags) String() string {
	if f == 0 {
		return "."
	}
	var names []string
	for i, n := range flagNames {
		if f&(1<<i) != 0 {
			names = append(names, n)
		}
	}
	return strings.Join(names, ",")
}

// HetRateOutlierSDs is the half-width of the het_rate_outlier band in
// cohort standard deviations.
const HetRateOutlierSDs = 3

// HetRateBand is the band of het_rate outside which a sample is flagged
// het_rate_outlier: the cohort mean plus or minus HetRateOutlierSDs sample
// standard deviations (n-1 denominator) over the samples with a het_rate.
// With fewer than three such samples there is no band (SD is NaN and no
// sample is flagged). It is published in run.json for the report.
type HetRateBand struct {
	High    numfmt.JSONFloat `json:"high"`
	Low     numfmt.JSONFloat `json:"low"`
	Mean    numfmt.JSONFloat `json:"mean"`
	Samples int              `json:"samples"` // samples with a het_rate
	SD      numfmt.JSONFloat `json:"sd"`
	SDs     float64          `json:"sds"` // HetRateOutlierSDs
}

// sampleView holds every sample's estimates, the het_rate band and the
// flags, computed once for the table, the flags and the summary.
type sampleView struct {
	est   []sampleEstimates
	band  HetRateBand
	flags []SampleFlags
	sex   *SexView // nil without non-PAR X or Y sites
}

func (t *Totals) view() *sampleView {
	v := &sampleView{est: make([]sampleEstimates, len(t.PerSample)), flags: make([]SampleFlags, len(t.PerSample))}
	if t.HasSexCheck() {
		v.sex = t.Sexes()
	}
	// Cohort mean and SD of het_rate for het_rate_outlier (fixed order).
	var sum, sum2, m float64
	for i := range t.PerSample {
		v.est[i] = t.estimates(i)
		if h := v.est[i].hetRate; !math.IsNaN(h) {
			sum += h
			m++
		}
	}
	mean := sum / m
	for i := range v.est {
		if h := v.est[i].hetRate; !math.IsNaN(h) {
			sum2 += (h - mean) * (h - mean)
		}
	}
	sd := nan
	if m >= 3 {
		sd = math.Sqrt(sum2 / (m - 1))
	}
	v.band = HetRateBand{Mean: numfmt.JSONFloat(mean), SD: numfmt.JSONFloat(sd), SDs: HetRateOutlierSDs, Samples: int(m),
		Low: numfmt.JSONFloat(mean - HetRateOutlierSDs*sd), High: numfmt.JSONFloat(mean + HetRateOutlierSDs*sd)}
	for i := range v.est {
		e := &v.est[i]
		var f SampleFlags
		if e.called == 0 {
			f |= FlagNoCalls
		} else if e.callRate < t.MinCallRate {
			f |= FlagLowCallRate
		}
		if sd > 0 && !math.IsNaN(e.hetRate) && math.Abs(e.hetRate-mean) > HetRateOutlierSDs*sd {
			f |= FlagHetRateOutlier
		}
		if (e.fHom > 0.1 && e.fUniting < 0) || (e.fUniting > 0.1 && e.fHom < 0) {
			f |= FlagEstimatorsDisagree
		}
		if v.sex != nil {
			f |= t.sexFlags(v.sex, i)
		}
		v.flags[i] = f
	}
	return v
}

// SampleFlags returns each selected sample's flags, in sample order.
func (t *Totals) SampleFlags() []SampleFlags { return t.view().flags }

// HetRateBand returns the het_rate_outlier band of the cohort.
func (t *Totals) HetRateBand() HetRateBand { return t.view().band }

// CallRate returns sample i's call_rate (NaN without kept sites).
func (t *Totals) CallRate(i int) float64 { return t.estimates(i).callRate }

// SampleTable returns the samples.tsv columns produced by this package and
// one row per selected sample, in order. The population column is present
// only with populations ("NA" for unlisted samples).
func (t *Totals) SampleTable() (header []string, rows [][]string) {
	header, part := t.SampleRows()
	return header, part(0, len(t.PerSample))
}

// SampleRows is SampleTable in parts: rows(lo, hi) formats the rows of
// samples lo to hi-1, so that a writer holds one part of a large cohort's
// table at a time.
func (t *Totals) SampleRows() (header []string, rows func(lo, hi int) [][]string) {
	h, v := t.sampleTableHeader()
	return h, t.sampleRows(v)
}

// sampleTableHeader is SampleTable's header (and the estimates it needs).
func (t *Totals) sampleTableHeader() ([]string, *sampleView) {
	var skip []string
	if t.PopOf == nil {
		skip = append(skip, "population")
	}
	v := t.view()
	switch {
	case v.sex == nil:
		skip = append(skip, sexColumnNames...)
	case t.Sex.Given == nil:
		skip = append(skip, "sex_given")
	}
	return strings.Split(headerLine(FileSamples, skip...), "\t"), v
}

func (t *Totals) sampleRows(v *sampleView) func(lo, hi int) [][]string {
	return func(lo, hi int) [][]string {
		rows := make([][]string, 0, hi-lo)
		for i := lo; i < hi; i++ {
			rows = append(rows, t.sampleRow(v, i))
		}
		return rows
	}
}

// sampleRow formats sample i's samples.tsv row.
func (t *Totals) sampleRow(v *sampleView, i int) []string {
	a := &t.PerSample[i]
	e := &v.est[i]
	row := []string{t.Samples[i]}
	if t.PopOf != nil {
		pop := numfmt.NA
		if p := t.PopOf[i]; p >= 0 {
			pop = t.PopNames[p]
		}
		row = append(row, pop)
	}
	row = append(row, itoa(e.called), itoa(a.Counts[0]), itoa(a.Counts[1]), itoa(a.Counts[2]),
		itoa(a.Counts[3]), itoa(a.Counts[4]+a.Counts[5]),
		ftoa(e.callRate), ftoa(e.hetRate),
		ftoa(e.fHom), ftoa(e.fGRM), ftoa(e.fExcess), ftoa(e.fUniting), ftoa(e.fVanRad),
		itoa(e.informative), ftoa(e.homShare), ftoa(e.homShareHWE))
	row = t.appendLikColumns(row, i)
	if v.sex != nil {
		row = append(row, t.sexColumns(v.sex, i)...)
	}
	row = append(row, v.flags[i].String())
	return row
}

// freqGroups returns each sample's frequency group and the empty group
// bases: one group (cohort or external frequencies), or with population
// frequencies one per population plus the cohort group of unassigned
// samples (last).
func freqGroups(cfg *Config) ([]int32, []GroupBase) {
	of := make([]int32, len(cfg.Samples))
	if cfg.Freqs != FreqPopulation || cfg.PopOf == nil {
		return of, make([]GroupBase, 1)
	}
	np := len(cfg.PopNames)
	for s := range of {
		if p := cfg.PopOf[s]; p >= 0 {
			of[s] = int32(p)
		} else {
			of[s] = int32(np)
		}
	}
	return of, make([]GroupBase, np+1)
}

// appendLikColumns appends sample i's f_lik, f_lik_se, depth_mean and
// depth_source (NA without likelihoods or depth).
func (t *Totals) appendLikColumns(row []string, i int) []string {
	f := FLik{F: nan, SE: nan}
	depth, src := nan, DepthNone
	if t.Lik != nil {
		f = t.Lik.FLik[i].Estimate()
		depth, src = t.Lik.Depth[i].Mean()
	}
	srcText := numfmt.NA
	if src != DepthNone {
		srcText = src.String()
	}
	return append(row, ftoa(f.F), ftoa(f.SE), ftoa(depth), srcText)
}

// FLik returns sample i's f_lik (F NaN without likelihoods).
func (t *Totals) FLik(i int) FLik {
	if t.Lik == nil {
		return FLik{F: nan, SE: nan}
	}
	return t.Lik.FLik[i].Estimate()
}

// CohortDepth returns the cohort's mean depth per call, pooled over
// samples: from FORMAT DP when any call carried it, else implied by the
// likelihoods (DepthAcc.Mean); NaN and DepthNone without either.
func (t *Totals) CohortDepth() (float64, DepthSource) {
	var all DepthAcc
	if t.Lik != nil {
		for i := range t.Lik.Depth {
			all.Merge(&t.Lik.Depth[i])
		}
	}
	return all.Mean()
}
