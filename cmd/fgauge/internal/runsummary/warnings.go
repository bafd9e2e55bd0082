package runsummary

import (
	"fmt"
	"strings"

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
	header, rows := totals.SampleTable()
	col := func(name string) int {
		for i, h := range header {
			if h == name {
				return i
			}
		}
		return -1
	}
	fl, cr := col("flags"), col("call_rate")
	if fl >= 0 && cr >= 0 {
		var none, low vcfscan.Warning
		for _, r := range rows {
			flags := "," + r[fl] + ","
			switch {
			case strings.Contains(flags, ",no_calls,"):
				if none.Count == 0 {
					none.Example = r[0] + ": no diploid call at any kept site"
				}
				none.Count++
			case strings.Contains(flags, ",low_call_rate,"):
				if low.Count == 0 {
					low.Example = fmt.Sprintf("%s: call_rate %s, below --min-call-rate %g", r[0], r[cr], totals.MinCallRate)
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
	}
	if rres != nil {
		if s := rres.Summary(); s["covered_source"] == "site_span" {
			ws = append(ws, vcfscan.Warning{Kind: "f_roh_denominator_from_site_span", Count: 1,
				Example: "F_ROH divides by the span from first to last site, because an autosome with sites has no length in the header or no contig counts as an autosome; add ##contig lines with length=, and name the autosomes with --autosomes or --species when they are not numbered"})
		}
	}
	return ws
}
