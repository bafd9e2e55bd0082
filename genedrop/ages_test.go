package genedrop

import (
	"bytes"
	"io"
	"math"
	"strconv"
	"testing"
)

// tenChromosomes: ten 150 cM chromosomes at 1 cM/Mb keep the spread of
// realized shares small.
func tenChromosomes() []Chromosome {
	var g []Chromosome
	for c := 1; c <= 10; c++ {
		g = append(g, Chromosome{Name: strconv.Itoa(c), LengthBP: 150e6, LengthCM: 150})
	}
	return g
}

// Ages of pedigree autozygosity for the textbook loops (common practice:
// the common ancestor of a selfed individual's two copies is its single
// parent, one generation back; of full sibs' offspring a grandparent, two
// back; of first cousins' offspring a great-grandparent, three back) and
// their mean share (pedigree F: 1/2, 1/4, 1/16; Wright 1922, values from
// memory and checked in stats/pedigree).
func TestAgesTextbookLoops(t *testing.T) {
	tests := []struct {
		design string
		age    float64
		f      float64
	}{
		{"selfing", 1, 0.5},
		{"full_sib", 2, 0.25},
		{"half_sib", 2, 0.125},
		{"first_cousin", 3, 0.0625},
		{"parent_offspring", 1.5, 0.25}, // meioses 1 and 2
	}
	reps := 600
	if testing.Short() {
		reps = 200
	}
	for k, tc := range tests {
		t.Run(tc.design, func(t *testing.T) {
			d, err := ParseDesign(tc.design)
			if err != nil {
				t.Fatal(err)
			}
			res, err := Run(Config{Seed: uint64(300 + k), Chromosomes: tenChromosomes(), Designs: []Design{d},
				Replicates: reps, NoSites: true, Ages: true})
			if err != nil {
				t.Fatal(err)
			}
			var sum, sumWithin float64
			n := 0
			for i, s := range res.Samples {
				a := res.Ages[i]
				if math.Abs(a.Pedigree-s.FRealized) > 1e-15 || a.Ancestral != 0 || a.Total != a.Pedigree {
					t.Fatalf("%s: pedigree share %v, f_realized %v, ancestral %v", s.ID, a.Pedigree, s.FRealized, a.Ancestral)
				}
				if s.Class != "focal" {
					continue
				}
				sum += a.Pedigree
				sumWithin += a.Within[0] // within 2 generations
				n++
			}
			nseg := 0
			for _, g := range res.AgedSegments {
				if res.Samples[g.Sample].Class != "focal" {
					continue
				}
				nseg++
				if g.Source != SourcePedigree || g.Generations() != tc.age {
					t.Fatalf("%s: segment of age %v from %v, want %v", res.Samples[g.Sample].ID, g.Generations(), g.Source, tc.age)
				}
			}
			mean := sum / float64(n)
			t.Logf("%d focal animals, %d segments: mean share %.4f (want %v)", n, nseg, mean, tc.f)
			if math.Abs(mean-tc.f) > 0.015 {
				t.Errorf("mean autozygous share %v, want %v", mean, tc.f)
			}
			if tc.age <= 2 && sumWithin != sum || tc.age > 2 && sumWithin != 0 {
				t.Errorf("within-2-generations share %v against total %v for age %v", sumWithin, sum, tc.age)
			}
		})
	}
}

// censoredMeanCM estimates the mean length (cM) of exponential segment
// lengths cut by chromosome ends: total length over the number of
// segments that end inside the chromosome (maximum likelihood for
// right-censored exponential data; a segment starting at position 0 is
// exponential too, by the memoryless property).
func censoredMeanCM(res *Result, keep func(AgedSegment) bool) (mean float64, n int) {
	var total float64
	for _, g := range res.AgedSegments {
		if !keep(g) {
			continue
		}
		total += g.EndCM - g.StartCM
		if g.EndCM < res.Chromosomes[g.Chrom].LengthCM {
			n++
		}
	}
	return total / float64(n), n
}

// Pedigree stretches of a full-sib mating end at any crossover of the four
// meioses of the loop: exponential lengths with mean 100/4 = 25 cM
// (Haldane 1919; common practice, e.g. Fisher 1949's junctions).
func TestAgesPedigreeSegmentLength(t *testing.T) {
	d, _ := ParseDesign("full_sib")
	res, err := Run(Config{Seed: 9, Chromosomes: tenChromosomes(), Designs: []Design{d}, Replicates: 800, NoSites: true, Ages: true})
	if err != nil {
		t.Fatal(err)
	}
	mean, n := censoredMeanCM(res, func(g AgedSegment) bool { return res.Samples[g.Sample].Class == "focal" })
	se := 25 / math.Sqrt(float64(n))
	t.Logf("%d segments: mean length %.2f cM (want 25, SE %.2f)", n, mean, se)
	if math.Abs(mean-25) > 4*se {
		t.Errorf("mean full-sib segment length %.2f cM, want 25 (4 SE = %.2f)", mean, 4*se)
	}
}

func epochConfig(seed uint64, reps int, designs ...string) Config {
	var ds []Design
	for _, s := range designs {
		d, err := ParseDesign(s)
		if err != nil {
			panic(err)
		}
		ds = append(ds, d)
	}
	return Config{
		Seed: seed, Chromosomes: tenChromosomes(), Designs: ds, Replicates: reps, NoSites: true,
		AncestralEpochs: []Epoch{{8, 15, 0.3}, {32, 12, 0.3}, {128, 4, 0.3}},
	}
}

// Ancient sharing through the ancestral epochs: in unrelated founders the
// shared stretches of epoch g have exponential lengths with mean 100/(2g)
// cM (two independent copies, g meioses each side: the model's own
// definition, checked by the censored estimate), their age is g, and the
// mean share per epoch is Share^2/Haplotypes (probability that both copies
// copy the epoch and the same old haplotype at a position).
func TestAncestralEpochs(t *testing.T) {
	reps := 300
	cfg := epochConfig(21, reps, "full_sib")
	res, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	for e, ep := range res.Config.AncestralEpochs {
		mean, n := censoredMeanCM(res, func(g AgedSegment) bool {
			return g.Epoch == e && res.Samples[g.Sample].Class == "founder"
		})
		want := 100 / (2 * float64(ep.Generations))
		se := want / math.Sqrt(float64(n))
		t.Logf("epoch %v: %d founder segments, mean length %.3f cM (want %.3f, SE %.3f)", ep, n, mean, want, se)
		if n < 100 || math.Abs(mean-want) > 4*se {
			t.Errorf("epoch %v: mean length %.3f cM over %d segments, want %.3f (4 SE = %.3f)", ep, mean, n, want, 4*se)
		}
	}
	var wantF float64
	for _, ep := range res.Config.AncestralEpochs {
		wantF += ep.ExpectedF()
	}
	var sum float64
	n := 0
	for i, s := range res.Samples {
		if s.Class != "founder" {
			continue
		}
		if s.FRealized != 0 || res.Ages[i].Pedigree != 0 {
			t.Fatalf("founder %s has pedigree autozygosity", s.ID)
		}
		sum += res.Ages[i].Ancestral
		n++
	}
	for _, g := range res.AgedSegments {
		if res.Samples[g.Sample].Class == "founder" && (g.Source != SourceAncestral ||
			g.Generations() != float64(res.Config.AncestralEpochs[g.Epoch].Generations)) {
			t.Fatalf("founder segment %+v: want ancestral of its epoch's age", g)
		}
	}
	mean := sum / float64(n)
	t.Logf("%d founders: mean ancient share %.4f, expected %.4f", n, mean, wantF)
	if math.Abs(mean-wantF) > 0.1*wantF {
		t.Errorf("founders' mean ancient share %.4f, want %.4f within 10%%", mean, wantF)
	}
	// In the focal animals the pedigree part keeps age 2 and the
	// within-2-generations share equals the pedigree share; ancestral
	// stretches are older (epoch + the pedigree meioses below the founders).
	for i, s := range res.Samples {
		if s.Class != "focal" {
			continue
		}
		a := res.Ages[i]
		if a.Within[0] != a.Pedigree || a.Within[len(AgeCuts)-1] != a.Total || math.Abs(a.Total-a.Pedigree-a.Ancestral) > 1e-12 {
			t.Fatalf("%s: ages %+v", s.ID, a)
		}
	}
	for _, g := range res.AgedSegments {
		if res.Samples[g.Sample].Class == "focal" && g.Source == SourceAncestral {
			if want := res.Config.AncestralEpochs[g.Epoch].Generations + 2; g.Meioses != [2]int{want, want} {
				t.Fatalf("focal ancestral segment meioses %v, want %d each side", g.Meioses, want)
			}
		}
	}
}

// With sites, every site inside a founder's ancestral stretch is
// homozygous in the true genotypes: the shared old haplotype carries the
// same alleles in both copies.
func TestAncestralStretchesAreHomozygous(t *testing.T) {
	cfg := epochConfig(5, 3, "half_sib")
	cfg.Chromosomes = []Chromosome{{"1", 60e6, 60}, {"2", 40e6, 40}}
	cfg.NoSites = false
	cfg.SiteSpacing = 5000
	res, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	bySample := map[[2]int][]AgedSegment{}
	for _, g := range res.AgedSegments {
		k := [2]int{g.Sample, g.Chrom}
		bySample[k] = append(bySample[k], g)
	}
	checked, het := 0, 0
	err = res.ForEachSite(func(s *Site) error {
		for i := range res.Samples {
			for _, g := range bySample[[2]int{i, s.Chrom}] {
				if s.Pos >= g.Start && s.Pos <= g.End {
					checked++
					if s.True[i] == 1 {
						het++
					}
				}
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%d genotypes inside aged stretches, %d heterozygous", checked, het)
	if checked < 1000 || het != 0 {
		t.Errorf("%d of %d true genotypes inside autozygous stretches are heterozygous", het, checked)
	}
}

// Same seed, same everything (epochs, ages, sites, writers).
func TestAgesDeterminism(t *testing.T) {
	run := func() []byte {
		cfg := epochConfig(77, 2, "first_cousin", "closed_herd:3:12:2")
		cfg.Chromosomes = []Chromosome{{"1", 30e6, 30}, {"2", 20e6, 25}}
		cfg.NoSites = false
		cfg.SiteSpacing = 20000
		res, err := Run(cfg)
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		for _, fn := range []func(io.Writer, *Result) error{WriteVCF, WriteSamplesTruth, WriteSegmentsTruth} {
			if err := fn(&b, res); err != nil {
				t.Fatal(err)
			}
		}
		pairs, err := res.Pairs(res.HerdPairs())
		if err != nil {
			t.Fatal(err)
		}
		if len(pairs) == 0 {
			t.Fatal("no herd pairs")
		}
		if err := WritePairsTruth(&b, res, pairs); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	a, b := run(), run()
	if !bytes.Equal(a, b) {
		t.Error("two runs with the same seed differ")
	}
	// The age truth does not depend on whether sites are drawn.
	cfg := epochConfig(77, 2, "first_cousin", "closed_herd:3:12:2")
	cfg.Chromosomes = []Chromosome{{"1", 30e6, 30}, {"2", 20e6, 25}}
	noSites, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	cfg.NoSites, cfg.SiteSpacing = false, 20000
	withSites, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	if len(noSites.AgedSegments) != len(withSites.AgedSegments) {
		t.Fatalf("%d aged stretches without sites, %d with", len(noSites.AgedSegments), len(withSites.AgedSegments))
	}
	for k, g := range noSites.AgedSegments {
		h := withSites.AgedSegments[k]
		h.NSites = 0
		if g != h {
			t.Fatalf("aged stretch %d differs with sites: %+v against %+v", k, g, h)
		}
	}
	if !bytes.Contains(a, []byte("\tancestral\tNA\t")) || !bytes.Contains(a, []byte("\tpedigree\t")) {
		t.Error("segments table lacks ancestral or pedigree rows")
	}
}

// Ages must not change what the run without them simulates: the same
// pedigree truth, genotypes and merged segments.
func TestAgesLeaveTheSimulationUnchanged(t *testing.T) {
	cfg := smallConfig(3)
	plain, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	cfg.Ages = true
	aged, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	var a, b bytes.Buffer
	WriteVCF(&a, plain)
	WriteVCF(&b, aged)
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Error("ages changed the VCF")
	}
	if len(plain.Segments) != len(aged.Segments) {
		t.Fatalf("ages changed the segments: %d against %d", len(plain.Segments), len(aged.Segments))
	}
	var sumPlain, sumAged int64
	for k := range plain.Segments {
		if plain.Segments[k] != aged.Segments[k] {
			t.Fatalf("segment %d differs", k)
		}
		sumPlain += plain.Segments[k].LengthBP()
	}
	for _, g := range aged.AgedSegments {
		sumAged += g.LengthBP()
	}
	if sumPlain != sumAged || len(aged.AgedSegments) < len(aged.Segments) {
		t.Errorf("aged stretches cover %d bp in %d rows, merged segments %d bp in %d", sumAged, len(aged.AgedSegments), sumPlain, len(plain.Segments))
	}
}

// In a closed herd every pedigree stretch's common ancestor sits exactly
// Meioses[0] generations above the animal through its sire and Meioses[1]
// through its dam, and the shares by age grow with the age limit.
func TestAgesAncestorsInPedigree(t *testing.T) {
	d, _ := ParseDesign("closed_herd:12:30:3")
	res, err := Run(Config{Seed: 12, Chromosomes: tenChromosomes()[:4], Designs: []Design{d}, NoSites: true, Ages: true})
	if err != nil {
		t.Fatal(err)
	}
	p := res.Pedigree
	// above reports whether anc is an ancestor of i exactly k meioses up.
	var above func(i, anc, k int) bool
	above = func(i, anc, k int) bool {
		if k == 0 {
			return i == anc
		}
		for _, par := range []int{p.Sire(i), p.Dam(i)} {
			if par >= 0 && above(par, anc, k-1) {
				return true
			}
		}
		return false
	}
	n := 0
	for _, g := range res.AgedSegments {
		if g.Source != SourcePedigree {
			t.Fatalf("ancestral stretch without epochs: %+v", g)
		}
		i := g.Sample
		if g.Meioses[0] < 1 || g.Meioses[1] < 1 || !above(p.Sire(i), g.Ancestor, g.Meioses[0]-1) || !above(p.Dam(i), g.Ancestor, g.Meioses[1]-1) {
			t.Fatalf("%s: ancestor %s not %v meioses up: %+v", res.Samples[i].ID, res.Samples[g.Ancestor].ID, g.Meioses, g)
		}
		n++
	}
	for i, a := range res.Ages {
		for k := 1; k < len(AgeCuts); k++ {
			if a.Within[k] < a.Within[k-1] {
				t.Fatalf("%s: shares by age decrease: %v", res.Samples[i].ID, a.Within)
			}
		}
		if a.Within[len(AgeCuts)-1] != a.Total || a.Total != res.Samples[i].FRealized {
			t.Fatalf("%s: within 256 generations %v, total %v, f_realized %v", res.Samples[i].ID, a.Within[len(AgeCuts)-1], a.Total, res.Samples[i].FRealized)
		}
	}
	if n < 100 {
		t.Errorf("only %d pedigree stretches in a 12-generation closed herd", n)
	}
}
