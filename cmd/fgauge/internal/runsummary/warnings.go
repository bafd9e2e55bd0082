package runsummary

import (
	"fmt"

	"fgauge/internal/numfmt"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

// Warnings returns the legal-but-suspicious conditions found after
// reading, in the same form as the reader's warnings, so that run.json
// counts them and stderr prints each once: no site kept, samples without
// any diploid call, samples below --min-call-rate, and an F_ROH
// denominator taken from the span of the sites (an autosome without a
// header length, or no autosome at all).
func Warnings(totals *stats.Totals, kept int64, rres *roh.Result) []vcfscan.Warning {
	var ws []vcfscan.Warning
	if kept == 0 {
		return append(ws, vcfscan.Warning{Kind: "no_sites_kept", Count: 1,
			Example: "no record passed the site policy (biallelic SNPs, FILTER PASS or '.'); run.json records.skipped says why"})
	}
	var none, low vcfscan.Warning
	for i, f := range totals.SampleFlags() {
		switch {
		case f.Has(stats.FlagNoCalls):
			if none.Count == 0 {
				none.Example = totals.Samples[i] + ": no diploid call at any kept site"
			}
			none.Count++
		case f.Has(stats.FlagLowCallRate):
			if low.Count == 0 {
				low.Example = fmt.Sprintf("%s: call_rate %s, below --min-call-rate %g", totals.Samples[i], numfmt.Float(totals.CallRate(i)), totals.MinCallRate)
			}
			low.Count++
		}
	}
	if none.Count > 0 {
		none.Kind = "samples_without_calls"
		ws = append(ws, none)
	}
	if low.Count > 0 {
		low.Kind = "samples_low_call_rate"
		ws = append(ws, low)
	}
	if d := depthSummary(totals); d != nil && d.Low {
		ws = append(ws, lowDepthWarning(d))
	}
	if rres != nil {
		if _, src := rres.Covered(); src == "site_span" {
			ws = append(ws, vcfscan.Warning{Kind: "f_roh_denominator_from_site_span", Count: 1,
				Example: "F_ROH divides by the span from first to last site, because an autosome with sites has no length in the header or no contig counts as an autosome; add ##contig lines with length=, and name the autosomes with --autosomes or --species when they are not numbered"})
		}
	}
	return ws
}

// lowDepthWarning explains a low cohort depth and points to the
// estimators that hold up.
func lowDepthWarning(d *Depth) vcfscan.Warning {
	what := "read f_lik (from the genotype likelihoods) and f_roh instead"
	if d.RecordsWithLikelihoods == 0 {
		what = "the input has no PL/GL, so f_lik is NA: call genotype likelihoods (PL) and read f_lik and f_roh"
	}
	return vcfscan.Warning{Kind: "low_depth", Count: 1,
		Example: fmt.Sprintf("cohort mean depth %s (from %s) is below %g: about %s of heterozygotes show one allele only and are called homozygous, so f_hom and the other hard-call estimators, het_observed, f_site and the HWE tests overstate homozygosity; %s",
			numfmt.Float(float64(d.Mean)), d.Source, d.LowThreshold, pct(float64(d.HetOneAlleleRate)), what)}
}

func pct(x float64) string {
	if x != x {
		return "an unknown share"
	}
	return fmt.Sprintf("%.0f%%", 100*x)
}
