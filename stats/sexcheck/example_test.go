package sexcheck_test

import (
	"fmt"
	"strings"

	"fgauge/stats/pedigree"
	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

// Reading a sex file of the invented goat cooperative and laying it over
// the samples of the data.
func ExampleReadList() {
	in := "sample\tsex\nnanny_07\tF\nbuck_02\t1\nkid_11\tNA\n"
	l, err := sexcheck.ReadList(strings.NewReader(in), "coop.sex")
	if err != nil {
		fmt.Println(err)
		return
	}
	m, err := l.ForSamples([]string{"buck_02", "nanny_07", "kid_11", "kid_12"}, sexcheck.AbsentIsError)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.Sexes, m.Listed, m.Unlisted)
	// Output: [male female unknown unknown] 3 1
}

// Errors name the file and line.
func ExampleList_ForSamples() {
	l, _ := sexcheck.ReadList(strings.NewReader("nanny_07\tF\nbuck_99\tM\n"), "coop.sex")
	_, err := l.ForSamples([]string{"nanny_07"}, sexcheck.AbsentIsError)
	fmt.Println(err)
	m, _ := l.ForSamples([]string{"nanny_07"}, sexcheck.AbsentIsWarning)
	fmt.Println(m.Absent)
	// Output:
	// coop.sex:2: sample not in the data: "buck_99"
	// [coop.sex:2: buck_99]
}

func ExampleFromPedigree() {
	p, _ := pedigree.Read(strings.NewReader("id\tsire\tdam\tsex\nbuck_02\t0\t0\tM\nnanny_07\t0\t0\tF\nkid_11\tbuck_02\tnanny_07\t.\n"), "coop_herd_book.tsv")
	sx, present := sexcheck.FromPedigree(p, []string{"kid_11", "nanny_07", "buck_02"})
	fmt.Println(sx, present)
	// Output: [unknown female male] true
}

func ExampleHumanPAR() {
	p, ok := sexcheck.HumanPAR([]vcfscan.Contig{{Name: "chrX", Length: 156040895}})
	fmt.Println(ok, p.Reason)
	fmt.Println(p.Contains("chrX", 2000000), p.Contains("chrX", 3000000))
	// Output:
	// true GRCh38 recognised from X length 156040895 (PAR coordinates from memory of the assembly report)
	// true false
}

func ExampleParsePAR() {
	p, err := sexcheck.ParsePAR([]string{"X:1-1,500,000", "X:141,000,000-"}, "--par X:1-1,500,000,X:141,000,000-")
	if err != nil {
		fmt.Println(err)
		return
	}
	spans := p.Spans("X") // look the contig up once per chromosome
	fmt.Println(spans.Contains(1200000), spans.Contains(90000000), spans.Contains(141000000))
	// Output: true false true
}

// The per-site and per-call steps a worker runs on non-PAR X sites, and
// the decision at the end. Two samples at 400 sites: one diploid,
// heterozygous at every other site, one coded haploid.
func ExampleDecideAll() {
	accs := make([]sexcheck.Acc, 2)
	var sites sexcheck.Sites
	pattern := [4][2]vcfscan.Geno{
		{vcfscan.Heterozygous, vcfscan.HaploidRef},
		{vcfscan.HomAlt, vcfscan.HaploidRef},
		{vcfscan.Heterozygous, vcfscan.HaploidAlt},
		{vcfscan.HomRef, vcfscan.HaploidAlt},
	}
	for k := 0; k < 400; k++ {
		calls := pattern[k%4][:]
		// Per site: cohort counts by genotype code, then the site terms.
		var cnt [6]int64
		for _, g := range calls {
			cnt[g]++
		}
		site := sexcheck.NewXSite(&cnt, 0)
		sites.X++
		if site.Informative {
			sites.XInformative++
		}
		// Per call: one add.
		for i, g := range calls {
			accs[i].AddX(&site, g)
		}
	}
	calls, use := sexcheck.DecideAll(accs, sites, sexcheck.DefaultThresholds())
	for _, c := range calls {
		fmt.Printf("%s %s F_X=%.2f\n", c.Sex, c.Reason, c.FX)
	}
	fmt.Println(use.Used)
	// Output:
	// female x_diploid F_X=-0.12
	// male x_hemizygous F_X=1.00
	// false
}

// Per contig the worker looks up the treatment once; per site it asks
// for the kind at the position.
func ExampleContig_KindAt() {
	p, _ := sexcheck.HumanPAR([]vcfscan.Contig{{Name: "chrX", Length: 156040895}})
	x := p.Contig("chrX", sexcheck.KindOf("chrX"))
	fmt.Println(x.KindAt(1000000), x.KindAt(50000000))
	// Output: autosome X
}

func ExampleMismatch() {
	fmt.Println(sexcheck.Mismatch(sexcheck.Female, sexcheck.Male), sexcheck.Mismatch(sexcheck.Unknown, sexcheck.Male))
	// Output: true false
}

func ExampleThresholds_Describe() {
	d := sexcheck.DefaultThresholds().Describe()
	fmt.Println(strings.Split(d, "\n")[2])
	// Output:   male    F_X >= 0.9  (hemizygous: only spurious heterozygous calls, up to a tenth of the expected rate)
}
