package stats

import (
	"bytes"
	"fmt"
	"math"
	"slices"
	"strconv"

	"fgauge/internal/numfmt"
	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

// SexConfig says how a Worker treats the sex chromosomes and the
// mitochondrion. The zero value treats no contig as sex-linked.
//
// Non-PAR X sites: every call adds to the samples' sex-check evidence
// (sexcheck.Acc); their sites.tsv row is the X row (AppendXRow), tested
// with the given sexes when every sample has one, otherwise deferred
// (DeferX): the worker writes no row and records the site in
// Worker.Deferred, for the caller to write once the sexes are inferred.
// Non-PAR Y and MT sites get a haploid row (AppendHaploidRow) and no HWE
// test; Y calls add to the evidence. These sites stay out of every
// per-sample autosomal sum, the HWE summary and the population
// statistics. PAR sites are autosomal.
type SexConfig struct {
	// Kind classifies a contig by name (nil: nothing is sex-linked).
	Kind func(name string) sexcheck.Kind
	// PAR holds the pseudo-autosomal regions (nil: none).
	PAR *sexcheck.PAR
	// PARReason and PARRegions describe PAR for run.json.
	PARReason  string
	PARRegions []string
	// Given is the given sex of each selected sample (nil: none given);
	// GivenSource names where it came from ("--sex FILE", "pedigree FILE").
	Given       []sexcheck.Sex
	GivenSource string
	Thresholds  sexcheck.Thresholds
	// XColumns adds the male-count columns to every sites.tsv row.
	XColumns bool
}

// DeferX reports whether X rows wait for inferred sexes (some sample has
// no given sex).
func (c *SexConfig) DeferX() bool {
	if c.Given == nil {
		return true
	}
	for _, s := range c.Given {
		if !s.Known() {
			return true
		}
	}
	return false
}

// contig returns the treatment of a contig.
func (c *SexConfig) contig(name string) sexcheck.Contig {
	if c.Kind == nil {
		return sexcheck.Contig{}
	}
	return c.PAR.Contig(name, c.Kind(name))
}

// SexTotals is the mergeable sex-chromosome part of Totals.
type SexTotals struct {
	Acc         []sexcheck.Acc // per sample
	Sites       sexcheck.Sites // non-PAR X (and informative) and Y sites
	MTSites     int64
	Given       []sexcheck.Sex
	GivenSource string
	Thresholds  sexcheck.Thresholds
	PARReason   string
	PARRegions  []string
	XColumns    bool
}

// other is the number of sites kept out of the per-sample autosomal
// statistics.
func (s *SexTotals) other() int64 { return s.Sites.X + s.Sites.Y + s.MTSites }

func (s *SexTotals) merge(o *SexTotals) error {
	if len(s.Acc) != len(o.Acc) || !slices.Equal(s.Given, o.Given) || s.Thresholds != o.Thresholds ||
		s.PARReason != o.PARReason || !slices.Equal(s.PARRegions, o.PARRegions) || s.XColumns != o.XColumns {
		return fmt.Errorf("stats: merge: sex settings differ (given sexes, thresholds or PARs): %w", ErrIncompatible)
	}
	for i := range s.Acc {
		s.Acc[i].Merge(&o.Acc[i])
	}
	s.Sites.Merge(&o.Sites)
	s.MTSites += o.MTSites
	return nil
}

func newSexTotals(cfg *Config) SexTotals {
	th := cfg.Sex.Thresholds
	if th == (sexcheck.Thresholds{}) {
		th = sexcheck.DefaultThresholds()
	}
	return SexTotals{Acc: make([]sexcheck.Acc, len(cfg.Samples)), Given: cfg.Sex.Given, GivenSource: cfg.Sex.GivenSource,
		Thresholds: th, PARReason: cfg.Sex.PARReason, PARRegions: cfg.Sex.PARRegions, XColumns: cfg.Sex.XColumns}
}

// Deferred is a non-PAR X record whose row a Worker did not write
// (SexConfig.DeferX): its index in the batch and the length of the
// batch's site rows written before it.
type Deferred struct {
	Record int
	Offset int
}

// Deferred returns the X records of the last ProcessBatch whose rows
// wait for the sexes, in order (valid until the next ProcessBatch).
func (w *Worker) Deferred() []Deferred { return w.deferred }

// sexRecord handles a record on a sex-linked contig or the mitochondrion
// (kind from SexConfig); it returns the frequency handed to the ROH
// collector (NaN: the collector skips these contigs anyway).
func (w *Worker) sexRecord(kind sexcheck.Kind, recIdx int, rec *vcfscan.Record, calls []vcfscan.Geno, sites *bytes.Buffer) float64 {
	st := &w.t.Sex
	cnt := countCalls(calls)
	switch kind {
	case sexcheck.ChromX:
		st.Sites.X++
		xs := sexcheck.NewXSite(&cnt, st.Thresholds.MinMAF)
		if xs.Informative {
			st.Sites.XInformative++
		}
		for s, g := range calls {
			st.Acc[s].AddX(&xs, g)
		}
		if sites == nil {
			return nan
		}
		if w.deferX {
			w.deferred = append(w.deferred, Deferred{Record: recIdx, Offset: sites.Len()})
			return nan
		}
		if w.xcache == nil {
			w.xcache = NewXHWECache(0)
		}
		w.scratch = AppendXRow(w.scratch[:0], w.chromBytes, rec, calls, st.Given, w.xcache, st.XColumns)
		sites.Write(w.scratch)
	case sexcheck.ChromY:
		st.Sites.Y++
		for s, g := range calls {
			st.Acc[s].AddY(g)
		}
		fallthrough
	default:
		if kind == sexcheck.ChromMT {
			st.MTSites++
		}
		if sites != nil {
			w.scratch = appendHaploidRow(w.scratch[:0], w.chromBytes, rec, &cnt, len(calls), st.XColumns)
			sites.Write(w.scratch)
		}
	}
	return nan
}

func appendRowStart(b, chrom []byte, rec *vcfscan.Record) []byte {
	b = append(b, chrom...)
	b = append(b, '\t')
	b = strconv.AppendInt(b, rec.Pos, 10)
	b = append(b, '\t')
	b = append(b, rec.Ref...)
	b = append(b, '\t')
	return append(b, rec.Alt...)
}

func appendInts(b []byte, v ...int64) []byte {
	for _, x := range v {
		b = append(b, '\t')
		b = strconv.AppendInt(b, x, 10)
	}
	return b
}

// xNA is the male-count columns of a row that is not a non-PAR X row.
const xNA = "\tNA\tNA\tNA\tNA"

// appendHaploidRow appends the sites.tsv row of a non-PAR Y or MT site:
// counts as coded; alt_freq, maf and call_rate count every homozygous or
// haploid call as one allele (heterozygous calls are not counted); no
// heterozygosity and no HWE test (NA).
func appendHaploidRow(b, chrom []byte, rec *vcfscan.Record, cnt *[6]int64, nSel int, xcols bool) []byte {
	b = appendRowStart(b, chrom, rec)
	b = appendInts(b, cnt[vcfscan.HomRef], cnt[vcfscan.Heterozygous], cnt[vcfscan.HomAlt], cnt[vcfscan.Missing],
		cnt[vcfscan.HaploidRef]+cnt[vcfscan.HaploidAlt])
	ref := cnt[vcfscan.HomRef] + cnt[vcfscan.HaploidRef]
	alt := cnt[vcfscan.HomAlt] + cnt[vcfscan.HaploidAlt]
	p, maf, cr := nan, nan, nan
	if ref+alt > 0 {
		p = float64(alt) / float64(ref+alt)
		maf = math.Min(p, 1-p)
	}
	if nSel > 0 {
		cr = float64(ref+alt) / float64(nSel)
	}
	b = appendFloat(b, p)
	b = appendFloat(b, maf)
	b = appendFloat(b, cr)
	for range 8 { // het_observed .. hwe_p_more_het, and alt_freq_lik
		b = append(b, '\t')
		b = append(b, numfmt.NA...)
	}
	if xcols {
		b = append(b, xNA...)
	}
	return append(b, '\n')
}

// AppendXRow appends the sites.tsv row of a non-PAR X site, with
// sexes[i] the sex of sample i used for the test (given, else inferred):
// n_hom_ref, n_het, n_hom_alt are the females' diploid calls; a male's
// heterozygous call is a genotyping error, counted in n_missing and in
// n_male_het_error; alt_freq is over the tested X chromosomes (2 per
// female call, 1 per male call); call_rate counts the tested calls;
// het_observed, het_expected and f_site are the females'; hwe_p,
// hwe_midp and the one-sided tails are the exact X-chromosomal test
// (HWEExactX). With xcols the row ends with the male allele counts, the
// male heterozygous calls and the calls of samples of unknown sex.
func AppendXRow(b, chrom []byte, rec *vcfscan.Record, calls []vcfscan.Geno, sexes []sexcheck.Sex, cache *XHWECache, xcols bool) []byte {
	var t XTally
	t.AddCalls(sexes, calls, nil)
	missing := t.MaleHet
	for _, g := range calls {
		if g == vcfscan.Missing {
			missing++
		}
	}
	haploid := int64(0)
	for _, g := range calls {
		if g >= vcfscan.HaploidRef {
			haploid++
		}
	}
	row := t.Row(cache)
	b = appendRowStart(b, chrom, rec)
	b = appendInts(b, t.Female[0], t.Female[1], t.Female[2], missing, haploid)
	maf := nan
	if !math.IsNaN(row.AltFreq) {
		maf = math.Min(row.AltFreq, 1-row.AltFreq)
	}
	cr := nan
	if len(calls) > 0 {
		cr = float64(t.Female[0]+t.Female[1]+t.Female[2]+t.MaleRef+t.MaleAlt) / float64(len(calls))
	}
	ho, he, fsite := femaleHet(t.Female)
	b = appendFloat(b, row.AltFreq)
	b = appendFloat(b, maf)
	b = appendFloat(b, cr)
	b = appendFloat(b, ho)
	b = appendFloat(b, he)
	b = appendFloat(b, fsite)
	b = appendFloat(b, row.Equilibrium.P)
	b = appendFloat(b, row.Equilibrium.MidP)
	b = appendFloat(b, row.Equilibrium.Deficit)
	b = appendFloat(b, row.Equilibrium.Excess)
	b = appendFloat(b, nan) // alt_freq_lik: sex-chromosome rows stay out of the likelihood statistics
	if xcols {
		b = appendInts(b, t.MaleRef, t.MaleAlt, t.MaleHet, t.UnknownSex)
	}
	return append(b, '\n')
}

// femaleHet returns Ho, He (Nei-corrected, females' frequency) and
// 1 - Ho/He of female diploid counts.
func femaleHet(f [3]int64) (ho, he, fsite float64) {
	n := f[0] + f[1] + f[2]
	if n == 0 {
		return nan, nan, nan
	}
	p := float64(f[1]+2*f[2]) / float64(2*n)
	ho = float64(f[1]) / float64(n)
	he = nCorr(n) * 2 * p * (1 - p)
	fsite = nan
	if he > 0 {
		fsite = 1 - ho/he
	}
	return
}
