package roh

import (
	"bytes"
	"encoding/gob"
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"fgauge/genmap"
	"fgauge/vcfscan"
)

// site is one hand-built record: position, frequency and calls.
type site struct {
	chrom int
	pos   int64
	p     float64
	gt    []vcfscan.Geno
}

// batches packs sites into batches of at most size records.
func batches(sites []site, nSamples, size int) ([]*vcfscan.Batch, [][]float64) {
	var bs []*vcfscan.Batch
	var fs [][]float64
	for i := 0; i < len(sites); i += size {
		j := min(i+size, len(sites))
		b := &vcfscan.Batch{Seq: int64(len(bs)), NSamples: nSamples}
		var f []float64
		for _, s := range sites[i:j] {
			b.Records = append(b.Records, vcfscan.Record{ChromID: s.chrom, Pos: s.pos, Line: int64(len(b.Records) + 1)})
			b.GT = append(b.GT, s.gt...)
			f = append(f, s.p)
		}
		bs = append(bs, b)
		fs = append(fs, f)
	}
	return bs, fs
}

func collect(t testing.TB, cfg *Config, samples []string, contigs []vcfscan.Contig, sites []site) *Result {
	t.Helper()
	c, err := NewCollector(cfg, samples, contigs)
	if err != nil {
		t.Fatal(err)
	}
	bs, fs := batches(sites, len(samples), 333)
	for i, b := range bs {
		if err := c.AddBatch(b, fs[i]); err != nil {
			t.Fatal(err)
		}
	}
	r, err := c.Finish()
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// hwe draws a genotype in Hardy-Weinberg proportions.
func hwe(rng *rand.Rand, p float64) vcfscan.Geno {
	var g vcfscan.Geno
	if rng.Float64() < p {
		g++
	}
	if rng.Float64() < p {
		g++
	}
	return g
}

// plantedChrom builds one chromosome of n sites every step bp for one
// sample: Hardy-Weinberg calls at p=0.5 except homozygous in
// [from, to) bp, then applies edits.
func plantedChrom(seed uint64, n int, step int64, from, to int64, edit func(pos int64, g vcfscan.Geno) vcfscan.Geno) []site {
	rng := rand.New(rand.NewPCG(seed, 1))
	var out []site
	for i := 0; i < n; i++ {
		pos := int64(i+1) * step
		g := hwe(rng, 0.5)
		if pos >= from && pos < to {
			g = vcfscan.Geno(2 * rng.IntN(2))
		}
		if edit != nil {
			g = edit(pos, g)
		}
		out = append(out, site{0, pos, 0.5, []vcfscan.Geno{g}})
	}
	return out
}

// Hand-built sequences with a known answer: the planted stretch is found;
// an isolated heterozygous call (a genotyping error) and missing calls
// inside it do not break it. Expected values follow from the construction.
func TestHMMHandBuilt(t *testing.T) {
	contigs := []vcfscan.Contig{{Name: "1", Length: 20_000_000}}
	tests := []struct {
		name             string
		edit             func(pos int64, g vcfscan.Geno) vcfscan.Geno
		wantHet, wantMis int
	}{
		{"clean", nil, 0, 0},
		{"one het inside", func(pos int64, g vcfscan.Geno) vcfscan.Geno {
			if pos == 7_000_000 {
				return vcfscan.Heterozygous
			}
			return g
		}, 1, 0},
		{"missing block inside", func(pos int64, g vcfscan.Geno) vcfscan.Geno {
			if pos >= 8_000_000 && pos < 8_200_000 {
				return vcfscan.Missing
			}
			return g
		}, 0, 20},
		{"missing everywhere else", func(pos int64, g vcfscan.Geno) vcfscan.Geno {
			if pos%30_000 == 0 {
				return vcfscan.Missing
			}
			return g
		}, 0, -1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			sites := plantedChrom(7, 2000, 10_000, 5_000_000, 10_000_000, tc.edit)
			r := collect(t, DefaultConfig(), []string{"a1"}, contigs, sites)
			var long []Run
			for _, run := range r.Chroms[0].Runs {
				if run.LengthBP() >= 1_000_000 {
					long = append(long, run)
				}
			}
			if len(long) != 1 {
				t.Fatalf("want 1 run >= 1 Mb, got %d: %+v", len(long), r.Chroms[0].Runs)
			}
			run := long[0]
			// Boundaries within a few sites of the planted ones: outside the
			// stretch a site is homozygous with probability 1/2, so the run
			// may extend by a few sites.
			if d := run.Start - 5_000_000; d > 0 || d < -80_000 {
				t.Errorf("start %d, want near 5000000", run.Start)
			}
			if d := run.End - 9_990_000; d < 0 || d > 80_000 {
				t.Errorf("end %d, want near 9990000", run.End)
			}
			if run.NHet != tc.wantHet {
				t.Errorf("n_het %d, want %d", run.NHet, tc.wantHet)
			}
			if tc.wantMis >= 0 && run.NMissing != tc.wantMis {
				t.Errorf("n_missing %d, want %d", run.NMissing, tc.wantMis)
			}
			if !(run.Quality > 0.9 && run.Quality <= 1) {
				t.Errorf("quality %g, want > 0.9", run.Quality)
			}
		})
	}
}

// Unknown frequency (NaN) with a single sample makes every site
// uninformative: no run is called. Missing calls are uninformative too.
func TestHMMUninformative(t *testing.T) {
	contigs := []vcfscan.Contig{{Name: "1"}}
	var sites []site
	for i := 0; i < 500; i++ {
		sites = append(sites, site{0, int64(i+1) * 10_000, math.NaN(), []vcfscan.Geno{vcfscan.Missing}})
	}
	r := collect(t, DefaultConfig(), []string{"a1"}, contigs, sites)
	if n := len(r.Chroms[0].Runs); n != 0 {
		t.Fatalf("all-missing chromosome: %d runs, want 0", n)
	}
	_, src := r.Covered()
	if src != "site_span" {
		t.Errorf("covered source %q, want site_span (no header length)", src)
	}
}

func TestRulesHandBuilt(t *testing.T) {
	contigs := []vcfscan.Contig{{Name: "chr1", Length: 20_000_000}}
	cfg := DefaultConfig()
	cfg.Method = MethodRules
	tests := []struct {
		name    string
		edit    func(pos int64, g vcfscan.Geno) vcfscan.Geno
		want    [][2]int64 // runs >= 1 Mb, approximately
		wantHet []int
	}{
		// may extend past the planted end through one chance het
		{"clean", nil, [][2]int64{{5_000_000, 9_990_000}}, []int{-1}},
		{"one het tolerated", func(pos int64, g vcfscan.Geno) vcfscan.Geno {
			if pos == 7_000_000 {
				return vcfscan.Heterozygous
			}
			return g
		}, [][2]int64{{5_000_000, 9_990_000}}, []int{1}},
		// With this seed 4.99 Mb and 10.03 Mb are chance hets, so the
		// candidates are 5.00-8.99 Mb (3.99 Mb, het at 6.0) and
		// 6.01-10.02 Mb (4.01 Mb, het at 9.0): the longer wins. What is
		// left of the other, 4.94-5.99 Mb, has its het (4.99) only 5
		// homozygous calls from its start, so it is trimmed to
		// 5.00-5.99 Mb, under 1 Mb, and dropped (worked by hand from the
		// printed sequence).
		{"two hets split", func(pos int64, g vcfscan.Geno) vcfscan.Geno {
			if pos == 6_000_000 || pos == 9_000_000 {
				return vcfscan.Heterozygous
			}
			return g
		}, [][2]int64{{6_010_000, 10_020_000}}, []int{1}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			sites := plantedChrom(7, 2000, 10_000, 5_000_000, 10_000_000, tc.edit)
			r := collect(t, cfg, []string{"a1"}, contigs, sites)
			runs := r.Chroms[0].Runs
			if len(runs) != len(tc.want) {
				t.Fatalf("got %d runs %+v, want %d", len(runs), runs, len(tc.want))
			}
			for i, w := range tc.want {
				if d := runs[i].Start - w[0]; d > 0 || d < -80_000 {
					t.Errorf("run %d start %d, want near %d", i, runs[i].Start, w[0])
				}
				if d := runs[i].End - w[1]; d < 0 || d > 80_000 {
					t.Errorf("run %d end %d, want near %d", i, runs[i].End, w[1])
				}
				if tc.wantHet[i] >= 0 && runs[i].NHet != tc.wantHet[i] {
					t.Errorf("run %d n_het %d, want %d", i, runs[i].NHet, tc.wantHet[i])
				}
				if !math.IsNaN(runs[i].Quality) {
					t.Errorf("rules quality %g, want NaN", runs[i].Quality)
				}
			}
		})
	}
}

// randomCohort draws nSamples genotypes on two chromosomes with planted
// homozygous stretches of random length.
func randomCohort(seed uint64, nSamples int) ([]vcfscan.Contig, []site) {
	rng := rand.New(rand.NewPCG(seed, 2))
	contigs := []vcfscan.Contig{{Name: "1", Length: 30_000_000}, {Name: "2", Length: 20_000_000}, {Name: "X", Length: 10_000_000}}
	var sites []site
	for c, ct := range contigs {
		// planted stretches per sample
		type iv struct{ a, b int64 }
		plant := make([]iv, nSamples)
		for s := range plant {
			a := rng.Int64N(ct.Length / 2)
			plant[s] = iv{a, a + 1_000_000 + rng.Int64N(ct.Length/3)}
		}
		pos := int64(0)
		for {
			pos += 5_000 + rng.Int64N(40_000)
			if pos > ct.Length {
				break
			}
			if rng.IntN(200) == 0 {
				pos += 1_500_000 // an occasional large gap
			}
			p := 0.05 + 0.9*rng.Float64()
			gt := make([]vcfscan.Geno, nSamples)
			for s := range gt {
				gt[s] = hwe(rng, p)
				if pos >= plant[s].a && pos < plant[s].b {
					gt[s] = vcfscan.Geno(2 * rng.IntN(2))
				}
				if rng.IntN(500) == 0 {
					gt[s] = vcfscan.Missing
				}
				if rng.IntN(1000) == 0 {
					gt[s] = vcfscan.Heterozygous
				}
			}
			sites = append(sites, site{c, pos, p, gt})
		}
	}
	return contigs, sites
}

func sampleNames(n int) []string {
	s := make([]string, n)
	for i := range s {
		s[i] = "calf_" + string(rune('a'+i%26)) + string(rune('a'+i/26))
	}
	return s
}

// Reversing the order of the sites of a chromosome (mirroring positions)
// gives the same runs, mirrored, for both detectors: neither depends on a
// scan direction.
func TestReversalInvariance(t *testing.T) {
	const ns = 8
	contigs, sites := randomCohort(11, ns)
	for _, method := range []string{MethodHMM, MethodRules} {
		t.Run(method, func(t *testing.T) {
			cfg := DefaultConfig()
			cfg.Method = method
			fwd := collect(t, cfg, sampleNames(ns), contigs, sites)
			// mirror each chromosome: pos -> L+1-pos, order reversed
			var rev []site
			for c, ct := range contigs {
				var one []site
				for _, s := range sites {
					if s.chrom == c {
						one = append(one, site{c, ct.Length + 1 - s.pos, s.p, s.gt})
					}
				}
				for i := len(one) - 1; i >= 0; i-- {
					rev = append(rev, one[i])
				}
			}
			bwd := collect(t, cfg, sampleNames(ns), contigs, rev)
			total := 0
			for ci, cr := range fwd.Chroms {
				L := cr.Length
				want := map[[3]int64]Run{}
				for _, r := range cr.Runs {
					want[[3]int64{int64(r.Sample), r.Start, r.End}] = r
				}
				got := bwd.Chroms[ci].Runs
				if len(got) != len(cr.Runs) {
					t.Errorf("%s: %d runs forward, %d reversed", cr.Name, len(cr.Runs), len(got))
				}
				for _, r := range got {
					k := [3]int64{int64(r.Sample), L + 1 - r.End, L + 1 - r.Start}
					w, ok := want[k]
					if !ok {
						t.Errorf("%s: reversed run %+v has no forward twin", cr.Name, r)
						continue
					}
					if w.NSites != r.NSites || w.NHet != r.NHet || w.NMissing != r.NMissing {
						t.Errorf("%s: counts differ: %+v vs %+v", cr.Name, w, r)
					}
					if method == MethodHMM && math.Abs(w.Quality-r.Quality) > 1e-9 {
						t.Errorf("%s: quality %g vs %g", cr.Name, w.Quality, r.Quality)
					}
					total++
				}
			}
			if total < ns {
				t.Errorf("only %d runs matched; the planted stretches should give at least %d", total, ns)
			}
		})
	}
}

// Splitting the input at a chromosome boundary and merging the two
// results gives the same tables as one pass.
func TestShardMerge(t *testing.T) {
	const ns = 6
	contigs, sites := randomCohort(5, ns)
	for _, method := range []string{MethodHMM, MethodRules} {
		cfg := DefaultConfig()
		cfg.Method = method
		cfg.Threads = 2
		whole := collect(t, cfg, sampleNames(ns), contigs, sites)
		var a, b []site
		for _, s := range sites {
			if s.chrom == 0 {
				a = append(a, s)
			} else {
				b = append(b, s)
			}
		}
		ra := collect(t, cfg, sampleNames(ns), contigs, a)
		rb := collect(t, cfg, sampleNames(ns), contigs, b)
		if err := ra.Merge(rb); err != nil {
			t.Fatal(err)
		}
		var w1, w2 bytes.Buffer
		whole.WriteRuns(&w1)
		ra.WriteRuns(&w2)
		if w1.String() != w2.String() {
			t.Errorf("%s: runs.tsv differs after merge", method)
		}
		if strings.Count(w1.String(), "\n") < ns {
			t.Errorf("%s: too few runs: %q", method, w1.String())
		}
		h1, r1 := whole.SampleTable()
		h2, r2 := ra.SampleTable()
		if strings.Join(h1, ",") != strings.Join(h2, ",") {
			t.Errorf("header differs")
		}
		for i := range r1 {
			if strings.Join(r1[i], ",") != strings.Join(r2[i], ",") {
				t.Errorf("%s: sample row %d differs: %v vs %v", method, i, r1[i], r2[i])
			}
		}
		if whole.Excluded["X"] == 0 || ra.Excluded["X"] != whole.Excluded["X"] {
			t.Errorf("excluded X: whole %d merged %d", whole.Excluded["X"], ra.Excluded["X"])
		}
		if err := ra.Merge(rb); err == nil {
			t.Errorf("merging the same chromosome twice: want error")
		}
	}
}

// Runs never cross a gap larger than MaxGapKB and never extend beyond the
// sites of their chromosome.
func TestGapsAndBounds(t *testing.T) {
	const ns = 10
	contigs, sites := randomCohort(3, ns)
	for _, method := range []string{MethodHMM, MethodRules} {
		cfg := DefaultConfig()
		cfg.Method = method
		r := collect(t, cfg, sampleNames(ns), contigs, sites)
		checkRuns(t, r, sites, contigs, 1_000_000)
	}
}

// checkRuns asserts that no run spans a gap > maxGap between consecutive
// sites, and runs lie within their chromosome's sites.
func checkRuns(t *testing.T, r *Result, sites []site, contigs []vcfscan.Contig, maxGap int64) {
	t.Helper()
	byName := map[string]int{}
	for i, c := range contigs {
		byName[c.Name] = i
	}
	for _, cr := range r.Chroms {
		ci := byName[cr.Name]
		var pos []int64
		for _, s := range sites {
			if s.chrom == ci {
				pos = append(pos, s.pos)
			}
		}
		for _, run := range cr.Runs {
			if run.Start < cr.FirstPos || run.End > cr.LastPos || run.End < run.Start {
				t.Errorf("%s: run %d-%d outside sites %d-%d", cr.Name, run.Start, run.End, cr.FirstPos, cr.LastPos)
			}
			for i := 1; i < len(pos); i++ {
				if pos[i-1] >= run.Start && pos[i] <= run.End && pos[i]-pos[i-1] > maxGap {
					t.Errorf("%s: run %d-%d crosses gap %d-%d", cr.Name, run.Start, run.End, pos[i-1], pos[i])
				}
			}
		}
	}
}

func TestUnsorted(t *testing.T) {
	contigs := []vcfscan.Contig{{Name: "1"}, {Name: "2"}}
	g := []vcfscan.Geno{0}
	tests := []struct {
		name  string
		sites []site
	}{
		{"position decreases", []site{{0, 100, 0.5, g}, {0, 50, 0.5, g}}},
		{"chromosome comes back", []site{{0, 100, 0.5, g}, {1, 50, 0.5, g}, {0, 200, 0.5, g}}},
	}
	for _, tc := range tests {
		c, err := NewCollector(DefaultConfig(), []string{"a"}, contigs)
		if err != nil {
			t.Fatal(err)
		}
		bs, fs := batches(tc.sites, 1, 10)
		err = c.AddBatch(bs[0], fs[0])
		if !errors.Is(err, vcfscan.ErrUnsorted) {
			t.Errorf("%s: got %v, want ErrUnsorted", tc.name, err)
		}
		var pe *vcfscan.ParseError
		if !errors.As(err, &pe) || pe.Line == 0 {
			t.Errorf("%s: want a ParseError with a line, got %v", tc.name, err)
		}
		c.Finish()
	}
}

func TestConfigValidate(t *testing.T) {
	tests := []struct {
		name string
		edit func(*Config)
		ok   bool
	}{
		{"default", func(*Config) {}, true},
		{"bad method", func(c *Config) { c.Method = "magic" }, false},
		{"zero error", func(c *Config) { c.GenotypeError = 0 }, false},
		{"negative cM", func(c *Config) { c.CMPerMB = -1 }, false},
		{"no classes", func(c *Config) { c.Classes = nil }, false},
		{"duplicate class", func(c *Config) { c.Classes = []float64{1, 1} }, false},
		{"unknown species", func(c *Config) { c.Species = "unicorn" }, false},
		{"species", func(c *Config) { c.Species = "cattle" }, true},
	}
	for _, tc := range tests {
		c := DefaultConfig()
		tc.edit(c)
		err := c.Validate()
		if (err == nil) != tc.ok {
			t.Errorf("%s: err = %v", tc.name, err)
		}
		if err != nil && !errors.Is(err, ErrConfig) {
			t.Errorf("%s: error does not wrap ErrConfig", tc.name)
		}
	}
}

func TestAutosomes(t *testing.T) {
	tests := []struct {
		species string
		list    []string
		name    string
		want    bool
	}{
		{"", nil, "1", true},
		{"", nil, "chr22", true},
		{"", nil, "X", false},
		{"", nil, "chrUn_gl000220", false},
		{"", nil, "MT", false},
		{"", nil, "01", false},
		{"cattle", nil, "chr29", true},
		{"cattle", nil, "30", false},
		{"chicken", nil, "29", false},
		{"chicken", nil, "Z", false},
		{"human", []string{"chrX"}, "X", true},
		{"human", []string{"chrX"}, "1", false},
	}
	for _, tc := range tests {
		c := DefaultConfig()
		c.Species, c.Autosomes = tc.species, tc.list
		if got := c.autosomes().is(tc.name); got != tc.want {
			t.Errorf("species %q list %v name %q: got %v", tc.species, tc.list, tc.name, got)
		}
	}
}

// Emission rows are probability distributions over the three genotypes
// (stored as float32, so to float32 precision).
func TestEmissionRowSums(t *testing.T) {
	row := make([]float32, 8)
	for _, p := range []float64{0, 0.01, 0.3, 0.5, 0.99, 1} {
		for _, e := range []float64{0.001, 0.05} {
			emissionRow(row, p, e)
			for st := 0; st < 2; st++ {
				s := float64(row[4*st]) + float64(row[4*st+1]) + float64(row[4*st+2])
				if math.Abs(s-1) > 1e-6 {
					t.Errorf("p=%g e=%g state %d: sum %g", p, e, st, s)
				}
			}
		}
	}
}

func TestSampleTableAndSummary(t *testing.T) {
	r := &Result{Method: MethodHMM, Samples: []string{"a", "b"}, Classes: []float64{1, 2, 4},
		Chroms: []ChromResult{{Name: "1", Length: 10_000_000, FirstPos: 1, LastPos: 9_000_000, NSites: 100,
			Runs: []Run{{Sample: 0, Start: 1, End: 3_000_000, EndCM: 3}, {Sample: 0, Start: 4_000_001, End: 4_500_000, EndCM: 4.5}}}}}
	h, rows := r.SampleTable()
	if strings.Join(h, " ") != "n_runs roh_total_bp f_roh f_roh_gt_1mb f_roh_gt_2mb f_roh_gt_4mb" {
		t.Errorf("header %v", h)
	}
	// hand-computed: one run of 3 Mb counted, 0.5 Mb run below 1 Mb
	if got := strings.Join(rows[0], " "); got != "1 3000000 0.3 0.3 0.3 0" {
		t.Errorf("row a = %q", got)
	}
	if got := strings.Join(rows[1], " "); got != "0 0 0 0 0 0" {
		t.Errorf("row b = %q", got)
	}
	s := r.Summary()
	if s.CoveredBP != 10_000_000 || s.CoveredSource != "contig_lengths" {
		t.Errorf("summary %+v", s)
	}
	var buf bytes.Buffer
	r.WriteRuns(&buf)
	lines := strings.Split(strings.TrimSpace(buf.String()), "\n")
	if len(lines) != 3 || lines[1] != "a\t1\t1\t3000000\t3000000\t3\t0\t0\t0\t0\t16.666666666666668" {
		t.Errorf("runs.tsv:\n%s", buf.String())
	}
}

// The two-lane HMM passes give exactly the runs and qualities of the
// one-lane passes (odd and even sample counts).
func TestTwoLanesMatchOneLane(t *testing.T) {
	for _, ns := range []int{7, 8} {
		contigs, sites := randomCohort(21, ns)
		var out [2]*Result
		for k, one := range []bool{true, false} {
			c, err := NewCollector(DefaultConfig(), sampleNames(ns), contigs)
			if err != nil {
				t.Fatal(err)
			}
			c.whole = one
			c.setGeometry()
			bs, fs := batches(sites, ns, 500)
			for i, b := range bs {
				if err := c.AddBatch(b, fs[i]); err != nil {
					t.Fatal(err)
				}
			}
			if out[k], err = c.Finish(); err != nil {
				t.Fatal(err)
			}
		}
		n := 0
		for ci := range out[0].Chroms {
			a, b := out[0].Chroms[ci].Runs, out[1].Chroms[ci].Runs
			if len(a) != len(b) {
				t.Fatalf("%d samples, %s: %d runs one lane, %d two lanes", ns, out[0].Chroms[ci].Name, len(a), len(b))
			}
			for i := range a {
				if a[i] != b[i] {
					t.Errorf("run %d: one lane %+v, two lanes %+v", i, a[i], b[i])
				}
				n++
			}
		}
		if n < ns {
			t.Errorf("%d samples: only %d runs compared", ns, n)
		}
	}
}

// Results and configurations survive encoding/gob (shard states), and a
// decoded result writes the same tables.
func TestGobRoundTrip(t *testing.T) {
	const ns = 4
	contigs, sites := randomCohort(8, ns)
	for _, method := range []string{MethodHMM, MethodRules} {
		cfg := DefaultConfig()
		cfg.Method = method
		cfg.Map, _ = genmap.Read(strings.NewReader("1 1 0\n1 30000000 40\n"), "map")
		r := collect(t, cfg, sampleNames(ns), contigs, sites)
		var buf bytes.Buffer
		if err := gob.NewEncoder(&buf).Encode(struct {
			R *Result
			C *Config
		}{r, cfg}); err != nil {
			t.Fatal(err)
		}
		var back struct {
			R *Result
			C *Config
		}
		if err := gob.NewDecoder(&buf).Decode(&back); err != nil {
			t.Fatal(err)
		}
		var w1, w2 bytes.Buffer
		r.WriteRuns(&w1)
		back.R.WriteRuns(&w2)
		if w1.String() != w2.String() || strings.Count(w1.String(), "\n") < 2 {
			t.Errorf("%s: runs.tsv differs after gob round trip", method)
		}
		if back.C.Map.Chrom("1").At(15_000_000, 1) != cfg.Map.Chrom("1").At(15_000_000, 1) {
			t.Errorf("%s: map lost in round trip", method)
		}
		if !back.R.MapUsed || back.R.Chroms[0].MapSource != "genetic_map" || back.R.Chroms[1].MapSource != "cm_per_mb" {
			t.Errorf("%s: map sources %v %q %q", method, back.R.MapUsed, back.R.Chroms[0].MapSource, back.R.Chroms[1].MapSource)
		}
	}
}

// Two lanes also match one lane when emissions come from likelihoods.
func TestTwoLanesMatchOneLanePL(t *testing.T) {
	const ns = 5
	contigs, sites := randomCohort(22, ns)
	var out [2]*Result
	for k, one := range []bool{true, false} {
		c, err := NewCollector(DefaultConfig(), sampleNames(ns), contigs)
		if err != nil {
			t.Fatal(err)
		}
		c.whole = one
		c.setGeometry()
		bs, fs := batches(sites, ns, 500)
		for i, b := range bs {
			b.PL = make([]uint16, 3*len(b.GT))
			b.HasPL = make([]bool, len(b.Records))
			for r := range b.HasPL {
				b.HasPL[r] = r%3 != 0 // some records without likelihoods
			}
			for x, g := range b.GT {
				for h := 0; h < 3; h++ {
					if g < 3 && int(g) != h {
						b.PL[3*x+h] = uint16(20 + 10*x%7)
					}
				}
			}
			if err := c.AddBatch(b, fs[i]); err != nil {
				t.Fatal(err)
			}
		}
		if out[k], err = c.Finish(); err != nil {
			t.Fatal(err)
		}
	}
	n := 0
	for ci := range out[0].Chroms {
		a, b := out[0].Chroms[ci].Runs, out[1].Chroms[ci].Runs
		if len(a) != len(b) {
			t.Fatalf("%s: %d runs one lane, %d two lanes", out[0].Chroms[ci].Name, len(a), len(b))
		}
		for i := range a {
			if a[i] != b[i] {
				t.Errorf("run %d: one lane %+v, two lanes %+v", i, a[i], b[i])
			}
			n++
		}
	}
	if n < ns {
		t.Errorf("only %d runs compared", n)
	}
}

// Memory stays bounded: once the third chromosome is being read, the
// genotypes of the first are no longer held.
func TestChromosomesReleased(t *testing.T) {
	contigs := []vcfscan.Contig{{Name: "1", Length: 1_000_000}, {Name: "2", Length: 1_000_000}, {Name: "3", Length: 1_000_000}}
	var sites []site
	for c := 0; c < 3; c++ {
		for i := 0; i < 100; i++ {
			sites = append(sites, site{c, int64(i+1) * 10_000, 0.5, []vcfscan.Geno{vcfscan.Geno(i % 3), 0}})
		}
	}
	c, err := NewCollector(DefaultConfig(), []string{"a", "b"}, contigs)
	if err != nil {
		t.Fatal(err)
	}
	bs, fs := batches(sites, 2, 50)
	for i, b := range bs {
		if err := c.AddBatch(b, fs[i]); err != nil {
			t.Fatal(err)
		}
	}
	if len(c.chroms) != 3 || c.settled != 2 {
		t.Errorf("while reading chromosome 3: %d chromosomes dispatched, %d settled", len(c.chroms), c.settled)
	}
	for k, w := range c.chroms[0].wins {
		if w != nil {
			t.Errorf("chromosome 1 window %d still held", k)
		}
	}
	r, err := c.Finish()
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Chroms) != 3 || r.Chroms[2].NSites != 100 || r.Chroms[0].FirstPos != 10_000 || r.Chroms[0].LastPos != 1_000_000 {
		t.Errorf("chromosome summaries %+v", r.Chroms)
	}
}

// A map naming "chr1" applies to contig "1" (and "1" to "chr1"): the
// detection uses genmap's name rule, the same as the gene-drop simulator.
func TestGeneticMapChrPrefix(t *testing.T) {
	const ns = 3
	contigs, sites := randomCohort(8, ns)
	for _, text := range []string{"chr1 1 0\nchr1 30000000 40\n", "CHR1 1 0\nCHR1 30000000 40\n"} {
		cfg := DefaultConfig()
		cfg.Method = MethodRules
		var err error
		if cfg.Map, err = genmap.Read(strings.NewReader(text), "map"); err != nil {
			t.Fatal(err)
		}
		r := collect(t, cfg, sampleNames(ns), contigs, sites)
		if r.Chroms[0].Name != "1" || r.Chroms[0].MapSource != "genetic_map" || r.Chroms[1].MapSource != "cm_per_mb" {
			t.Errorf("map %q: chromosome %q map source %q, next %q; want genetic_map for 1 only",
				text, r.Chroms[0].Name, r.Chroms[0].MapSource, r.Chroms[1].MapSource)
		}
	}
}

// TestClassColumnNames: ClassColumn and ColumnClass are inverses.
func TestClassColumnNames(t *testing.T) {
	for _, tc := range []struct {
		mb  float64
		col string
	}{{0.5, "f_roh_gt_0p5mb"}, {1, "f_roh_gt_1mb"}, {16, "f_roh_gt_16mb"}, {0.25, "f_roh_gt_0p25mb"}, {1.5, "f_roh_gt_1p5mb"}} {
		if got := ClassColumn(tc.mb); got != tc.col {
			t.Errorf("ClassColumn(%v) = %q, want %q", tc.mb, got, tc.col)
		}
		if mb, ok := ColumnClass(tc.col); !ok || mb != tc.mb {
			t.Errorf("ColumnClass(%q) = %v, %v", tc.col, mb, ok)
		}
	}
	for _, bad := range []string{"f_roh", "f_roh_gt_mb", "f_roh_gt_1kb", "f_roh_gt_1.5mb", "f_roh_gt_01mb", "f_roh_gt_xmb"} {
		if _, ok := ColumnClass(bad); ok {
			t.Errorf("ColumnClass(%q) accepted", bad)
		}
	}
}
