package roh

import (
	"math"
	"testing"

	"fgauge/genedrop"
)

// End to end on gene-drop truth with old shared ancestry: founders carry
// segments of ancestral epochs 16, 64 and 256 generations back
// (genedrop.Config.AncestralEpochs, ages recorded per stretch), and the
// focal animals of the textbook matings add recent autozygosity. The
// detector with its default age classes (windows around runs) must give
// f_within_8g tracking the realized pedigree F of the focal animals
// (Pearson r >= 0.99, mean absolute difference <= 0.012), close to 0 for
// the founders (mean <= 0.01) although they carry ancient autozygosity,
// and the expected F of each mating (common practice: full-sib and
// parent-offspring 0.25, half-sib 0.125, first-cousin 0.0625, selfing
// 0.5) within 0.04; the oldest bound, f_within_256g, must see the
// founders' ancient sharing. Per-class recovery against the recorded ages
// (genedrop SampleAges.Within) is logged.
func TestAgesGeneDropEpochs(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation: skipped with -short")
	}
	designs := []struct {
		d    string
		want float64
	}{
		{"full_sib", 0.25}, {"half_sib", 0.125}, {"first_cousin", 0.0625}, {"parent_offspring", 0.25}, {"selfing:1", 0.5},
	}
	var ds []genedrop.Design
	dstr := map[string]string{}
	for _, d := range designs {
		x, err := genedrop.ParseDesign(d.d)
		if err != nil {
			t.Fatal(err)
		}
		ds = append(ds, x)
		dstr[d.d] = x.String()
	}
	epochs, err := genedrop.ParseEpochs("16:20:0.3,64:10:0.3,256:5:0.3")
	if err != nil {
		t.Fatal(err)
	}
	sim, err := genedrop.Run(genedrop.Config{
		Seed:            20261204,
		Chromosomes:     []genedrop.Chromosome{{Name: "1", LengthBP: 150_000_000, LengthCM: 150}, {Name: "2", LengthBP: 120_000_000, LengthCM: 120}, {Name: "3", LengthBP: 100_000_000, LengthCM: 100}},
		SiteSpacing:     30_000,
		Spectrum:        genedrop.SpectrumUShaped,
		Designs:         ds,
		Replicates:      60,
		GenotypeError:   0.001,
		MissingRate:     0.005,
		AncestralEpochs: epochs,
		Ages:            true,
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(sim.Ages) != len(sim.Samples) {
		t.Fatalf("simulation recorded ages of %d of %d animals", len(sim.Ages), len(sim.Samples))
	}
	names, contigs, bs := simBatches(t, sim)
	for _, whole := range []bool{false, true} {
		rcfg := DefaultConfig()
		rcfg.Threads = 2
		rcfg.AgeWholeChromosome = whole
		res := detectSim(t, rcfg, names, contigs, bs)
		fw := res.FWithin() // [G][sample]
		mode := "windowed"
		if whole {
			mode = "whole"
		}
		var xs, ys, ctrl, ctrlOld, ctrlOldTrue []float64
		for s, st := range sim.Samples {
			switch st.Class {
			case "focal":
				xs = append(xs, fw[2][s])
				ys = append(ys, st.FRealized)
			case "founder":
				ctrl = append(ctrl, fw[2][s])
				ctrlOld = append(ctrlOld, fw[7][s])
				ctrlOldTrue = append(ctrlOldTrue, sim.Ages[s].Within[7])
			}
		}
		mad := 0.0
		for i := range xs {
			mad += math.Abs(xs[i] - ys[i])
		}
		mad /= float64(len(xs))
		r := pearson(xs, ys)
		t.Logf("%s: focal n=%d r(f_within_8g, realized pedigree F)=%.4f mean|diff|=%.4f; founders n=%d mean f_within_8g=%.4f, f_within_256g=%.4f (true ancient %.4f)",
			mode, len(xs), r, mad, len(ctrl), mean(ctrl), mean(ctrlOld), mean(ctrlOldTrue))
		// per-class recovery against the recorded ages, all animals
		for j, g := range AgeGenerations {
			var est, tru []float64
			for s := range sim.Samples {
				est = append(est, fw[j][s])
				tru = append(tru, sim.Ages[s].Within[j])
			}
			d := 0.0
			for i := range est {
				d += est[i] - tru[i]
			}
			t.Logf("%s: f_within_%dg: mean %.4f, true %.4f, r %.3f, mean diff %+.4f", mode, g, mean(est), mean(tru), pearson(est, tru), d/float64(len(est)))
		}
		for _, d := range designs {
			var fx, fr []float64
			for s, st := range sim.Samples {
				if st.Class == "focal" && st.Design == dstr[d.d] {
					fx = append(fx, fw[2][s])
					fr = append(fr, st.FRealized)
				}
			}
			t.Logf("%s %s: n=%d mean f_within_8g=%.4f, realized %.4f, expected %.4f", mode, d.d, len(fx), mean(fx), mean(fr), d.want)
			if math.Abs(mean(fx)-d.want) > 0.04 || math.Abs(mean(fx)-mean(fr)) > 0.03 {
				t.Errorf("%s %s: mean f_within_8g %.4f, expected F %.4f (common practice), realized %.4f", mode, d.d, mean(fx), d.want, mean(fr))
			}
		}
		if r < 0.99 || mad > 0.012 || mean(ctrl) > 0.01 {
			t.Errorf("%s: r %.4f (want >= 0.99), mean|diff| %.4f (<= 0.012), founders' f_within_8g %.4f (<= 0.01)", mode, r, mad, mean(ctrl))
		}
		if mean(ctrlOld) < 0.5*mean(ctrlOldTrue) {
			t.Errorf("%s: founders' f_within_256g %.4f sees less than half their ancient autozygosity %.4f", mode, mean(ctrlOld), mean(ctrlOldTrue))
		}
	}
}
