package genedrop

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"
)

// Realized coancestry averages, over replicates, to the coefficients of
// coancestry of the textbook relationships (common practice, values from
// memory, as in stats/pedigree's tests): full sibs 1/4, half sibs 1/8,
// parent and offspring 1/4, first cousins 1/16, unrelated founders 0. The
// pedigree column must give them exactly.
func TestRealizedCoancestryTextbook(t *testing.T) {
	tests := []struct {
		design, a, b string
		want         float64
	}{
		{"full_sib", "g1_buck", "g1_doe", 0.25},
		{"half_sib", "son", "daughter", 0.125},
		{"parent_offspring", "sire", "daughter", 0.25},
		{"first_cousin", "cousin1", "cousin2", 0.0625},
		{"full_sib", "sire", "dam", 0},
	}
	reps := 1000
	if testing.Short() {
		reps = 300
	}
	for k, tc := range tests {
		t.Run(tc.design+"/"+tc.a+"_"+tc.b, func(t *testing.T) {
			d, _ := ParseDesign(tc.design)
			res, err := Run(Config{Seed: uint64(500 + k), Chromosomes: tenChromosomes(), Designs: []Design{d}, Replicates: reps, NoSites: true})
			if err != nil {
				t.Fatal(err)
			}
			var pairs [][2]int
			for rep := 1; rep <= reps; rep++ {
				prefix := tc.design + "_r" + strconv.Itoa(rep) + "_"
				i, ok1 := res.Pedigree.Index(prefix + tc.a)
				j, ok2 := res.Pedigree.Index(prefix + tc.b)
				if !ok1 || !ok2 {
					t.Fatalf("replicate %d lacks %s or %s", rep, tc.a, tc.b)
				}
				pairs = append(pairs, [2]int{i, j})
			}
			truth, err := res.Pairs(pairs)
			if err != nil {
				t.Fatal(err)
			}
			var sum, sumSq float64
			for _, p := range truth {
				if math.Abs(p.Pedigree-tc.want) > 1e-12 {
					t.Fatalf("pedigree coancestry %v, want %v", p.Pedigree, tc.want)
				}
				if p.Total != p.Realized {
					t.Fatalf("total %v differs from realized %v without epochs", p.Total, p.Realized)
				}
				sum += p.Realized
				sumSq += p.Realized * p.Realized
			}
			n := float64(len(truth))
			mean := sum / n
			se := math.Sqrt(max(sumSq/n-mean*mean, 0) / n)
			t.Logf("%d pairs: mean realized coancestry %.4f (want %v, SE %.4f)", len(truth), mean, tc.want, se)
			if tc.want == 0 && sum != 0 {
				t.Errorf("unrelated founders share %v", mean)
			}
			if math.Abs(mean-tc.want) > max(4*se, 1e-12) {
				t.Errorf("mean realized coancestry %.4f, want %v (4 SE = %.4f)", mean, tc.want, 4*se)
			}
		})
	}
}

// An animal's coancestry with itself is (1 + F)/2 (common practice), here
// with its realized F; an unknown id is an error.
func TestSelfCoancestry(t *testing.T) {
	res, err := Run(smallConfig(4))
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range res.Samples {
		c, err := res.Coancestry(s.ID, s.ID)
		if err != nil {
			t.Fatal(err)
		}
		// f_realized rounds segment bounds to whole bases.
		if want := (1 + s.FRealized) / 2; math.Abs(c-want) > 1e-6 {
			t.Errorf("%s: self-coancestry %v, want (1 + %v)/2", s.ID, c, s.FRealized)
		}
	}
	if _, err := res.Coancestry("nobody", res.Samples[0].ID); !errors.Is(err, ErrUnknownSample) {
		t.Errorf("unknown id: %v", err)
	}
}

// With ancestral epochs the total coancestry adds the old sharing of
// distinct founder copies: unrelated founders Sum Share^2/Haplotypes, full
// sibs 1/4 + 3/4 of it (their alleles come from distinct founder copies
// with probability 3/4).
func TestCoancestryWithEpochs(t *testing.T) {
	reps := 400
	res, err := Run(epochConfig(31, reps, "full_sib"))
	if err != nil {
		t.Fatal(err)
	}
	var old float64
	for _, e := range res.Config.AncestralEpochs {
		old += e.ExpectedF()
	}
	for _, tc := range []struct {
		a, b string
		want float64
	}{{"sire", "dam", old}, {"g1_buck", "g1_doe", 0.25 + 0.75*old}} {
		var pairs [][2]int
		for rep := 1; rep <= reps; rep++ {
			i, _ := res.Pedigree.Index("full_sib_r" + strconv.Itoa(rep) + "_" + tc.a)
			j, _ := res.Pedigree.Index("full_sib_r" + strconv.Itoa(rep) + "_" + tc.b)
			pairs = append(pairs, [2]int{i, j})
		}
		truth, err := res.Pairs(pairs)
		if err != nil {
			t.Fatal(err)
		}
		var sum, sumSq float64
		for _, p := range truth {
			if p.Total < p.Realized {
				t.Fatalf("total %v below realized %v", p.Total, p.Realized)
			}
			sum += p.Total
			sumSq += p.Total * p.Total
		}
		n := float64(len(truth))
		mean := sum / n
		se := math.Sqrt((sumSq/n - mean*mean) / n)
		t.Logf("%s x %s: mean total coancestry %.4f (want %.4f, SE %.4f)", tc.a, tc.b, mean, tc.want, se)
		if math.Abs(mean-tc.want) > 4*se {
			t.Errorf("%s x %s: mean total coancestry %.4f, want %.4f (4 SE = %.4f)", tc.a, tc.b, mean, tc.want, 4*se)
		}
	}
}

// A closed herd gives candidate sires and dams (the last generation's
// males and females) and their pairs; realized coancestry scatters around
// the pedigree value (Mendelian sampling).
func TestHerdCandidates(t *testing.T) {
	d, _ := ParseDesign("closed_herd:4:24:3")
	res, err := Run(Config{Seed: 8, Chromosomes: tenChromosomes(), Designs: []Design{d}, Replicates: 2, NoSites: true})
	if err != nil {
		t.Fatal(err)
	}
	sires, dams := res.HerdCandidates(2)
	if len(sires) != 12 || len(dams) != 12 {
		t.Fatalf("%d sires and %d dams, want 12 and 12", len(sires), len(dams))
	}
	for _, i := range append(sires, dams...) {
		if s := res.Samples[i]; s.Replicate != 2 || s.Class != "herd_generation_4" {
			t.Fatalf("candidate %s from replicate %d, class %s", s.ID, s.Replicate, s.Class)
		}
	}
	pairs := res.HerdPairs()
	if len(pairs) != 2*12*12 {
		t.Fatalf("%d herd pairs, want 288", len(pairs))
	}
	truth, err := res.Pairs(pairs)
	if err != nil {
		t.Fatal(err)
	}
	var sx, sy, sxx, syy, sxy float64
	for _, p := range truth {
		sx += p.Pedigree
		sy += p.Realized
		sxx += p.Pedigree * p.Pedigree
		syy += p.Realized * p.Realized
		sxy += p.Pedigree * p.Realized
	}
	n := float64(len(truth))
	r := (sxy/n - sx/n*sy/n) / math.Sqrt((sxx/n-sx*sx/n/n)*(syy/n-sy*sy/n/n))
	t.Logf("closed herd: mean pedigree %.4f, mean realized %.4f, correlation %.3f", sx/n, sy/n, r)
	if r < 0.5 || math.Abs(sx/n-sy/n) > 0.05 {
		t.Errorf("pedigree and realized coancestry disagree: means %.4f and %.4f, r = %.3f", sx/n, sy/n, r)
	}
	if s, d := res.HerdCandidates(3); s != nil || d != nil {
		t.Error("candidates for a replicate that does not exist")
	}
	var b bytes.Buffer
	if err := WritePairsTruth(&b, res, truth[:2]); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	if len(lines) != 3 || lines[0] != "sire\tdam\tcoancestry_pedigree\tcoancestry_realized\tcoancestry_total" {
		t.Errorf("pairs table:\n%s", b.String())
	}
}
