package simulate_test

import (
	"fmt"

	"fgauge/roh/simulate"
)

func ExampleRun() {
	d, _ := simulate.ParseDesign("full_sib")
	res, err := simulate.Run(simulate.Config{
		Seed:        42,
		Chromosomes: []simulate.Chromosome{{Name: "1", LengthBP: 50_000_000, LengthCM: 50}},
		Designs:     []simulate.Design{d},
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
	fmt.Printf("%.4f\n", simulate.HaldaneR(0.5))
	// Output: 0.3161
}
