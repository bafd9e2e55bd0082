package htmlreport

import (
	"fgauge/roh"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode"
)

// estimatorCols lists the per-sample F columns the report knows, in the
// order they are shown. Columns absent from samples.tsv are skipped.
var estimatorCols = []string{"f_roh", "f_hom", "f_grm", "f_excess_hom", "f_uniting_gametes", "f_vanraden", "f_pedigree"}

// estimatorLabel is the short human name of each estimator column.
func estimatorLabel(col string) string {
	switch col {
	case "f_roh":
		return "F_ROH (share of genome in runs)"
	case "f_hom":
		return "F_hom (method-of-moments excess homozygosity: observed against expected homozygous sites)"
	case "f_grm":
		return "F_GRM (Yang et al. 2011 F-hat-I: genomic relationship diagonal minus 1)"
	case "f_excess_hom":
		return "F_excess_hom (Yang et al. 2011 F-hat-II: excess homozygosity)"
	case "f_uniting_gametes":
		return "F_uniting_gametes (Yang et al. 2011 F-hat-III: correlation of uniting gametes)"
	case "f_vanraden":
		return "F_VanRaden (VanRaden 2008 method 1: relationship diagonal minus 1)"
	case "f_pedigree":
		return "F_pedigree (from the pedigree, not the genotypes)"
	}
	if mb, ok := roh.ColumnClass(col); ok {
		return "F_ROH from runs of at least " + fmtMb(mb)
	}
	return col
}

// flagText explains each flag word in plain language.
var flagText = map[string]string{
	"low_call_rate":       "Fewer of this sample's genotypes were called than the scan's threshold (--min-call-rate); every estimate rests on fewer sites and is less certain.",
	"het_rate_outlier":    "The share of heterozygous calls is more than 3 standard deviations from the cohort mean. Very high can mean a contaminated or mixed-up sample; very low can mean real inbreeding or a sample from another population.",
	"estimators_disagree": "The genomic F estimators point in opposite directions (one clearly above zero, another below). Check the allele-frequency reference and the data quality for this sample before reading either.",
	"no_calls":            "No diploid genotype of this sample was called at any kept site; nothing can be estimated.",
}

// rohClass is one --roh-classes column: runs of at least MinMb.
type rohClass struct {
	Col   string
	MinMb float64
}

// parseClasses returns the length classes run.json lists (roh.classes_mb,
// published by the detector) whose column is in samples.tsv, shortest
// first.
func parseClasses(header []string, info *runInfo) []rohClass {
	have := map[string]bool{}
	for _, h := range header {
		have[h] = true
	}
	var out []rohClass
	for i, col := range info.ROH.ClassColumns() {
		if have[col] {
			out = append(out, rohClass{Col: col, MinMb: info.ROH.ClassesMB[i]})
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].MinMb < out[j].MinMb })
	return out
}

// bandLabels names the disjoint length bands built from the classes:
// below the first threshold, between thresholds, above the last.
func bandLabels(cl []rohClass) []string {
	if len(cl) == 0 {
		return []string{"all runs"}
	}
	out := []string{"< " + fmtMb(cl[0].MinMb)}
	for i := 0; i+1 < len(cl); i++ {
		out = append(out, fmtMb(cl[i].MinMb)+"–"+fmtMb(cl[i+1].MinMb))
	}
	return append(out, "> "+fmtMb(cl[len(cl)-1].MinMb))
}

func fmtMb(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) + " Mb" }

// bands splits a sample's F_ROH into disjoint length bands (the class
// columns are cumulative: f_roh_gt_2mb is inside f_roh_gt_1mb).
// Negative differences from rounding are clamped to 0.
func bands(total float64, cum []float64) []float64 {
	if len(cum) == 0 {
		return []float64{nz(total)}
	}
	out := make([]float64, len(cum)+1)
	out[0] = math.Max(0, nz(total)-nz(cum[0]))
	for i := 0; i+1 < len(cum); i++ {
		out[i+1] = math.Max(0, nz(cum[i])-nz(cum[i+1]))
	}
	out[len(cum)] = math.Max(0, nz(cum[len(cum)-1]))
	return out
}

func nz(x float64) float64 {
	if math.IsNaN(x) {
		return 0
	}
	return x
}

// headline holds the numbers at the top of the report.
type headline struct {
	Samples       int
	SitesKept     int64
	SitesRead     int64
	RunsPresent   bool
	FROHN         int     // samples with a defined f_roh
	MedianFROH    float64 // NaN when none
	ShareAbove1   float64 // share of samples with f_roh > 0.0625
	ShareAbove2   float64 // share with f_roh > 0.125
	HWETested     int64
	HWEFail1e6    int64
	Lambda        float64
	FlaggedCount  int
	HasSitesBlock bool
}

// thresholds for the headline shares: the expected F of offspring of
// first cousins (1/16) and of half-sibs (1/8), common practice.
const (
	fCousins  = 0.0625
	fHalfSibs = 0.125
)

// computeHeadline recomputes the headline numbers from the tables.
func computeHeadline(d *data) headline {
	h := headline{Samples: len(d.samples.rows), MedianFROH: math.NaN(), ShareAbove1: math.NaN(), ShareAbove2: math.NaN(), Lambda: math.NaN()}
	h.SitesKept, h.SitesRead = d.info.Records.Kept, d.info.Records.Read
	h.HasSitesBlock = d.info.sitesPresent
	h.HWETested, h.HWEFail1e6 = d.info.Sites.Tested, d.info.Sites.Below1e6
	if d.info.sitesPresent {
		h.Lambda = float64(d.info.Sites.Lambda)
	}
	var f []float64
	if d.samples.has("f_roh") {
		h.RunsPresent = true
		for r := range d.samples.rows {
			if v := d.samples.num(r, "f_roh"); !math.IsNaN(v) {
				f = append(f, v)
			}
		}
	}
	h.FROHN = len(f)
	if len(f) > 0 {
		h.MedianFROH = median(f)
		a1, a2 := 0, 0
		for _, v := range f {
			if v > fCousins {
				a1++
			}
			if v > fHalfSibs {
				a2++
			}
		}
		h.ShareAbove1 = float64(a1) / float64(len(f))
		h.ShareAbove2 = float64(a2) / float64(len(f))
	}
	for r := range d.samples.rows {
		if fl := d.samples.str(r, "flags"); fl != "" && fl != "." {
			h.FlaggedCount++
		}
	}
	return h
}

// median of xs (copied and sorted); NaN for none.
func median(xs []float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// ranker gives percentile ranks of values within a reference set.
type ranker struct{ sorted []float64 }

func newRanker(xs []float64) ranker {
	var s []float64
	for _, x := range xs {
		if !math.IsNaN(x) {
			s = append(s, x)
		}
	}
	sort.Float64s(s)
	return ranker{s}
}

// percentile is the mid-rank percentile of x: 100·(below + equal/2)/n.
// NaN when x is NaN or the set is empty.
func (r ranker) percentile(x float64) float64 {
	if math.IsNaN(x) || len(r.sorted) == 0 {
		return math.NaN()
	}
	lo := sort.SearchFloat64s(r.sorted, x)
	hi := sort.Search(len(r.sorted), func(i int) bool { return r.sorted[i] > x })
	return 100 * (float64(lo) + float64(hi-lo)/2) / float64(len(r.sorted))
}

// splitFlags turns the flags cell into words; "." and "" give none.
func splitFlags(s string) []string {
	if s == "" || s == "." || s == "NA" {
		return nil
	}
	var out []string
	for _, w := range strings.Split(s, ",") {
		if w = strings.TrimSpace(w); w != "" {
			out = append(out, visible(w))
		}
	}
	return out
}

// fmtG formats a number for display: whole numbers in full, others with
// 4 significant digits (one decimal from 1000 up); NA for NaN.
func fmtG(x float64) string {
	switch {
	case math.IsNaN(x):
		return "NA"
	case math.IsInf(x, 0):
		return strconv.FormatFloat(x, 'g', -1, 64)
	case x == math.Trunc(x) && math.Abs(x) < 1e15:
		return strconv.FormatFloat(x, 'f', 0, 64)
	case math.Abs(x) >= 1000:
		return strconv.FormatFloat(x, 'f', 1, 64)
	}
	return strconv.FormatFloat(x, 'g', 4, 64)
}

// fmtExact formats a number so it round-trips (whole numbers without an
// exponent); NA for NaN.
func fmtExact(x float64) string {
	switch {
	case math.IsNaN(x):
		return "NA"
	case x == math.Trunc(x) && math.Abs(x) < 1e15:
		return strconv.FormatFloat(x, 'f', 0, 64)
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// visible replaces control and invisible format characters (such as
// bidirectional overrides) in a name with a visible escape (\x01,
// \u202e), so what the page shows can be told apart and copied.
func visible(s string) string {
	if strings.IndexFunc(s, hidden) < 0 {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		if hidden(r) {
			q := strconv.QuoteRuneToASCII(r)
			b.WriteString(q[1 : len(q)-1])
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

func hidden(r rune) bool { return unicode.IsControl(r) || unicode.Is(unicode.Cf, r) }

// fmtPct formats a share in [0,1] as a percentage with 1 decimal.
func fmtPct(x float64) string {
	if math.IsNaN(x) {
		return "NA"
	}
	return strconv.FormatFloat(100*x, 'f', 1, 64) + " %"
}

// fmtInt formats a count with thin-space thousands separators.
func fmtInt(n int64) string {
	s := strconv.FormatInt(n, 10)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteString("\u2009")
		}
		b.WriteRune(c)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}
