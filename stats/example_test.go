package stats_test

import (
	"bytes"
	"fmt"
	"os"
	"strings"

	"fgauge/stats"
	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

// A tiny invented flock: three ewes at three sites.
func exampleBatch() *vcfscan.Batch {
	b := &vcfscan.Batch{NSamples: 3}
	gts := [][]vcfscan.Geno{
		{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.HomAlt},
		{vcfscan.HomRef, vcfscan.HomRef, vcfscan.Heterozygous},
		{vcfscan.Heterozygous, vcfscan.Missing, vcfscan.HomAlt},
	}
	for i, g := range gts {
		b.Records = append(b.Records, vcfscan.Record{Pos: int64(100 * (i + 1)), Ref: []byte("A"), Alt: []byte("G"), InfoValue: vcfscan.NaN})
		b.GT = append(b.GT, g...)
	}
	return b
}

func ExampleHWEExact() {
	r := stats.HWEExact(57, 14, 50) // strong heterozygote deficit
	fmt.Printf("p=%.3g midp=%.3g deficit=%.3g excess=%.3g\n", r.P, r.MidP, r.Deficit, r.Excess)
	// Output: p=5.56e-19 midp=3.01e-19 deficit=5.18e-19 excess=1
}

// At the site at 100 (one of each genotype, n = 3) the two outcomes have
// probabilities 0.6 (one heterozygote) and 0.4 (three), so hwe_p = 1,
// mid-p = 1 - 0.6/2 = 0.7, P(n_het <= 1) = 0.6 and P(n_het >= 1) = 1
// (worked by hand from Levene's formula).
func ExampleWorker() {
	cfg := &stats.Config{Samples: []string{"ewe_1", "ewe_2", "ewe_3"}, MinCallRate: 0.9}
	w := stats.NewWorker(cfg, func(int) string { return "chr1" })
	var sites bytes.Buffer
	freqs := make([]float64, 3)
	w.ProcessBatch(exampleBatch(), &sites, nil, freqs)
	fmt.Println(stats.SitesHeader())
	fmt.Print(sites.String())
	fmt.Println(freqs)
	// Output:
	// chrom	pos	ref	alt	n_hom_ref	n_het	n_hom_alt	n_missing	n_haploid	alt_freq	maf	call_rate	het_observed	het_expected	f_site	hwe_p	hwe_midp	hwe_p_fewer_het	hwe_p_more_het	alt_freq_lik
	// chr1	100	A	G	1	1	1	0	0	0.5	0.5	1	0.3333333333333333	0.6	0.4444444444444444	1	0.7	0.6000000000000001	1	NA
	// chr1	200	A	G	2	1	0	0	0	0.16666666666666666	0.16666666666666666	1	0.3333333333333333	0.3333333333333333	0	1	0.5	1	1	NA
	// chr1	300	A	G	0	1	1	1	0	0.75	0.25	0.6666666666666666	0.5	0.5	0	1	0.5	1	1	NA
	// [0.5 0.16666666666666666 0.75]
}

func ExampleTotals_Merge() {
	cfg := &stats.Config{Samples: []string{"ewe_1", "ewe_2", "ewe_3"}, MinCallRate: 0.9}
	b := exampleBatch()
	// Two workers see different parts of the input...
	w1 := stats.NewWorker(cfg, func(int) string { return "chr1" })
	w2 := stats.NewWorker(cfg, func(int) string { return "chr1" })
	first := &vcfscan.Batch{NSamples: 3, Records: b.Records[:1], GT: b.GT[:3]}
	rest := &vcfscan.Batch{NSamples: 3, Records: b.Records[1:], GT: b.GT[3:]}
	f := make([]float64, 3)
	w1.ProcessBatch(first, nil, nil, f)
	w2.ProcessBatch(rest, nil, nil, f)
	// ...and their totals merge exactly, in any order.
	total := stats.NewTotals(cfg)
	if err := total.Merge(w2.Totals()); err != nil {
		panic(err)
	}
	if err := total.Merge(w1.Totals()); err != nil {
		panic(err)
	}
	header, rows := total.SampleTable()
	fmt.Println(strings.Join(header[:8], "\t"))
	for _, r := range rows {
		fmt.Println(strings.Join(r[:8], "\t"))
	}
	// Output:
	// sample	sites_called	n_hom_ref	n_het	n_hom_alt	n_missing	n_haploid	call_rate
	// ewe_1	3	2	1	0	0	0	1
	// ewe_2	2	1	1	0	1	0	0.6666666666666666
	// ewe_3	3	0	1	2	0	0	1
}

func ExampleTotals_WritePopulations() {
	cfg := &stats.Config{Samples: []string{"ewe_1", "ewe_2", "ewe_3"}, PopOf: []int{0, 0, 1},
		PopNames: []string{"farm_a", "farm_b"}, Freqs: stats.FreqPopulation, MinCallRate: 0.9}
	w := stats.NewWorker(cfg, func(int) string { return "chr1" })
	w.ProcessBatch(exampleBatch(), nil, nil, make([]float64, 3))
	if err := w.Totals().WritePopulations(os.Stdout); err != nil {
		panic(err)
	}
	// Output:
	// population	n_samples	mean_het_observed	mean_het_expected	f_is	share_hwe_p_below_1e6	f_is_se	f_st	f_st_se	f_it	f_it_se
	// farm_a	2	0.5	0.5	0	0	NA	NA	NA	NA	NA
	// farm_b	1	0.3333333333333333	0.3333333333333333	0	0	NA	NA	NA	NA	NA
	// all_pooled	3	0.38888888888888884	0.4777777777777778	-0.1428571428571426	0	NA	0.5172413793103448	NA	0.4482758620689655	NA
}

func ExampleColumnDocs() {
	for _, d := range stats.ColumnDocs() {
		if d.Column == "f_uniting_gametes" {
			fmt.Println(d.File, d.Column)
		}
	}
	// Output: samples.tsv f_uniting_gametes
}

func ExampleSum128() {
	var a, b stats.Sum128
	a.Add(0.1)
	a.Add(1e15)
	b.Add(-1e15)
	b.Add(0.2)
	a.AddSum(b) // the same bits whatever the order or grouping
	fmt.Printf("%.6f\n", a.Float64())
	// Output: 0.300000
}

func ExampleWeirCockerham() {
	// Two farms fixed for different alleles (30 animals each).
	a, b, c, ok := stats.WeirCockerham([]int64{30, 30}, []int64{0, 60}, []int64{0, 0})
	fmt.Println(ok, a/(a+b+c))
	// Output: true 1
}

func ExampleReadPopulations() {
	in := "sample population\ncow_1 herd_north\ncow_2 herd_river\n"
	p, err := stats.ReadPopulations(strings.NewReader(in), "herds.txt")
	if err != nil {
		panic(err)
	}
	popOf, unlisted := p.Assign([]string{"cow_1", "cow_2", "cow_3"})
	fmt.Println(p.Names, popOf, unlisted)
	// Output: [herd_north herd_river] [0 1 -1] [cow_3]
}

// R genetics HWE.chisq(correct = FALSE) gives 0.004677735 for these counts
// (testdata/snpstats/hwe_worked.tsv).
func ExampleHWEChiSq() {
	r := stats.HWEChiSq(120, 60, 20)
	fmt.Printf("p=%.4g\n", r.P)
	// Output: p=0.004678
}

// Example of the X-chromosomal exact test: 40 females (9 AA, 18 AB,
// 13 BB) and 30 males (11 A, 19 B). Values as printed by
// testdata/tools/xhwe_exact.R (base R full enumeration) for these counts.
func ExampleHWEExactX() {
	r := stats.HWEExactX(9, 18, 13, 11, 19)
	fmt.Printf("p=%.4f midp=%.4f deficit=%.4f excess=%.4f\n", r.P, r.MidP, r.Deficit, r.Excess)
	// Output: p=0.5951 midp=0.5821 deficit=0.3437 excess=0.7649
}

// An X site of the invented goat cooperative: the worker counts each
// call by the sample's sex (males hemizygous however coded), then tests.
func ExampleXTally() {
	sexes := []sexcheck.Sex{sexcheck.Female, sexcheck.Female, sexcheck.Female, sexcheck.Male, sexcheck.Male, sexcheck.Male}
	calls := []vcfscan.Geno{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.HomAlt, vcfscan.HaploidAlt, vcfscan.HomRef, vcfscan.Heterozygous}
	var x stats.XTally
	maleHet := make([]int64, len(calls))
	x.AddCalls(sexes, calls, maleHet)
	r := x.Row(stats.NewXHWECache(0))
	fmt.Println(r.Female, r.MaleRef, r.MaleAlt, r.MaleHet, maleHet)
	fmt.Printf("alt_freq=%.3f p=%.4f\n", r.AltFreq, r.Equilibrium.P)
	// Output:
	// [1 1 1] 1 1 1 [0 0 0 0 0 1]
	// alt_freq=0.500 p=1.0000
}
