package roh_test

import (
	"fmt"

	"fgauge/roh"
)

// A made-up goat kid typed at 2,000 sites, one every 25 kb on a 50 Mb
// chromosome at 1 cM/Mb, homozygous from 10 to 30 Mb (a 20 cM stretch,
// the length expected from a common ancestor two or three generations
// back) and cycling 0/0, 0/1, 1/1 elsewhere. The age model puts the
// stretch in the young classes: f_within_<G>g reaches the stretch's share
// of the chromosome (0.4) by G = 8 to 16; over the stretch the
// 2-generation class is the most probable, the neighbouring classes
// sharing the rest (one segment says little about its exact age).
func ExampleAgeWorker_Fit() {
	cfg := roh.DefaultAgeConfig()
	if err := cfg.Validate(); err != nil {
		panic(err)
	}
	n := 2000
	pos := make([]int64, n)
	cm := make([]float64, n)
	freq := make([]float64, n)
	codes := make([]uint8, n)
	first, last := -1, -1
	for i := range pos {
		pos[i] = int64(i+1) * 25_000
		cm[i] = float64(pos[i]) / 1e6
		freq[i] = 0.5
		codes[i] = uint8(i % 3)
		if pos[i] >= 10_000_000 && pos[i] < 30_000_000 {
			codes[i] = uint8(2 * (i % 2))
			if first < 0 {
				first = i
			}
			last = i
		}
	}
	tab := roh.NewAgeTables(cfg, pos, cm, freq, nil)
	var w roh.AgeWorker
	w.LoadCodes(tab, codes)
	fit := w.Fit(tab, cfg)
	covered := pos[n-1] - pos[0] + 1
	f := roh.FWithin(fit.ClassBP, cfg.Rates, covered)
	for j, g := range roh.AgeGenerations {
		fmt.Printf("%s %.3f\n", roh.AgeColumn(g), f[j])
	}
	class, post := w.RunClass(first, last)
	fmt.Printf("stretch: class of %d generations, mean posterior %.2f\n", roh.AgeGenerations[class], post)
	// Output:
	// f_within_2g 0.190
	// f_within_4g 0.350
	// f_within_8g 0.396
	// f_within_16g 0.400
	// f_within_32g 0.400
	// f_within_64g 0.401
	// f_within_128g 0.401
	// f_within_256g 0.401
	// stretch: class of 2 generations, mean posterior 0.47
}
