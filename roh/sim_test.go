package roh

import (
	"fmt"
	"math"
	"sort"
	"testing"

	"fgauge/genedrop"
	"fgauge/vcfscan"
)

// simScore holds the accuracy of one detector on one simulated cohort.
type simScore struct {
	recall, precision float64 // bases in true / called segments >= 2 Mb
	r                 float64 // Pearson r(f_roh, realized F) over focal animals
	meanFROH, meanF   float64 // mean f_roh and mean realized F of focal animals
	nFocal            int
}

// simBatches turns a simulated cohort into batches once, so that both
// detectors read the same data without simulating it again.
func simBatches(t *testing.T, sim *genedrop.Result) ([]string, []vcfscan.Contig, []*vcfscan.Batch) {
	t.Helper()
	names := make([]string, len(sim.Samples))
	for i, s := range sim.Samples {
		names[i] = s.ID
	}
	contigs := make([]vcfscan.Contig, len(sim.Chromosomes))
	for i, c := range sim.Chromosomes {
		contigs[i] = vcfscan.Contig{Name: c.Name, Length: c.LengthBP}
	}
	const size = 2000
	var bs []*vcfscan.Batch
	b := &vcfscan.Batch{NSamples: len(names)}
	hasPL := sim.Config.Depth > 0
	err := sim.ForEachSite(func(s *genedrop.Site) error {
		b.Records = append(b.Records, vcfscan.Record{ChromID: s.Chrom, Pos: s.Pos})
		b.GT = append(b.GT, s.GT...)
		if hasPL {
			b.PL = append(b.PL, s.PL...)
			b.HasPL = append(b.HasPL, true)
		}
		if len(b.Records) == size {
			bs = append(bs, b)
			b = &vcfscan.Batch{Seq: b.Seq + 1, NSamples: len(names)}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(b.Records) > 0 {
		bs = append(bs, b)
	}
	return names, contigs, bs
}

// detectSim runs one detector over the batches; frequencies are estimated
// from the cohort's calls (freqs nil), as without a reference panel.
func detectSim(t *testing.T, cfg *Config, names []string, contigs []vcfscan.Contig, bs []*vcfscan.Batch) *Result {
	t.Helper()
	col, err := NewCollector(cfg, names, contigs)
	if err != nil {
		t.Fatal(err)
	}
	for _, b := range bs {
		if err := col.AddBatch(b, nil); err != nil {
			t.Fatal(err)
		}
	}
	res, err := col.Finish()
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// scoreSim scores the runs of the focal animals of one design against the
// simulator's truth.
func scoreSim(sim *genedrop.Result, res *Result, design string) simScore {
	stats := res.SampleStats()
	type key struct{ s, c int }
	truth := map[key][][2]int64{}
	for _, sg := range sim.Segments {
		truth[key{sg.Sample, sg.Chrom}] = append(truth[key{sg.Sample, sg.Chrom}], [2]int64{sg.Start, sg.End})
	}
	chromIdx := map[string]int{}
	for i, c := range sim.Chromosomes {
		chromIdx[c.Name] = i
	}
	called := map[key][][2]int64{}
	for _, cr := range res.Chroms {
		for _, run := range cr.Runs {
			k := key{run.Sample, chromIdx[cr.Name]}
			called[k] = append(called[k], [2]int64{run.Start, run.End})
		}
	}
	var sc simScore
	var tp, tTot, cp, cTot float64
	var xs, ys []float64
	for i, st := range sim.Samples {
		if st.Class != "focal" || st.Design != design {
			continue
		}
		sc.nFocal++
		xs = append(xs, stats[i].FROH)
		ys = append(ys, st.FRealized)
		for c := range sim.Chromosomes {
			k := key{i, c}
			for _, iv := range truth[k] {
				if iv[1]-iv[0]+1 >= 2_000_000 {
					tTot += float64(iv[1] - iv[0] + 1)
					tp += float64(overlap(iv, called[k]))
				}
			}
			for _, iv := range called[k] {
				if iv[1]-iv[0]+1 >= 2_000_000 {
					cTot += float64(iv[1] - iv[0] + 1)
					cp += float64(overlap(iv, truth[k]))
				}
			}
		}
	}
	sc.recall, sc.precision = tp/tTot, cp/cTot
	sc.r = pearson(xs, ys)
	sc.meanFROH, sc.meanF = mean(xs), mean(ys)
	return sc
}

// overlap is the number of bases of iv covered by the sorted,
// non-overlapping intervals set.
func overlap(iv [2]int64, set [][2]int64) int64 {
	var n int64
	i := sort.Search(len(set), func(i int) bool { return set[i][1] >= iv[0] })
	for ; i < len(set) && set[i][0] <= iv[1]; i++ {
		a, b := max(iv[0], set[i][0]), min(iv[1], set[i][1])
		if b >= a {
			n += b - a + 1
		}
	}
	return n
}

func mean(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

func pearson(x, y []float64) float64 {
	mx, my := mean(x), mean(y)
	var sxy, sxx, syy float64
	for i := range x {
		sxy += (x[i] - mx) * (y[i] - my)
		sxx += (x[i] - mx) * (x[i] - mx)
		syy += (y[i] - my) * (y[i] - my)
	}
	return sxy / math.Sqrt(sxx*syy)
}

// Simulated truth: gene dropping through full-sib, half-sib,
// first-cousin, parent-offspring and selfing designs (genedrop), with
// 0.1% genotype error and 0.5% missing calls, at array density (one site
// per 30 kb, U-shaped spectrum, 200 replicates) and sequence density (one
// site per 4 kb, neutral spectrum, 60 replicates; sparser than real
// sequence to keep the test within a minute of CPU). The genome is three
// chromosomes of 150, 120 and 100 cM, so realized F varies widely between
// animals (SD about 0.1 for these designs): the replicate counts are what
// it takes for the mean to sit reliably within 0.03 of the expectation.
// Expected F of each design is the pedigree value (Wright's path
// coefficients; common practice): full sib 1/4, half sib 1/8, first
// cousin 1/16, sire x daughter 1/4, one generation of selfing 1/2.
//
// Checks per detector and density: recall and precision of true
// autozygous bases in segments >= 2 Mb at least 0.95; Pearson
// r(f_roh, realized F) over all focal animals at least 0.98; mean f_roh
// of each design within 0.03 of its expected F.
func TestSimulatedTruth(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation: skipped with -short")
	}
	designs := []struct {
		d    string
		want float64
	}{
		{"full_sib", 0.25},
		{"half_sib", 0.125},
		{"first_cousin", 0.0625},
		{"parent_offspring", 0.25},
		{"selfing:1", 0.5},
	}
	densities := []struct {
		name    string
		spacing float64
		spec    genedrop.Spectrum
		reps    int
	}{
		{"array", 30_000, genedrop.SpectrumUShaped, 200},
		{"sequence", 4_000, genedrop.SpectrumNeutral, 60},
	}
	for _, dn := range densities {
		var ds []genedrop.Design
		dstr := map[string]string{} // as recorded in SampleTruth.Design
		for _, d := range designs {
			x, err := genedrop.ParseDesign(d.d)
			if err != nil {
				t.Fatal(err)
			}
			ds = append(ds, x)
			dstr[d.d] = x.String()
		}
		sim, err := genedrop.Run(genedrop.Config{
			Seed:          20261202,
			Chromosomes:   []genedrop.Chromosome{{Name: "1", LengthBP: 150_000_000, LengthCM: 150}, {Name: "2", LengthBP: 120_000_000, LengthCM: 120}, {Name: "3", LengthBP: 100_000_000, LengthCM: 100}},
			SiteSpacing:   dn.spacing,
			Spectrum:      dn.spec,
			Designs:       ds,
			Replicates:    dn.reps,
			GenotypeError: 0.001,
			MissingRate:   0.005,
		})
		if err != nil {
			t.Fatal(err)
		}
		names, contigs, bs := simBatches(t, sim)
		for _, method := range []string{MethodHMM, MethodRules} {
			cfg := DefaultConfig()
			cfg.Method = method
			cfg.Threads = 2
			if dn.name == "sequence" {
				// Counts tolerated per run must grow with density:
				// 0.1% errors and 0.5% missing over a 16 Mb run at one
				// site per 4 kb are about 2 heterozygous and 20 missing
				// calls.
				cfg.Rules.MaxHet = 8
				cfg.Rules.MaxMissing = 200
				cfg.Rules.MinSites = 100
			}
			res := detectSim(t, cfg, names, contigs, bs)
			for _, d := range designs {
				name := fmt.Sprintf("%s/%s/%s", dn.name, method, d.d)
				sc := scoreSim(sim, res, dstr[d.d])
				t.Logf("%s: n=%d recall=%.4f precision=%.4f r=%.4f mean_f_roh=%.4f mean_realized=%.4f expected=%.4f",
					name, sc.nFocal, sc.recall, sc.precision, sc.r, sc.meanFROH, sc.meanF, d.want)
				if sc.nFocal < 20 {
					t.Errorf("%s: %d focal animals, want >= 20", name, sc.nFocal)
				}
				if sc.recall < 0.95 || sc.precision < 0.95 {
					t.Errorf("%s: recall %.4f precision %.4f, want >= 0.95", name, sc.recall, sc.precision)
				}
				if sc.r < 0.98 {
					t.Errorf("%s: r(f_roh, realized) = %.4f, want >= 0.98", name, sc.r)
				}
				if math.Abs(sc.meanFROH-d.want) > 0.03 {
					t.Errorf("%s: mean f_roh %.4f, expected F %.4f", name, sc.meanFROH, d.want)
				}
			}
		}
	}
}

// Low-depth sequence with phred likelihoods (genedrop reads at mean
// depth 4 with 1% base error; GT is the most likely genotype, so many true
// heterozygotes are called homozygous and a few homozygotes heterozygous).
// The HMM reading PL should stay accurate; the numbers are reported next
// to those of the same HMM reading GT alone.
func TestSimulatedLowDepthPL(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation: skipped with -short")
	}
	var ds []genedrop.Design
	dstr := map[string]string{}
	for _, s := range []string{"full_sib", "half_sib"} {
		d, err := genedrop.ParseDesign(s)
		if err != nil {
			t.Fatal(err)
		}
		ds = append(ds, d)
		dstr[s] = d.String()
	}
	sim, err := genedrop.Run(genedrop.Config{
		Seed:        7,
		Chromosomes: []genedrop.Chromosome{{Name: "1", LengthBP: 100_000_000, LengthCM: 100}, {Name: "2", LengthBP: 80_000_000, LengthCM: 80}},
		SiteSpacing: 5_000,
		Spectrum:    genedrop.SpectrumNeutral,
		Designs:     ds,
		Replicates:  25,
		Depth:       4,
	})
	if err != nil {
		t.Fatal(err)
	}
	names, contigs, bs := simBatches(t, sim)
	withPL := detectSim(t, DefaultConfig(), names, contigs, bs)
	for _, b := range bs {
		b.PL, b.HasPL = nil, nil
	}
	gtOnly := detectSim(t, DefaultConfig(), names, contigs, bs)
	for _, d := range []string{"full_sib", "half_sib"} {
		a := scoreSim(sim, withPL, dstr[d])
		g := scoreSim(sim, gtOnly, dstr[d])
		t.Logf("%s depth 4: PL recall=%.4f precision=%.4f r=%.4f mean_f_roh=%.4f realized=%.4f | GT only recall=%.4f precision=%.4f r=%.4f mean_f_roh=%.4f",
			d, a.recall, a.precision, a.r, a.meanFROH, a.meanF, g.recall, g.precision, g.r, g.meanFROH)
		if a.recall < 0.9 || a.precision < 0.9 || a.r < 0.95 {
			t.Errorf("%s: with PL recall %.4f precision %.4f r %.4f, want >= 0.9, 0.9, 0.95", d, a.recall, a.precision, a.r)
		}
	}
}

// With --fit (per-sample, per-chromosome EM of the autozygous fraction
// and the rate) the HMM stays as accurate on array-density full-sib and
// first-cousin offspring, and the fitted fractions track realized F.
func TestSimulatedFit(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation: skipped with -short")
	}
	var ds []genedrop.Design
	dstr := map[string]string{}
	for _, s := range []string{"full_sib", "first_cousin"} {
		d, _ := genedrop.ParseDesign(s)
		ds = append(ds, d)
		dstr[s] = d.String()
	}
	sim, err := genedrop.Run(genedrop.Config{
		Seed:          11,
		Chromosomes:   []genedrop.Chromosome{{Name: "1", LengthBP: 150_000_000, LengthCM: 150}, {Name: "2", LengthBP: 120_000_000, LengthCM: 120}},
		SiteSpacing:   30_000,
		Designs:       ds,
		Replicates:    30,
		GenotypeError: 0.001,
		MissingRate:   0.005,
	})
	if err != nil {
		t.Fatal(err)
	}
	names, contigs, bs := simBatches(t, sim)
	cfg := DefaultConfig()
	cfg.Fit = true
	res := detectSim(t, cfg, names, contigs, bs)
	for _, d := range []string{"full_sib", "first_cousin"} {
		sc := scoreSim(sim, res, dstr[d])
		t.Logf("fit %s: recall=%.4f precision=%.4f r=%.4f mean_f_roh=%.4f realized=%.4f", d, sc.recall, sc.precision, sc.r, sc.meanFROH, sc.meanF)
		if sc.recall < 0.95 || sc.precision < 0.95 || sc.r < 0.98 {
			t.Errorf("fit %s: recall %.4f precision %.4f r %.4f", d, sc.recall, sc.precision, sc.r)
		}
	}
	// fitted autozygous fraction (mean over chromosomes) against realized F
	var xs, ys []float64
	for i, st := range sim.Samples {
		if st.Class != "focal" {
			continue
		}
		f := 0.0
		for _, c := range res.Chroms {
			f += c.FitF[i] / float64(len(res.Chroms))
		}
		xs = append(xs, f)
		ys = append(ys, st.FRealized)
	}
	if r := pearson(xs, ys); r < 0.95 {
		t.Errorf("r(fitted fraction, realized F) = %.4f, want >= 0.95", r)
	} else {
		t.Logf("r(fitted fraction, realized F) = %.4f; summary %+v", r, res.Summary())
	}
}
