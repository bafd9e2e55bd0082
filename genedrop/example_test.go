package genedrop_test

import (
	"fmt"
	"strings"

	"fgauge/genedrop"
	"fgauge/vcfscan"
)

func ExampleRun() {
	d, _ := genedrop.ParseDesign("full_sib")
	res, err := genedrop.Run(genedrop.Config{
		Seed:        42,
		Chromosomes: []genedrop.Chromosome{{Name: "1", LengthBP: 50_000_000, LengthCM: 50}},
		Designs:     []genedrop.Design{d},
		SiteSpacing: 25_000,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range res.Samples {
		if s.Class == "focal" {
			fmt.Println(s.ID, s.FPedigree)
		}
	}
	// Output: full_sib_r1_focal 0.25
}

func ExampleHaldaneR() {
	fmt.Printf("%.4f\n", genedrop.HaldaneR(0.5))
	// Output: 0.3161
}

// ForEachSite hands over every site with the true and observed calls of all
// samples; autozygous stretches are in Result.Segments.
func ExampleResult_ForEachSite() {
	d, _ := genedrop.ParseDesign("selfing:4")
	res, err := genedrop.Run(genedrop.Config{
		Seed:        7,
		Chromosomes: []genedrop.Chromosome{{Name: "1", LengthBP: 20_000_000, LengthCM: 20}},
		Designs:     []genedrop.Design{d},
		SiteSpacing: 50_000,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	focal := len(res.Samples) - 1 // parents come first; the last selfed plant
	hets, sites := 0, 0
	res.ForEachSite(func(s *genedrop.Site) error {
		sites++
		if s.GT[focal] == vcfscan.Heterozygous {
			hets++
		}
		return nil
	})
	fmt.Println(res.Samples[focal].ID, res.Samples[focal].FPedigree, hets <= sites/4)
	// Output: selfing_r1_s4 0.9375 true
}

func ExampleParseDesign() {
	d, err := genedrop.ParseDesign("closed_herd:10:40")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(d, d.Generations, d.HerdSize, d.Sires)
	// Output: closed_herd:10:40:2 10 40 2
}

func ExampleWriteSamplesTruth() {
	d, _ := genedrop.ParseDesign("half_sib")
	res, _ := genedrop.Run(genedrop.Config{Seed: 1, Designs: []genedrop.Design{d}, NoSites: true})
	var b strings.Builder
	genedrop.WriteSamplesTruth(&b, res)
	lines := strings.Split(b.String(), "\n")
	fmt.Println(lines[0])
	for _, l := range lines {
		if strings.HasPrefix(l, "half_sib_r1_focal\t") {
			f := strings.Split(l, "\t")
			fmt.Println(f[0], f[3], f[4])
		}
	}
	// Output:
	// sample	replicate	design	class	f_pedigree	f_realized	autozygous_bp	n_segments
	// half_sib_r1_focal focal 0.125
}

// With Ages, every autozygous stretch carries its common ancestor and age;
// Result.Ages splits each animal's autozygosity by age.
func ExampleAgedSegment() {
	d, _ := genedrop.ParseDesign("first_cousin")
	res, err := genedrop.Run(genedrop.Config{
		Seed:        3,
		Chromosomes: []genedrop.Chromosome{{Name: "1", LengthBP: 300_000_000, LengthCM: 300}},
		Designs:     []genedrop.Design{d},
		Replicates:  20,
		NoSites:     true,
		Ages:        true,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	ages := map[float64]bool{}
	for _, g := range res.AgedSegments {
		ages[g.Generations()] = true
	}
	fmt.Println(ages)
	// Output: map[3:true]
}

// Coancestry gives the realized coancestry of two simulated animals: here
// a sire and his daughter, whose coancestry is 1/4 whatever the meioses.
func ExampleResult_Coancestry() {
	d, _ := genedrop.ParseDesign("parent_offspring")
	res, err := genedrop.Run(genedrop.Config{Seed: 4, Designs: []genedrop.Design{d}, NoSites: true})
	if err != nil {
		fmt.Println(err)
		return
	}
	c, err := res.Coancestry("parent_offspring_r1_sire", "parent_offspring_r1_daughter")
	fmt.Println(c, err)
	// Output: 0.25 <nil>
}

func ExampleParseEpochs() {
	eps, err := genedrop.ParseEpochs("16:20:0.3,64:10:0.3,256:5:0.3")
	if err != nil {
		fmt.Println(err)
		return
	}
	var f float64
	for _, e := range eps {
		f += e.ExpectedF()
	}
	fmt.Printf("%d epochs, expected ancient F of a founder %.4f\n", len(eps), f)
	// Output: 3 epochs, expected ancient F of a founder 0.0315
}
