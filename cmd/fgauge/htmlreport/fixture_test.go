package htmlreport

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// fixtureOpts shapes an invented output folder that follows the scan's
// schema. All data here is simulated (invented farms and animals); the
// numbers only need to be internally consistent for the report's checks.
type fixtureOpts struct {
	n           int
	populations bool
	pedigree    bool
	runs        bool
	extraNames  []string // prepended sample names (for escaping tests)
	sitesPerChr int
}

var fixtureSampleHeader = []string{"sample", "population", "sites_called", "n_hom_ref", "n_het", "n_hom_alt", "n_missing", "n_haploid",
	"call_rate", "het_rate", "f_hom", "f_grm", "f_excess_hom", "f_uniting_gametes", "f_vanraden",
	"polymorphic_sites_called", "homozygous_share", "homozygous_share_under_hwe", "flags", "n_runs", "roh_total_bp", "f_roh", "f_roh_gt_1mb", "f_roh_gt_2mb",
	"f_roh_gt_4mb", "f_roh_gt_8mb", "f_roh_gt_16mb", "f_within_2g", "f_within_4g", "f_within_8g", "f_within_16g",
	"f_within_32g", "f_within_64g", "f_within_128g", "f_within_256g", "f_pedigree"}

var fixtureChroms = []struct {
	name string
	len  int64
}{{"1", 158_000_000}, {"2", 137_000_000}, {"3", 121_000_000}, {"X", 139_000_000}}

// writeFixture writes an output folder into dir and returns the sample
// names in order.
func writeFixture(t testing.TB, dir string, o fixtureOpts) []string {
	t.Helper()
	rng := rand.New(rand.NewPCG(7, uint64(o.n)))
	farms := []string{"HILL", "MOOR", "VALE", "FENN"}
	names := append([]string(nil), o.extraNames...)
	for i := 0; len(names) < o.n; i++ {
		names = append(names, fmt.Sprintf("%s-%03d", farms[i%len(farms)], i/len(farms)+1))
	}
	header := []string{}
	for _, h := range fixtureSampleHeader {
		if (h == "population" && !o.populations) || (h == "f_pedigree" && !o.pedigree) {
			continue
		}
		if !o.runs && (h == "n_runs" || h == "roh_total_bp" || strings.HasPrefix(h, "f_roh")) {
			continue
		}
		header = append(header, h)
	}
	header = append(header, "unknown_extra_column")
	var sb, rb bytes.Buffer
	sb.WriteString(strings.Join(header, "\t") + "\n")
	rb.WriteString("sample\tchrom\tstart\tend\tlength_bp\tlength_cm\tn_sites\tn_het\tn_missing\tmean_posterior_autozygous\tgenerations_back\n")
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	covered := float64(fixtureChroms[0].len + fixtureChroms[1].len + fixtureChroms[2].len)
	for i, nm := range names {
		pop := farms[i%len(farms)]
		base := 0.02 + 0.03*float64(i%len(farms))
		if i%17 == 3 {
			base += 0.15 // a few offspring of close relatives
		}
		// runs
		var lens []float64
		total := 0.0
		nRuns := 0
		if o.runs {
			nRuns = 3 + rng.IntN(12)
			if i == 0 {
				nRuns = 0 // one sample without runs
			}
			for k := 0; k < nRuns; k++ {
				c := fixtureChroms[rng.IntN(3)]
				l := math.Round(500_000 + rng.ExpFloat64()*base*40_000_000)
				start := 1 + rng.Int64N(c.len-int64(l)-1)
				end := start + int64(l) - 1
				cm := l / 1e6
				fmt.Fprintf(&rb, "%s\t%s\t%d\t%d\t%s\t%s\t%d\t%d\t%d\t%s\t%s\n", nm, c.name, start, end, g(l), g(cm),
					int(l/20000), rng.IntN(2), rng.IntN(3), g(math.Round(rng.Float64()*1000)/10), g(math.Round(50/cm*10)/10))
				lens = append(lens, l)
				total += l
			}
		}
		froh := total / covered
		cls := func(mb float64) float64 {
			s := 0.0
			for _, l := range lens {
				if l > mb*1e6 {
					s += l
				}
			}
			return s / covered
		}
		callRate := 0.985 + 0.015*rng.Float64()
		flags := "."
		if i%23 == 5 {
			callRate = 0.82
			flags = "low_call_rate"
		}
		if i%31 == 7 {
			flags = "het_rate_outlier,estimators_disagree"
		}
		called := int(50000 * callRate)
		het := 0.3*(1-froh) + 0.01*rng.NormFloat64()
		nHet := int(het * float64(called))
		nAlt := (called - nHet) / 3
		nRef := called - nHet - nAlt
		fhom := froh + 0.02*rng.NormFloat64()
		vals := map[string]string{
			"sample": nm, "population": pop, "sites_called": strconv.Itoa(called), "n_hom_ref": strconv.Itoa(nRef),
			"n_het": strconv.Itoa(nHet), "n_hom_alt": strconv.Itoa(nAlt), "n_missing": strconv.Itoa(50000 - called),
			"n_haploid": "0", "call_rate": g(float64(called) / 50000), "het_rate": g(float64(nHet) / float64(called)),
			"polymorphic_sites_called": strconv.Itoa(called), "homozygous_share": g(float64(called-nHet) / float64(called)), "homozygous_share_under_hwe": "0.7",
			"f_hom": g(fhom), "f_grm": g(fhom + 0.03*rng.NormFloat64()), "f_excess_hom": g(fhom + 0.01*rng.NormFloat64()),
			"f_uniting_gametes": g(fhom + 0.015*rng.NormFloat64()), "f_vanraden": g(fhom - 0.02 + 0.03*rng.NormFloat64()),
			"flags": flags, "n_runs": strconv.Itoa(nRuns), "roh_total_bp": g(total), "f_roh": g(froh),
			"f_roh_gt_1mb": g(cls(1)), "f_roh_gt_2mb": g(cls(2)), "f_roh_gt_4mb": g(cls(4)), "f_roh_gt_8mb": g(cls(8)),
			"f_roh_gt_16mb": g(cls(16)), "f_pedigree": g(math.Max(0, froh-0.01+0.02*rng.NormFloat64())), "unknown_extra_column": "zzz",
		}
		// age classes: cumulative shares growing with G to a bit above
		// F_ROH (no random draws, so the other columns keep their values)
		for _, gen := range []int{2, 4, 8, 16, 32, 64, 128, 256} {
			vals["f_within_"+strconv.Itoa(gen)+"g"] = g(1.1 * froh * (1 - math.Pow(0.5, float64(gen)/8)))
		}
		if i == 1 {
			vals["f_hom"] = "NA"
		}
		if i == 2 && o.pedigree {
			vals["f_pedigree"] = "NA"
		}
		row := make([]string, len(header))
		for k, h := range header {
			row[k] = vals[h]
		}
		sb.WriteString(strings.Join(row, "\t") + "\n")
	}
	must(t, os.WriteFile(filepath.Join(dir, "samples.tsv"), sb.Bytes(), 0o644))
	if o.runs {
		must(t, os.WriteFile(filepath.Join(dir, "runs.tsv"), rb.Bytes(), 0o644))
	}
	// sites.tsv.gz as several gzip members, like BGZF
	var zb bytes.Buffer
	siteHeader := "chrom\tpos\tref\talt\tn_hom_ref\tn_het\tn_hom_alt\tn_missing\tn_haploid\talt_freq\tmaf\tcall_rate\thet_observed\thet_expected\tf_site\thwe_p\thwe_midp\thwe_p_fewer_het\thwe_p_more_het\n"
	member := &bytes.Buffer{}
	member.WriteString(siteHeader)
	flush := func() {
		zw := gzip.NewWriter(&zb)
		zw.Write(member.Bytes())
		zw.Close()
		member.Reset()
	}
	nSites := 0
	for _, c := range fixtureChroms {
		for k := 0; k < o.sitesPerChr; k++ {
			pos := 1 + int64(k)*(c.len/int64(o.sitesPerChr))
			f := "NA"
			if k%11 != 0 {
				f = g(math.Round((0.02+0.08*rng.NormFloat64())*1e4) / 1e4)
			}
			fmt.Fprintf(member, "%s\t%d\tA\tG\t10\t5\t3\t0\t0\t0.3\t0.3\t1\t0.27\t0.42\t%s\t0.5\t0.4\t0.3\t0.8\n", c.name, pos, f)
			nSites++
			if member.Len() > 60000 {
				flush()
			}
		}
	}
	flush()
	must(t, os.WriteFile(filepath.Join(dir, "sites.tsv.gz"), zb.Bytes(), 0o644))
	if o.populations {
		var pb bytes.Buffer
		pb.WriteString("population\tn_samples\tmean_het_observed\tmean_het_expected\tf_is\tshare_hwe_p_below_1e6\tf_st\tf_st_se\tf_it\tf_it_se\n")
		for k, f := range farms {
			fmt.Fprintf(&pb, "%s\t%d\t0.3\t0.31\t%s\t0.001\tNA\tNA\tNA\tNA\n", f, o.n/4, g(0.01+0.02*float64(k)))
		}
		pb.WriteString("all_pooled\t" + strconv.Itoa(o.n) + "\t0.3\t0.32\t0.03\t0.002\t0.05\t0.004\t0.08\t0.006\n")
		must(t, os.WriteFile(filepath.Join(dir, "populations.tsv"), pb.Bytes(), 0o644))
		var qb bytes.Buffer
		qb.WriteString("population_a\tpopulation_b\tf_st\tf_st_se\tn_sites\n")
		for a := 0; a < len(farms); a++ {
			for b := a + 1; b < len(farms); b++ {
				fmt.Fprintf(&qb, "%s\t%s\t%s\t0.003\t%d\n", farms[a], farms[b], g(0.01*float64(a+b)), nSites)
			}
		}
		must(t, os.WriteFile(filepath.Join(dir, "populations_pairwise.tsv"), qb.Bytes(), 0o644))
	}
	qq := [][]float64{}
	for k := 1; k <= 60; k++ {
		e := float64(k) / 10
		qq = append(qq, []float64{e, e * 1.08})
	}
	run := map[string]any{
		"version":      "0.1.0",
		"command_line": []string{"/tmp/go-build2871/b001/exe/fgauge", "scan", "herds it's.vcf.gz", "-o", "out", "--populations", "farms.tsv"},
		"input":        map[string]any{"path": "herds it's.vcf.gz", "size_bytes": 123456789, "format": "vcf.gz"},
		"records":      map[string]any{"read": nSites + 140, "kept": nSites, "skipped": map[string]int{"multiallelic": 90, "not_snp": 40, "filtered": 10}, "masked_calls": 12},
		"samples":      map[string]any{"in_file": o.n + 1, "kept": o.n, "excluded": []string{"VALE-999"}},
		"sites": map[string]any{"tested": nSites - 20, "hwe_p_below_1e3": 57, "hwe_p_below_1e6": 13, "hwe_p_below_1e10": 2,
			"lambda": 1.07, "mean_f_site": 0.021, "qq": qq},
		"roh": map[string]any{"method": "sliding_window", "covered_bp": covered, "covered_source": "contig_lengths", "classes_mb": []float64{1, 2, 4, 8, 16},
			"autosomes_used": []string{"1", "2", "3"}, "excluded_contigs": map[string]int{"X": o.sitesPerChr}},
		"populations":  map[string]any{},
		"warnings":     map[string]int{"half_missing_call": 4},
		"wall_seconds": 3.2,
	}
	jb, err := json.MarshalIndent(run, "", " ")
	must(t, err)
	must(t, os.WriteFile(filepath.Join(dir, "run.json"), jb, 0o644))
	return names
}

func must(t testing.TB, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}
