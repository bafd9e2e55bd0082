package genedrop

import (
	"bytes"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fgauge/genmap"
	"fgauge/stats/pedigree"
	"fgauge/vcfscan"
)

// Gene dropping is unbiased for pedigree F: the mean realized autozygous
// share over replicates must match the pedigree inbreeding coefficient
// (common practice: F is the probability that the two alleles at a locus
// are identical by descent, Malécot 1948). Expected values are the textbook
// ones checked in stats/pedigree.
func TestGeneDropMatchesPedigreeF(t *testing.T) {
	tests := []struct {
		design string
		wantF  float64
	}{
		{"full_sib", 0.25},
		{"full_sib:2", 0.375},
		{"half_sib", 0.125},
		{"first_cousin", 0.0625},
		{"parent_offspring", 0.25},
		{"selfing:3", 0.875},
	}
	// Ten 150 cM chromosomes keep the spread of realized F small (SD about
	// 0.08 for F = 1/4), so 0.01 is more than 5 standard errors.
	reps := 3000
	if testing.Short() {
		reps = 1000
	}
	var genome []Chromosome
	for c := 1; c <= 10; c++ {
		genome = append(genome, Chromosome{Name: strconv.Itoa(c), LengthBP: 150e6, LengthCM: 150})
	}
	for k, tc := range tests {
		t.Run(tc.design, func(t *testing.T) {
			d, err := ParseDesign(tc.design)
			if err != nil {
				t.Fatal(err)
			}
			res, err := Run(Config{
				Seed:        uint64(100 + k),
				Chromosomes: genome,
				Designs:     []Design{d},
				Replicates:  reps,
				NoSites:     true,
			})
			if err != nil {
				t.Fatal(err)
			}
			var sum float64
			n := 0
			for _, s := range res.Samples {
				if s.Class != "focal" {
					continue
				}
				if math.Abs(s.FPedigree-tc.wantF) > 1e-12 {
					t.Fatalf("%s: pedigree F %v, want %v", s.ID, s.FPedigree, tc.wantF)
				}
				sum += s.FRealized
				n++
			}
			if n != reps {
				t.Fatalf("found %d focal animals, want %d", n, reps)
			}
			mean := sum / float64(n)
			t.Logf("%d replicates: mean realized %.4f, pedigree F %v", n, mean, tc.wantF)
			if math.Abs(mean-tc.wantF) > 0.01 {
				t.Errorf("mean realized autozygosity %v, pedigree F %v (tolerance 0.01)", mean, tc.wantF)
			}
			for _, s := range res.Samples {
				if s.Class == "founder" && s.FRealized != 0 {
					t.Errorf("founder %s has autozygosity %v", s.ID, s.FRealized)
				}
			}
		})
	}
}

// The number of crossovers per meiosis is Poisson with mean equal to the
// genetic length in Morgans (Haldane 1919; common practice).
func TestCrossoverCount(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for _, lengthCM := range []float64{50, 100, 250} {
		const meioses = 40000
		var sum, sumSq float64
		var buf []float64
		for k := 0; k < meioses; k++ {
			buf = Crossovers(rng, lengthCM, buf)
			n := float64(len(buf))
			sum += n
			sumSq += n * n
			for i := 1; i < len(buf); i++ {
				if buf[i] <= buf[i-1] || buf[i] >= lengthCM {
					t.Fatalf("crossovers not increasing within the chromosome: %v", buf)
				}
			}
		}
		mean := sum / meioses
		variance := sumSq/meioses - mean*mean
		want := lengthCM / 100
		se := math.Sqrt(want / meioses)
		if math.Abs(mean-want) > 4*se {
			t.Errorf("%v cM: mean crossovers %v, want %v (4 SE = %v)", lengthCM, mean, want, 4*se)
		}
		if math.Abs(variance-want)/want > 0.05 {
			t.Errorf("%v cM: crossover variance %v, Poisson wants %v", lengthCM, variance, want)
		}
	}
}

// Haldane's map function r = (1 - exp(-2d))/2 (Haldane 1919; common
// practice; at d = 0.5 M, r = 0.3161). Simulated gametes recombine between
// two loci d Morgans apart with that frequency.
func TestHaldaneRoundTrip(t *testing.T) {
	if got := HaldaneR(0.5); math.Abs(got-0.31606) > 1e-5 {
		t.Errorf("HaldaneR(0.5) = %v, want 0.31606", got)
	}
	rng := rand.New(rand.NewPCG(2, 2))
	// Two parental haplotypes labelled 0 and 1 on a 300 cM chromosome.
	a := []seg{{End: 300, Label: 0}}
	b := []seg{{End: 300, Label: 1}}
	at := func(h []seg, cm float64) int32 {
		for _, s := range h {
			if cm < s.End {
				return s.Label
			}
		}
		return -1
	}
	for _, d := range []float64{0.01, 0.1, 0.25, 0.5, 1, 2} {
		const meioses = 30000
		x0 := 20.0
		x1 := x0 + d*100
		rec := 0
		for k := 0; k < meioses; k++ {
			g := gamete(rng, a, b, 300, nil)
			if at(g, x0) != at(g, x1) {
				rec++
			}
		}
		r := float64(rec) / meioses
		want := HaldaneR(d)
		se := math.Sqrt(want * (1 - want) / meioses)
		if math.Abs(r-want) > 4*se+1e-4 {
			t.Errorf("d = %v M: recombination fraction %v, Haldane %v (4 SE = %v)", d, r, want, 4*se)
		}
		if back := HaldaneD(want); math.Abs(back-d) > 1e-12 {
			t.Errorf("HaldaneD(HaldaneR(%v)) = %v", d, back)
		}
	}
}

func smallConfig(seed uint64) Config {
	fs, _ := ParseDesign("full_sib")
	po, _ := ParseDesign("parent_offspring")
	herd, _ := ParseDesign("closed_herd:4:12:2")
	return Config{
		Seed:          seed,
		Chromosomes:   []Chromosome{{"1", 20e6, 25}, {"2", 10e6, 12}},
		SiteSpacing:   20000,
		Designs:       []Design{fs, po, herd},
		GenotypeError: 0.002,
		MissingRate:   0.01,
	}
}

// Same seed, same bytes; another seed, other bytes.
func TestDeterminism(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, seed uint64) []byte {
		res, err := Run(smallConfig(seed))
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(dir, name)
		if err := WriteVCFBGZF(path, res); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		tbi, err := os.ReadFile(path + ".tbi")
		if err != nil {
			t.Fatal(err)
		}
		return append(b, tbi...)
	}
	a := write("a.vcf.gz", 7)
	b := write("b.vcf.gz", 7)
	c := write("c.vcf.gz", 8)
	if !bytes.Equal(a, b) {
		t.Error("same seed gave different VCF bytes")
	}
	if bytes.Equal(a, c) {
		t.Error("different seeds gave identical VCF bytes")
	}
}

// Without observation noise, a sample's genotypes are homozygous at every
// site inside its autozygous segments, and the plain and BGZF writers
// carry the same text.
func TestAutozygousSegmentsAreHomozygous(t *testing.T) {
	cfg := smallConfig(3)
	cfg.GenotypeError, cfg.MissingRate = 0, 0
	res, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	type key struct{ sample, chrom int }
	segs := map[key][]Segment{}
	for _, s := range res.Segments {
		k := key{s.Sample, s.Chrom}
		segs[k] = append(segs[k], s)
	}
	if len(res.Segments) == 0 {
		t.Fatal("no autozygous segments in a pedigree with close inbreeding")
	}
	var inside, hets int
	var hetOutside, outside int
	err = res.ForEachSite(func(s *Site) error {
		for i, g := range s.GT {
			if g != s.True[i] {
				t.Fatalf("observed %v != true %v without noise", g, s.True[i])
			}
			in := false
			for _, sg := range segs[key{i, s.Chrom}] {
				if s.Pos >= sg.Start && s.Pos <= sg.End {
					in = true
				}
			}
			if in {
				inside++
				if g == vcfscan.Heterozygous {
					hets++
				}
			} else {
				outside++
				if g == vcfscan.Heterozygous {
					hetOutside++
				}
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if hets != 0 {
		t.Errorf("%d heterozygous calls among %d inside autozygous segments", hets, inside)
	}
	if outside == 0 || float64(hetOutside)/float64(outside) < 0.1 {
		t.Errorf("heterozygosity outside segments %d/%d is implausibly low", hetOutside, outside)
	}
	var plain bytes.Buffer
	if err := WriteVCF(&plain, res); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(plain.String(), "##fileformat=VCFv4.3\n") {
		t.Errorf("VCF does not start with the fileformat line")
	}
	lines := strings.Count(plain.String(), "\n")
	nsites := res.NumSites(0) + res.NumSites(1)
	if want := nsites + 1 + 4 + len(res.Chromosomes); lines != want {
		t.Errorf("VCF has %d lines, want %d", lines, want)
	}
}

// Low-depth reads: PL is 0 for the called genotype, DP 0 means missing,
// and calls at high depth nearly always equal the truth.
func TestReadsAndLikelihoods(t *testing.T) {
	for _, tc := range []struct {
		depth      float64
		minConcord float64
	}{{2, 0.6}, {30, 0.99}} {
		cfg := smallConfig(5)
		cfg.MissingRate, cfg.GenotypeError = 0, 0
		cfg.Depth = tc.depth
		cfg.SiteSpacing = 50000
		res, err := Run(cfg)
		if err != nil {
			t.Fatal(err)
		}
		var called, agree, missing, n int
		var dpSum float64
		err = res.ForEachSite(func(s *Site) error {
			for i, g := range s.GT {
				n++
				dpSum += float64(s.DP[i])
				if s.DP[i] == 0 {
					if g != vcfscan.Missing {
						t.Fatalf("DP 0 but GT %v", g)
					}
					missing++
					continue
				}
				if s.PL[3*i+int(g)] != 0 {
					t.Fatalf("called genotype %v has PL %v", g, s.PL[3*i:3*i+3])
				}
				called++
				if g == s.True[i] {
					agree++
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		if mean := dpSum / float64(n); math.Abs(mean-tc.depth) > 0.05*tc.depth+0.05 {
			t.Errorf("depth %v: mean DP %v", tc.depth, mean)
		}
		if c := float64(agree) / float64(called); c < tc.minConcord {
			t.Errorf("depth %v: concordance %v below %v", tc.depth, c, tc.minConcord)
		}
		// Share of DP = 0 is exp(-depth) (Poisson; common practice).
		if got, want := float64(missing)/float64(n), math.Exp(-tc.depth); math.Abs(got-want) > 0.02 {
			t.Errorf("depth %v: share with no reads %v, want %v", tc.depth, got, want)
		}
	}
}

// Observation noise hits the configured rates.
func TestErrorAndMissingRates(t *testing.T) {
	cfg := smallConfig(9)
	cfg.GenotypeError, cfg.MissingRate = 0.05, 0.1
	res, err := Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	var n, miss, wrong, nonMiss int
	res.ForEachSite(func(s *Site) error {
		for i, g := range s.GT {
			n++
			if g == vcfscan.Missing {
				miss++
				continue
			}
			nonMiss++
			if g != s.True[i] {
				wrong++
			}
		}
		return nil
	})
	if got := float64(miss) / float64(n); math.Abs(got-0.1) > 0.01 {
		t.Errorf("missing share %v, want 0.1", got)
	}
	if got := float64(wrong) / float64(nonMiss); math.Abs(got-0.05) > 0.01 {
		t.Errorf("error share %v, want 0.05", got)
	}
}

// A pedigree from a file runs like a design, and replicates get suffixes.
func TestPedigreeInputAndReplicates(t *testing.T) {
	ped, err := pedigree.Read(strings.NewReader("id\tsire\tdam\nx\tb\tg\nb\ts\td\ng\ts\td\n"), "sibs.tsv")
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(Config{Seed: 1, Pedigree: ped, Replicates: 3, NoSites: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Samples) != 15 {
		t.Fatalf("%d samples, want 15", len(res.Samples))
	}
	i, ok := res.Pedigree.Index("x_r3")
	if !ok {
		t.Fatal("x_r3 missing")
	}
	if s := res.Samples[i]; s.FPedigree != 0.25 || s.Replicate != 3 || s.Class != "non_founder" {
		t.Errorf("x_r3 truth = %+v", s)
	}
	if err := res.ForEachSite(func(*Site) error { return nil }); err != ErrNoSites {
		t.Errorf("ForEachSite without sites: %v", err)
	}
}

// A genetic map applies by the rules of package genmap, the same reader
// the scan uses: its chromosome names match with or without "chr", and
// genetic positions count from the map's value at position 0 (values
// worked by hand from the three points: before the first point and after
// the last the nearest slope, 9.5 cM / 4 Mb and 2 cM / 5 Mb).
func TestGeneticMap(t *testing.T) {
	for _, name := range []string{"1", "chr1"} {
		m, err := genmap.Read(strings.NewReader("chrom\tpos\tcm\n"+name+"\t1000000\t0.5\n"+name+"\t5000000\t10\n"+name+"\t10000000\t12\n"), "map.tsv")
		if err != nil {
			t.Fatal(err)
		}
		// A chromosome with a map takes its genetic length from the map
		// (0.5 + 2.375 at the start, 12 + 0.8 at the end: 14.675 cM), and
		// the caller's settings stay as they were.
		chroms := []Chromosome{{"1", 12000000, 99}}
		res, err := Run(Config{Seed: 1, Chromosomes: chroms, Map: m, Designs: []Design{{Kind: "full_sib"}}, NoSites: true})
		if err != nil {
			t.Fatal(err)
		}
		if got := res.Chromosomes[0].LengthCM; math.Abs(got-14.675) > 1e-9 {
			t.Errorf("map naming %s: length from map %v cM, want 14.675", name, got)
		}
		if chroms[0].LengthCM != 99 {
			t.Errorf("Run changed the caller's chromosome to %v cM", chroms[0].LengthCM)
		}
		for _, tc := range []struct {
			pos int64
			cm  float64
		}{{0, 0}, {1000000, 2.375}, {3000000, 7.125}, {7500000, 12.875}, {12000000, 14.675}} {
			if got := res.bpToCM(0, tc.pos); math.Abs(got-tc.cm) > 1e-9 {
				t.Errorf("bpToCM(%d) = %v, want %v", tc.pos, got, tc.cm)
			}
			if back := res.cmToBP(0, tc.cm); math.Abs(back-float64(tc.pos)) > 1e-3 {
				t.Errorf("cmToBP(%v) = %v, want %d", tc.cm, back, tc.pos)
			}
		}
	}
}

// In a closed herd every animal's realized autozygosity has expectation
// equal to its own pedigree F, so their averages over many replicates agree
// (common practice: gene dropping is unbiased for pedigree F, MacCluer et
// al. 1986, J Hered 77:157).
func TestGeneDropClosedHerd(t *testing.T) {
	d, err := ParseDesign("closed_herd:6:12:2")
	if err != nil {
		t.Fatal(err)
	}
	var genome []Chromosome
	for c := 1; c <= 10; c++ {
		genome = append(genome, Chromosome{Name: strconv.Itoa(c), LengthBP: 150e6, LengthCM: 150})
	}
	reps := 200
	if testing.Short() {
		reps = 100
	}
	res, err := Run(Config{Seed: 77, Chromosomes: genome, Designs: []Design{d}, Replicates: reps, NoSites: true})
	if err != nil {
		t.Fatal(err)
	}
	var sumPed, sumReal float64
	n := 0
	for _, s := range res.Samples {
		if s.Class == "herd_generation_6" {
			sumPed += s.FPedigree
			sumReal += s.FRealized
			n++
		}
	}
	if n != reps*12 {
		t.Fatalf("%d animals in generation 6, want %d", n, reps*12)
	}
	mp, mr := sumPed/float64(n), sumReal/float64(n)
	t.Logf("generation 6: mean pedigree F %.4f, mean realized %.4f over %d animals", mp, mr, n)
	if mp < 0.1 {
		t.Errorf("mean pedigree F %v implausibly low for six generations with two sires", mp)
	}
	if math.Abs(mp-mr) > 0.01 {
		t.Errorf("mean realized %v vs mean pedigree F %v (tolerance 0.01)", mr, mp)
	}
}

func TestConfigErrors(t *testing.T) {
	fs := []Design{{Kind: "full_sib"}}
	tests := []struct {
		name string
		cfg  Config
	}{
		{"no pedigree", Config{}},
		{"too many sites", Config{Designs: fs, SiteSpacing: 1}},
		{"bad error rate", Config{Designs: fs, GenotypeError: 2}},
		{"duplicate chromosome", Config{Designs: fs, Chromosomes: []Chromosome{{"1", 1e6, 1}, {"1", 1e6, 1}}}},
		{"zero genetic length", Config{Designs: fs, Chromosomes: []Chromosome{{"1", 1e6, 0}}}},
		{"unknown design", Config{Designs: []Design{{Kind: "cloning"}}}},
	}
	for _, tc := range tests {
		if _, err := Run(tc.cfg); !errors.Is(err, ErrConfig) {
			t.Errorf("%s: err = %v, want ErrConfig", tc.name, err)
		}
	}
}
