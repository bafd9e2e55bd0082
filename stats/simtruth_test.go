package stats_test

import (
	"math"
	"strconv"
	"testing"

	"fgauge/genedrop"
	"fgauge/stats"
	"fgauge/vcfscan"
)

// TestSelfingTruth drops genomes through selfed lines with the project's
// gene-drop simulator (genedrop, whose truth we control) and checks
// that f_hom and f_uniting_gametes, read against the ancestral-pool
// frequencies (passed as INFO values), track the realized autozygous share
// of each focal animal, which after t selfing generations is about
// 1 - (1/2)^t (common practice). Founders are mosaics of a finite
// ancestral pool, so they already share a little by descent relative to
// the pool (about 1/AncestralHaplotypes): allowed for in the tolerance.
// Twelve focal animals (selfing for 1 to 4 generations, 3 replicates).
func TestSelfingTruth(t *testing.T) {
	var n int
	for g := 1; g <= 4; g++ {
		d, err := genedrop.ParseDesign("selfing:" + strconv.Itoa(g))
		if err != nil {
			t.Fatal(err)
		}
		res, err := genedrop.Run(genedrop.Config{
			Seed:        uint64(10 + g),
			Chromosomes: []genedrop.Chromosome{{Name: "1", LengthBP: 150_000_000, LengthCM: 150}, {Name: "2", LengthBP: 100_000_000, LengthCM: 100}},
			Designs:     []genedrop.Design{d},
			Replicates:  3,
			SiteSpacing: 50_000,
		})
		if err != nil {
			t.Fatal(err)
		}
		names := make([]string, len(res.Samples))
		for i, s := range res.Samples {
			names[i] = s.ID
		}
		cfg := &stats.Config{Samples: names, Freqs: stats.FreqInfo, MinCallRate: 0.9}
		w := stats.NewWorker(cfg, func(id int) string { return res.Chromosomes[id].Name })
		b := &vcfscan.Batch{NSamples: len(names), Records: make([]vcfscan.Record, 1)}
		freqs := make([]float64, 1)
		err = res.ForEachSite(func(s *genedrop.Site) error {
			b.Records[0] = vcfscan.Record{ChromID: s.Chrom, Pos: s.Pos, Ref: []byte{s.Ref}, Alt: []byte{s.Alt}, InfoValue: s.PoolFreq}
			b.GT = append(b.GT[:0], s.GT...)
			w.ProcessBatch(b, nil, nil, freqs)
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		hdr, rows := w.Totals().SampleTable()
		colOf := map[string]int{}
		for i, h := range hdr {
			colOf[h] = i
		}
		for i, s := range res.Samples {
			if s.Class != "focal" {
				continue
			}
			n++
			fHom, _ := strconv.ParseFloat(rows[i][colOf["f_hom"]], 64)
			fUG, _ := strconv.ParseFloat(rows[i][colOf["f_uniting_gametes"]], 64)
			t.Logf("%-22s F_ped %.4f realized %.4f  f_hom %.4f  f_uniting %.4f", s.ID, s.FPedigree, s.FRealized, fHom, fUG)
			// f_hom within 0.04 of the realized share; F-hat-III is
			// unbiased but its sampling variance grows with F (Yang et al.
			// 2011), so it gets 0.12.
			if math.Abs(fHom-s.FRealized) > 0.04 {
				t.Errorf("%s: f_hom %.4f vs realized %.4f", s.ID, fHom, s.FRealized)
			}
			if math.Abs(fUG-s.FRealized) > 0.12 {
				t.Errorf("%s: f_uniting_gametes %.4f vs realized %.4f", s.ID, fUG, s.FRealized)
			}
		}
	}
	if n != 12 {
		t.Fatalf("%d focal animals, want 12", n)
	}
}
