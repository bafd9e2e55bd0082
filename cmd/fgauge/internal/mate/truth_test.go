package mate

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"fgauge/genedrop"
)

// pearson is the sample correlation of x and y (common practice).
func pearson(x, y []float64) float64 {
	var mx, my float64
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= float64(len(x))
	my /= float64(len(y))
	var sxy, sxx, syy float64
	for i := range x {
		dx, dy := x[i]-mx, y[i]-my
		sxy += dx * dy
		sxx += dx * dx
		syy += dy * dy
	}
	return sxy / math.Sqrt(sxx*syy)
}

// truthHerd simulates a closed herd with the gene-drop simulator and
// returns the simulation and its VCF.
func truthHerd(t *testing.T, dir string, cfg genedrop.Config) (*genedrop.Result, string) {
	t.Helper()
	res, err := genedrop.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	vcf := filepath.Join(dir, "herd.vcf.gz")
	if err := genedrop.WriteVCFBGZF(vcf, res); err != nil {
		t.Fatal(err)
	}
	return res, vcf
}

// TestSimulatedTruth: in a simulated closed herd (simulation truth we
// control: package genedrop drops founder-labelled genomes through the
// pedigree), the genomic coancestry of the last generation's sire x dam
// pairs follows their realized coancestry (the share of the genome where a
// random allele of each descends from the same founder copy) more closely
// than pedigree coancestry does, because it sees Mendelian sampling. The
// shared-segment coancestry (probability scale) follows it too, and on its
// scale: mean within 0.02 and mean absolute difference below 0.02 (its
// base is recent ancestry, the truth's the simulated founders, whose own
// sharing through the ancestral pool is in stretches far below 3 Mb). The
// pedigree column must equal the simulator's own pedigree expectation.
// Seeds 1-4 gave genomic 0.961-0.994, pedigree 0.855-0.891, segments
// 0.998-0.999 (mean absolute difference 0.005-0.009).
func TestSimulatedTruth(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates a closed herd")
	}
	var chroms []genedrop.Chromosome
	for c := 1; c <= 10; c++ {
		chroms = append(chroms, genedrop.Chromosome{Name: strconv.Itoa(c), LengthBP: 100_000_000, LengthCM: 100})
	}
	dir := t.TempDir()
	// 5 generations of 40 animals bred from 4 random sires each; 0.2%
	// genotype errors, 1% missing calls.
	sim, vcf := truthHerd(t, dir, genedrop.Config{
		Seed: 18, Chromosomes: chroms, SiteSpacing: 40_000, MinMAF: 0.02, GenotypeError: 0.002, MissingRate: 0.01,
		Designs: []genedrop.Design{{Kind: "closed_herd", Generations: 5, HerdSize: 40, Sires: 4}},
	})
	si, di := sim.HerdCandidates(1)
	if len(si) < 5 || len(di) < 5 {
		t.Fatalf("%d sires, %d dams in the last generation", len(si), len(di))
	}
	ids := func(ix []int) []string {
		var out []string
		for _, i := range ix {
			out = append(out, sim.Samples[i].ID)
		}
		return out
	}
	res, err := Run(context.Background(), Config{
		Input: vcf, Sires: ids(si), Dams: ids(di), OutDir: filepath.Join(dir, "out"),
		MaxProgenyF: math.NaN(), Pedigree: sim.Pedigree, Threads: 2, Version: "test", Segments: true,
	})
	if err != nil {
		t.Fatal(err)
	}
	var pairs [][2]int
	for _, s := range si {
		for _, d := range di {
			pairs = append(pairs, [2]int{s, d})
		}
	}
	truth, err := sim.Pairs(pairs)
	if err != nil {
		t.Fatal(err)
	}
	realized := make([]float64, len(truth))
	for k, p := range truth {
		realized[k] = p.Realized
		if got := res.Pedigree.V[k]; math.Abs(got-p.Pedigree) > 1e-12 {
			t.Fatalf("pair %d: coancestry_pedigree %v, simulator's pedigree expectation %v", k, got, p.Pedigree)
		}
	}
	rG := pearson(res.Genomic.V, realized)
	rP := pearson(res.Pedigree.V, realized)
	rS := pearson(res.Segments.V, realized)
	var mS, mR, mae float64
	for k := range realized {
		mS += res.Segments.V[k]
		mR += realized[k]
		mae += math.Abs(res.Segments.V[k] - realized[k])
	}
	n := float64(len(realized))
	t.Logf("closed herd, %d pairs, %d sites: correlation with realized coancestry: genomic %.3f, pedigree %.3f, segments %.3f (mean %.4f against realized %.4f, mean absolute difference %.4f)",
		len(truth), res.Info.SitesUsed, rG, rP, rS, mS/n, mR/n, mae/n)
	if !(rG > rP) || rG < 0.85 {
		t.Errorf("genomic %.3f should beat pedigree %.3f and reach 0.85", rG, rP)
	}
	if !(rS > rP) || rS < 0.95 || math.Abs(mS-mR)/n > 0.02 || mae/n > 0.02 {
		t.Errorf("segments: correlation %.3f (pedigree %.3f), mean %.4f against %.4f, mean absolute difference %.4f", rS, rP, mS/n, mR/n, mae/n)
	}
	// Planned on coancestry_segments: progeny_f is that column, and the
	// plan's mean of it is no higher than the genomic plan's (both are
	// optimal for their own measure under the same limits).
	seg, err := Run(context.Background(), Config{
		Input: vcf, Sires: ids(si), Dams: ids(di), OutDir: filepath.Join(dir, "out_segments"),
		MaxProgenyF: math.NaN(), Threads: 2, Version: "test", Segments: true, PlanOn: PlanSegments,
	})
	if err != nil {
		t.Fatal(err)
	}
	for k := range seg.ProgenyF.V {
		if seg.ProgenyF.V[k] != seg.Segments.V[k] || seg.Segments.V[k] != res.Segments.V[k] {
			t.Fatalf("pair %d: progeny_f %v, coancestry_segments %v (first run %v)", k, seg.ProgenyF.V[k], seg.Segments.V[k], res.Segments.V[k])
		}
	}
	if a, b := *seg.Info.Plan.MeanCoancestrySegments, *res.Info.Plan.MeanCoancestrySegments; !(a <= b+1e-12) || a != seg.Info.Plan.MeanProgenyF {
		t.Errorf("plan on segments: mean %v, genomic plan's segment mean %v, progeny_f mean %v", a, b, seg.Info.Plan.MeanProgenyF)
	}
	os.RemoveAll(dir)
}
