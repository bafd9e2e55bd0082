package stats

import (
	"bytes"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

// sampleRow runs calls (sites x samples) with per-site INFO frequencies
// (NaN: none) or cohort frequencies and returns the named column of each
// sample's row.
func runCalls(t *testing.T, cfg *Config, calls [][]vcfscan.Geno, info []float64) (*Totals, map[string][]float64) {
	t.Helper()
	w := NewWorker(cfg, func(int) string { return "chr1" })
	b := &vcfscan.Batch{NSamples: len(cfg.Samples)}
	for i, c := range calls {
		v := math.NaN()
		if info != nil {
			v = info[i]
		}
		b.Records = append(b.Records, vcfscan.Record{Pos: int64(1000 * (i + 1)), Ref: []byte("A"), Alt: []byte("G"), InfoValue: v})
		b.GT = append(b.GT, c...)
	}
	var sites bytes.Buffer
	w.ProcessBatch(b, &sites, nil, make([]float64, len(calls)))
	tot := w.Totals()
	hdr, rows := tot.SampleTable()
	cols := map[string][]float64{}
	for _, r := range rows {
		for j, h := range hdr {
			v, err := strconv.ParseFloat(r[j], 64)
			if err != nil {
				v = math.NaN()
			}
			cols[h] = append(cols[h], v)
		}
	}
	return tot, cols
}

var estimatorCols = []string{"f_hom", "f_grm", "f_excess_hom", "f_uniting_gametes", "f_vanraden"}

// TestEstimatorsHand checks the estimators on cases worked by hand.
func TestEstimatorsHand(t *testing.T) {
	const n = 20
	hom := make([][]vcfscan.Geno, 0, n+2)
	info := []float64{}
	for i := 0; i < n; i++ {
		hom = append(hom, []vcfscan.Geno{vcfscan.Geno(2 * (i % 2)), vcfscan.Heterozygous})
		info = append(info, 0.5)
	}
	// Two monomorphic sites (p = 0, and no frequency) must be ignored.
	hom = append(hom, []vcfscan.Geno{vcfscan.HomRef, vcfscan.Heterozygous}, []vcfscan.Geno{vcfscan.HomAlt, vcfscan.HomRef})
	info = append(info, 0, math.NaN())
	cfg := &Config{Samples: []string{"calf_hom", "calf_het"}, Freqs: FreqInfo, MinCallRate: 0.9}
	_, cols := runCalls(t, cfg, hom, info)
	// p = 0.5 at every informative site, 2p(1-p) = 1/2, external p (no
	// sample-size factor):
	// all homozygous (x in {0,2}): (x-1)^2/(1/2)-1 = 1; 1-x(2-x)/(1/2) = 1;
	//   (x^2-2x+1/2)/(1/2) = 1; VanRaden n*1/(n/2)-1 = 1;
	//   f_hom 1 - (het calls)/(expected het calls) = 1 - 0/(n/2) = 1.
	// all heterozygous (x = 1): 0-1 = -1; 1-2 = -1; (1-2+1/2)/(1/2) = -1;
	//   VanRaden 0-1 = -1; f_hom 1 - n/(n/2) = -1.
	for _, c := range estimatorCols {
		if got := cols[c][0]; math.Abs(got-1) > 1e-9 {
			t.Errorf("all homozygous %s = %v, want 1", c, got)
		}
		if got := cols[c][1]; math.Abs(got+1) > 1e-9 {
			t.Errorf("all heterozygous %s = %v, want -1", c, got)
		}
	}
	if cols["polymorphic_sites_called"][0] != n {
		t.Errorf("polymorphic_sites_called %v, want %d (monomorphic sites ignored)", cols["polymorphic_sites_called"][0], n)
	}

	// Cohort frequencies: sample A always 0/0, sample B always 0/1, so
	// p = 1/4, 2p(1-p) = 3/8, n = 2 called, Nei factor 4/3.
	// A (x=0): f_grm = (1/4)/(3/8)-1 = -1/3; f_excess_hom = 1;
	//   f_uniting = 2p^2/(3/8) = 1/3; VanRaden (1/4)/(3/8)-1 = -1/3;
	//   expected homozygous share per site 1-(3/8)(4/3) = 1/2, seen 1: f_hom = 1.
	// B (x=1): f_grm = (1/4)/(3/8)-1 = -1/3; f_excess_hom = 1-1/(3/8) = -5/3;
	//   f_uniting = (1-3/2+1/8)/(3/8) = -1; VanRaden -1/3; f_hom = -1.
	var ab [][]vcfscan.Geno
	for i := 0; i < n; i++ {
		ab = append(ab, []vcfscan.Geno{vcfscan.HomRef, vcfscan.Heterozygous})
	}
	cfg = &Config{Samples: []string{"calf_a", "calf_b"}, MinCallRate: 0.9}
	_, cols = runCalls(t, cfg, ab, nil)
	want := map[string][2]float64{
		"f_hom": {1, -1}, "f_grm": {-1.0 / 3, -1.0 / 3}, "f_excess_hom": {1, -5.0 / 3},
		"f_uniting_gametes": {1.0 / 3, -1}, "f_vanraden": {-1.0 / 3, -1.0 / 3},
		"homozygous_share_under_hwe": {0.5, 0.5}, "homozygous_share": {1, 0}, "het_rate": {0, 1}, "call_rate": {1, 1},
	}
	for c, w := range want {
		for s := 0; s < 2; s++ {
			if got := cols[c][s]; math.Abs(got-w[s]) > 1e-9 {
				t.Errorf("sample %d %s = %v, want %v", s, c, got, w[s])
			}
		}
	}
}

// TestEstimatorsUndefined: no informative site gives NA, never 0.
func TestEstimatorsUndefined(t *testing.T) {
	calls := [][]vcfscan.Geno{{vcfscan.HomRef, vcfscan.Missing}, {vcfscan.HomRef, vcfscan.Missing}}
	tot, cols := runCalls(t, &Config{Samples: []string{"lamb_1", "lamb_2"}, MinCallRate: 0.9}, calls, nil)
	for _, c := range append(estimatorCols, "homozygous_share_under_hwe", "homozygous_share") {
		if !math.IsNaN(cols[c][0]) || !math.IsNaN(cols[c][1]) {
			t.Errorf("%s: %v, want NA", c, cols[c])
		}
	}
	_, rows := tot.SampleTable()
	if f := rows[1][len(rows[1])-1]; f != "no_calls" {
		t.Errorf("flags %q, want no_calls", f)
	}
	if !math.IsNaN(cols["het_rate"][1]) {
		t.Errorf("het_rate of uncalled sample %v, want NA", cols["het_rate"][1])
	}
}

// simulateCohort draws genotypes for nSamples at nSites with alternate
// frequencies uniform on [0.05, 0.95]; sample i has true inbreeding F[i]
// (with probability F its two alleles are one IBD draw, else two
// independent draws). Deterministic seed.
func simulateCohort(seed uint64, F []float64, nSites int) [][]vcfscan.Geno {
	rng := rand.New(rand.NewPCG(seed, 1))
	calls := make([][]vcfscan.Geno, nSites)
	for s := range calls {
		p := 0.05 + 0.9*rng.Float64()
		c := make([]vcfscan.Geno, len(F))
		for i, f := range F {
			a := b2g(rng.Float64() < p)
			if rng.Float64() < f {
				c[i] = 2 * a
			} else {
				c[i] = a + b2g(rng.Float64() < p)
			}
		}
		calls[s] = c
	}
	return calls
}

func b2g(b bool) vcfscan.Geno {
	if b {
		return 1
	}
	return 0
}

func meanVar(x []float64) (m, v float64) {
	for _, a := range x {
		m += a
	}
	m /= float64(len(x))
	for _, a := range x {
		v += (a - m) * (a - m)
	}
	return m, v / float64(len(x)-1)
}

// TestEstimatorsSimulated: in an outbred random-mating sample every
// estimator has mean about 0 (common practice); with true F = 0.25 the
// means are about 0.25; F-hat-III has the smallest sampling variance of
// Yang et al.'s three estimators when F is small (Yang et al. 2011, Am J
// Hum Genet 88:76, their Table 1 discussion). Truth is controlled by the
// simulation.
func TestEstimatorsSimulated(t *testing.T) {
	const ns = 400
	F := make([]float64, ns)
	names := make([]string, ns)
	for i := range F {
		names[i] = "ewe_" + strconv.Itoa(i)
		if i >= ns/2 {
			F[i] = 0.25
		}
	}
	calls := simulateCohort(7, F, 3000)
	_, cols := runCalls(t, &Config{Samples: names, MinCallRate: 0.9}, calls, nil)
	vars := map[string]float64{}
	for _, c := range estimatorCols {
		m0, v0 := meanVar(cols[c][:ns/2])
		m1, _ := meanVar(cols[c][ns/2:])
		vars[c] = v0
		t.Logf("%-18s mean(F=0) %+.4f var %.3g   mean(F=0.25) %.4f", c, m0, v0, m1)
		// Cohort p includes the inbred half, so the outbred half sits a
		// little below 0 (about -F_mean/(1-F_mean) = -0.14 at most for
		// f_hom-type estimators); allow 0.03 around the outbred check
		// done below on a cohort without inbred samples.
		if math.Abs(m1-m0-0.25) > 0.05 {
			t.Errorf("%s: inbred minus outbred %.4f, want about 0.25", c, m1-m0)
		}
	}
	out := simulateCohort(11, make([]float64, ns), 3000)
	_, cols = runCalls(t, &Config{Samples: names, MinCallRate: 0.9}, out, nil)
	for _, c := range estimatorCols {
		m, v := meanVar(cols[c])
		vars[c] = v
		if math.Abs(m) > 0.01 {
			t.Errorf("outbred %s mean %.4f, want about 0", c, m)
		}
	}
	if !(vars["f_uniting_gametes"] <= vars["f_grm"] && vars["f_uniting_gametes"] <= vars["f_excess_hom"]) {
		t.Errorf("sampling variances %v: F-hat-III should be smallest", vars)
	}
	t.Logf("outbred sampling variances: %v", vars)
}

// TestSnpStatsRowSummary compares call_rate and het_rate with Bioconductor
// snpStats 1.48.0 row.summary (Call.rate, Heterozygosity = het/called) on
// testdata/cohort189.vcf.gz, computed by testdata/snpstats/row_summary.R
// (output testdata/snpstats/row_summary.tsv).
func TestSnpStatsRowSummary(t *testing.T) {
	fx := readVCFFixture(t, "../testdata/cohort189.vcf.gz")
	tot, _, _ := fx.run(t, &Config{Samples: fx.samples, MinCallRate: 0.9}, 0, len(fx.recs), 50)
	hdr, rows := tot.SampleTable()
	rh, ref, _ := readTSV(t, "../testdata/snpstats/row_summary.tsv")
	if len(ref) != len(rows) {
		t.Fatalf("%d samples, snpStats %d", len(rows), len(ref))
	}
	for _, r := range rows {
		want := ref[r[0]]
		for _, p := range [][2]string{{"call_rate", "call_rate"}, {"het_rate", "heterozygosity"}} {
			g, _ := strconv.ParseFloat(r[col(hdr, p[0])], 64)
			w, _ := strconv.ParseFloat(want[col(rh, p[1])], 64)
			if math.Abs(g-w) > 1e-12 {
				t.Errorf("%s %s = %v, snpStats %v", r[0], p[0], g, w)
			}
		}
	}
}

func TestFlags(t *testing.T) {
	// calf_low is called at 1 of 4 sites (low_call_rate); others full.
	calls := [][]vcfscan.Geno{
		{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.HomRef},
		{vcfscan.Missing, vcfscan.Heterozygous, vcfscan.HomAlt},
		{vcfscan.Missing, vcfscan.HomRef, vcfscan.Heterozygous},
		{vcfscan.Missing, vcfscan.HomAlt, vcfscan.Heterozygous},
	}
	tot, _ := runCalls(t, &Config{Samples: []string{"calf_low", "calf_b", "calf_c"}, MinCallRate: 0.9}, calls, nil)
	_, rows := tot.SampleTable()
	if !strings.Contains(rows[0][len(rows[0])-1], "low_call_rate") {
		t.Errorf("flags %q lack low_call_rate", rows[0][len(rows[0])-1])
	}
	if rows[1][len(rows[1])-1] != "." {
		t.Errorf("flags %q, want .", rows[1][len(rows[1])-1])
	}
}

// TestPopulationFrequencies: each sample uses its own population's
// frequency; samples outside every population use the cohort frequency.
// Two herds fixed for different alleles are monomorphic within herds, so
// their samples have no informative site (NA), while the unassigned
// sample, read against the cohort frequency 1/2, is informative.
func TestPopulationFrequencies(t *testing.T) {
	const n = 10
	var calls [][]vcfscan.Geno
	for i := 0; i < n; i++ {
		calls = append(calls, []vcfscan.Geno{vcfscan.HomRef, vcfscan.HomRef, vcfscan.HomAlt, vcfscan.HomAlt, vcfscan.Heterozygous})
	}
	cfg := &Config{Samples: []string{"a1", "a2", "b1", "b2", "stray"}, PopOf: []int{0, 0, 1, 1, -1},
		PopNames: []string{"herd_a", "herd_b"}, Freqs: FreqPopulation, MinCallRate: 0.9}
	tot, cols := runCalls(t, cfg, calls, nil)
	for s := 0; s < 4; s++ {
		if cols["polymorphic_sites_called"][s] != 0 || !math.IsNaN(cols["f_grm"][s]) {
			t.Errorf("sample %d: polymorphic sites called %v f_grm %v, want 0 and NA", s, cols["polymorphic_sites_called"][s], cols["f_grm"][s])
		}
	}
	// Cohort p = 5/10 = 1/2 over 5 samples; the stray heterozygote has
	// f_grm = (1-1)^2/(1/2) - 1 = -1 and f_uniting = (1-2+1/2)/(1/2) = -1.
	if cols["polymorphic_sites_called"][4] != n || math.Abs(cols["f_grm"][4]+1) > 1e-9 || math.Abs(cols["f_uniting_gametes"][4]+1) > 1e-9 {
		t.Errorf("stray: polymorphic sites called %v f_grm %v f_uniting %v", cols["polymorphic_sites_called"][4], cols["f_grm"][4], cols["f_uniting_gametes"][4])
	}
	// Fixed different alleles: theta = 1 (Weir & Cockerham 1984).
	if s := tot.PopulationSummary(); math.Abs(float64(s.FST)-1) > 1e-9 {
		t.Errorf("f_st %v, want 1", s.FST)
	}
}

// TestHaploidCalls: haploid calls are counted apart and left out of
// diploid statistics and of the estimators.
func TestHaploidCalls(t *testing.T) {
	calls := [][]vcfscan.Geno{
		{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.HaploidAlt},
		{vcfscan.HomAlt, vcfscan.Heterozygous, vcfscan.HaploidRef},
	}
	cfg := &Config{Samples: []string{"bull", "cow_1", "cow_2"}, MinCallRate: 0.9}
	w := NewWorker(cfg, func(int) string { return "X" })
	b := &vcfscan.Batch{NSamples: 3}
	for i, c := range calls {
		b.Records = append(b.Records, vcfscan.Record{Pos: int64(i + 1), Ref: []byte("A"), Alt: []byte("C"), InfoValue: math.NaN()})
		b.GT = append(b.GT, c...)
	}
	var sites bytes.Buffer
	w.ProcessBatch(b, &sites, nil, make([]float64, 2))
	row := strings.Split(strings.SplitN(sites.String(), "\n", 2)[0], "\t")
	// n_hom_ref n_het n_hom_alt n_missing n_haploid = 1 1 0 0 1; alt_freq 1/4;
	// call_rate 3/3: the haploid call counts as a call.
	if strings.Join(row[4:12], " ") != "1 1 0 0 1 0.25 0.25 1" {
		t.Errorf("site row %v", row)
	}
	hdr, rows := w.Totals().SampleTable()
	// cow_2 has only haploid calls: call_rate 1 (no low_call_rate), but no
	// diploid call for any estimator (no_calls).
	if rows[2][col(hdr, "n_haploid")] != "2" || rows[2][col(hdr, "polymorphic_sites_called")] != "0" || rows[2][col(hdr, "f_hom")] != "NA" ||
		rows[2][col(hdr, "call_rate")] != "1" || rows[2][col(hdr, "flags")] != "no_calls" || rows[2][col(hdr, "homozygous_share")] != "NA" {
		t.Errorf("haploid sample row %v", rows[2])
	}
}

// TestEstimatorsAgainstR compares every per-sample estimator on cohort189
// (cohort frequencies) with an independent plain-R computation from the
// published formulas (testdata/snpstats/estimators.R, output
// estimators.tsv; R 4.2.2). Fixed-point sums: about 1e-10 per site.
func TestEstimatorsAgainstR(t *testing.T) {
	fx := readVCFFixture(t, "../testdata/cohort189.vcf.gz")
	tot, _, _ := fx.run(t, &Config{Samples: fx.samples, MinCallRate: 0.9}, 0, len(fx.recs), 33)
	hdr, rows := tot.SampleTable()
	rh, ref, _ := readTSV(t, "../testdata/snpstats/estimators.tsv")
	cols := append([]string{"polymorphic_sites_called", "homozygous_share", "homozygous_share_under_hwe"}, estimatorCols...)
	for _, r := range rows {
		want := ref[r[0]]
		if want == nil {
			t.Fatalf("%s not in R output", r[0])
		}
		for _, c := range cols {
			g, _ := strconv.ParseFloat(r[col(hdr, c)], 64)
			w, _ := strconv.ParseFloat(want[col(rh, c)], 64)
			if math.Abs(g-w) > 1e-8*math.Max(1, math.Abs(w)) {
				t.Errorf("%s %s = %v, R %v", r[0], c, g, w)
			}
		}
	}
}
