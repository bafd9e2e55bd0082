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
