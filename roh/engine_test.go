package roh

import (
	"bytes"
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"fgauge/genmap"
	"fgauge/vcfscan"
)

// denseCohort is an invented cohort of nSamples on two autosomes of
// nSites sites each, 2 kb apart, with planted homozygous stretches of
// several lengths, missing calls, isolated heterozygous calls, a few
// sites of unknown frequency, gaps, and samples with no calls at all (so
// that the Viterbi path has long undecided stretches): enough sites for
// many windows and checkpoint blocks at the smallest window size.
func denseCohort(seed uint64, nSamples, nSites int) ([]vcfscan.Contig, []site) {
	rng := rand.New(rand.NewPCG(seed, 9))
	contigs := []vcfscan.Contig{{Name: "1", Length: int64(nSites)*2000 + 5e6}, {Name: "2", Length: int64(nSites)*2000 + 5e6}}
	var sites []site
	for c := range contigs {
		type iv struct{ a, b int64 }
		plant := make([][]iv, nSamples)
		for s := range plant {
			for k := 0; k < 1+rng.IntN(4); k++ {
				a := rng.Int64N(int64(nSites) * 2000)
				plant[s] = append(plant[s], iv{a, a + 200_000 + rng.Int64N(int64(nSites)*500)})
			}
		}
		pos := int64(0)
		for i := 0; i < nSites; i++ {
			pos += 1000 + rng.Int64N(2000)
			if rng.IntN(700) == 0 {
				pos += 1_200_000
			}
			p := 0.02 + 0.96*rng.Float64()
			if rng.IntN(300) == 0 {
				p = math.NaN()
			}
			gt := make([]vcfscan.Geno, nSamples)
			for s := range gt {
				gt[s] = hwe(rng, p)
				if p != p {
					gt[s] = vcfscan.Geno(rng.IntN(3))
				}
				for _, v := range plant[s] {
					if pos >= v.a && pos < v.b {
						gt[s] = vcfscan.Geno(2 * rng.IntN(2))
					}
				}
				if rng.IntN(300) == 0 {
					gt[s] = vcfscan.Missing
				}
				if rng.IntN(800) == 0 {
					gt[s] = vcfscan.Heterozygous
				}
				if s == 1 {
					gt[s] = vcfscan.Missing
				}
			}
			sites = append(sites, site{c, pos, p, gt})
		}
	}
	return contigs, sites
}

// withPL gives two records in three likelihoods consistent with their
// calls, as a function of the position and sample only (so that any
// batching of the same sites gives the same likelihoods).
func withPL(bs []*vcfscan.Batch) {
	for _, b := range bs {
		ns := b.NSamples
		b.PL = make([]uint16, 3*len(b.GT))
		b.HasPL = make([]bool, len(b.Records))
		for r, rec := range b.Records {
			b.HasPL[r] = rec.Pos%3 != 0
			for s := 0; s < ns; s++ {
				g := b.GT[r*ns+s]
				for h := 0; h < 3; h++ {
					if g < 3 && int(g) != h {
						b.PL[3*(r*ns+s)+h] = uint16(5 + (int(rec.Pos)/7+13*s)%37)
					}
				}
			}
		}
	}
}

func runCollector(t *testing.T, cfg *Config, ns int, contigs []vcfscan.Contig, bs []*vcfscan.Batch, fs [][]float64, whole bool) (*Result, MemoryStats) {
	t.Helper()
	c, err := NewCollector(cfg, sampleNames(ns), contigs)
	if err != nil {
		t.Fatal(err)
	}
	if whole {
		c.whole = true
		c.setGeometry()
	}
	for i, b := range bs {
		if err := c.AddBatch(b, fs[i]); err != nil {
			t.Fatal(err)
		}
	}
	ms := c.MemoryStats()
	r, err := c.Finish()
	if err != nil {
		t.Fatal(err)
	}
	return r, ms
}

func runsText(r *Result) string {
	var b bytes.Buffer
	r.WriteRuns(&b)
	return b.String()
}

// The windowed sweeps give byte for byte the runs.tsv of the
// whole-chromosome passes (forwardViterbi, backward, hmmRuns), with the
// windows in memory or spilled to disk (tiny budget), at several window
// sizes, thread counts and sample counts, with and without likelihoods
// and a genetic map.
func TestEngineMatchesWholePasses(t *testing.T) {
	gmap, _ := genmap.Read(bytes.NewReader([]byte("1 1 0\n1 3000000 2\n1 9000000 14\n1 20000000 15\n")), "map")
	for _, tc := range []struct {
		name    string
		ns      int
		pl      bool
		gm      bool
		threads int
	}{
		{"one sample", 1, false, false, 1},
		{"odd", 7, false, false, 2},
		{"even map", 8, false, true, 3},
		{"likelihoods", 5, true, false, 2},
	} {
		contigs, sites := denseCohort(uint64(tc.ns), tc.ns, 3000)
		bs, fs := batches(sites, tc.ns, 777)
		if tc.pl {
			withPL(bs)
		}
		cfg := DefaultConfig()
		cfg.Threads = tc.threads
		if tc.gm {
			cfg.Map = gmap
		}
		want, _ := runCollector(t, cfg, tc.ns, contigs, bs, fs, true)
		wantText := runsText(want)
		if len(want.Chroms) != 2 || len(want.Chroms[0].Runs) < tc.ns {
			t.Fatalf("%s: too few runs to compare: %d", tc.name, len(want.Chroms[0].Runs))
		}
		for _, budget := range []int64{0, 4 << 20, 1} {
			c := *cfg
			c.MemoryBudget = budget
			c.TempDir = t.TempDir()
			got, ms := runCollector(t, &c, tc.ns, contigs, bs, fs, false)
			if g := runsText(got); g != wantText {
				t.Errorf("%s, budget %d: runs.tsv differs from the whole-chromosome passes:\n%s\nwant\n%s", tc.name, budget, firstDiff(g, wantText), "")
			}
			for ci := range want.Chroms {
				a, b := want.Chroms[ci].Runs, got.Chroms[ci].Runs
				for i := range min(len(a), len(b)) {
					if a[i] != b[i] {
						t.Errorf("%s, budget %d: run %d: %+v, want %+v", tc.name, budget, i, b[i], a[i])
						break
					}
				}
			}
			if budget == 1 && ms.SpilledBytes == 0 {
				t.Errorf("%s: tiny budget did not spill", tc.name)
			}
			if budget == 0 && ms.SpilledBytes != 0 {
				t.Errorf("%s: default budget spilled %d bytes", tc.name, ms.SpilledBytes)
			}
		}
	}
}

func firstDiff(a, b string) string {
	la, lb := bytes.Split([]byte(a), []byte("\n")), bytes.Split([]byte(b), []byte("\n"))
	for i := range min(len(la), len(lb)) {
		if !bytes.Equal(la[i], lb[i]) {
			return "got  " + string(la[i]) + "\nwant " + string(lb[i])
		}
	}
	return "lengths differ"
}

// Pieces of chromosomes cut at arbitrary sites, kept under a tiny budget
// (spilling) and joined under a tiny budget, give the runs of one pass,
// for both detectors, with and without likelihoods, whether the pieces
// are handed over in memory (Pieces, JoinAndDetect) or through pieces
// files (WritePieces, OpenPieces, JoinAndDetectPieces).
func TestJoinSpilledMatchesWhole(t *testing.T) {
	const ns = 6
	contigs, sites := denseCohort(4, ns, 2500)
	for _, tc := range []struct {
		method string
		pl     bool
	}{{MethodHMM, false}, {MethodRules, false}, {MethodHMM, true}} {
		cfg := DefaultConfig()
		cfg.Method = tc.method
		mk := func(ss []site, size int) ([]*vcfscan.Batch, [][]float64) {
			bs, fs := batches(ss, ns, size)
			if tc.pl {
				withPL(bs)
			}
			return bs, fs
		}
		bs, fs := mk(sites, 500)
		want, _ := runCollector(t, cfg, ns, contigs, bs, fs, false)
		small := *cfg
		small.MemoryBudget = 1
		small.TempDir = t.TempDir()
		// three shards: cut inside chromosome 1 and inside chromosome 2
		cuts := []int{0, 1234, 2500 + 777, len(sites)}
		var groups [2][]Piece
		var refs [2][]PieceRef
		for k := 0; k+1 < len(cuts); k++ {
			for _, viaFile := range []bool{false, true} {
				p, err := NewPieceCollector(&small, ns)
				if err != nil {
					t.Fatal(err)
				}
				// batch size 300 so that PL batches vary
				pb, pf := mk(sites[cuts[k]:cuts[k+1]], 300)
				for i, b := range pb {
					if err := p.AddBatch(b, pf[i]); err != nil {
						t.Fatal(err)
					}
				}
				if !viaFile {
					pieces, _ := p.Pieces(contigs)
					if err := p.Err(); err != nil {
						t.Fatal(err)
					}
					for _, pc := range pieces {
						i := 0
						if pc.Name == "2" {
							i = 1
						}
						groups[i] = append(groups[i], pc)
					}
					continue
				}
				var buf bytes.Buffer
				if _, err := p.WritePieces(&buf, contigs); err != nil {
					t.Fatal(err)
				}
				set, err := OpenPieces(bytes.NewReader(buf.Bytes()), int64(buf.Len()), "shard")
				if err != nil {
					t.Fatal(err)
				}
				for j, info := range set.Pieces() {
					i := 0
					if info.Name == "2" {
						i = 1
					}
					refs[i] = append(refs[i], PieceRef{set, j})
				}
			}
		}
		got, err := JoinAndDetect(&small, sampleNames(ns), groups[:])
		if err != nil {
			t.Fatal(err)
		}
		if g, w := runsText(got), runsText(want); g != w {
			t.Errorf("%s pl %v: joined pieces differ from one pass:\n%s", tc.method, tc.pl, firstDiff(g, w))
		}
		got, err = JoinAndDetectPieces(&small, sampleNames(ns), refs[:])
		if err != nil {
			t.Fatal(err)
		}
		if g, w := runsText(got), runsText(want); g != w {
			t.Errorf("%s pl %v: joined pieces files differ from one pass:\n%s", tc.method, tc.pl, firstDiff(g, w))
		}
		// An interrupt (a cancelled context) stops the join with its error.
		ctx, cancel := context.WithCancel(context.Background())
		cancel()
		if _, _, err := JoinAndDetectPiecesStats(ctx, &small, sampleNames(ns), refs[:]); !errors.Is(err, context.Canceled) {
			t.Errorf("%s pl %v: a cancelled join gives %v", tc.method, tc.pl, err)
		}
		if left, _ := os.ReadDir(small.TempDir); len(left) > 0 {
			t.Errorf("a cancelled join left %d files in the temporary folder", len(left))
		}
	}
}

// Spill files never appear in the temporary folder (they are removed as
// soon as they are created), and closing a collector in the middle of a
// spilling run leaves nothing behind.
func TestSpillLeavesNothing(t *testing.T) {
	const ns = 4
	contigs, sites := denseCohort(2, ns, 3000)
	bs, fs := batches(sites, ns, 400)
	dir := t.TempDir()
	cfg := DefaultConfig()
	cfg.MemoryBudget = 1
	cfg.TempDir = dir
	c, err := NewCollector(cfg, sampleNames(ns), contigs)
	if err != nil {
		t.Fatal(err)
	}
	for i, b := range bs[:len(bs)*3/4] {
		if err := c.AddBatch(b, fs[i]); err != nil {
			t.Fatal(err)
		}
	}
	if c.MemoryStats().SpilledBytes == 0 {
		t.Fatal("nothing spilled")
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 0 {
		t.Errorf("temporary folder holds %d entries during the run", len(ents))
	}
	c.Close()
	c.Close()
	if ents, _ := os.ReadDir(dir); len(ents) != 0 {
		t.Errorf("temporary folder holds %d entries after Close", len(ents))
	}
	if _, err := c.Finish(); err == nil {
		t.Errorf("Finish after Close: want an error")
	}
	// the same for pieces, closed without being taken
	p, err := NewPieceCollector(cfg, ns)
	if err != nil {
		t.Fatal(err)
	}
	for i, b := range bs {
		if err := p.AddBatch(b, fs[i]); err != nil {
			t.Fatal(err)
		}
	}
	if p.col.MemoryStats().SpilledBytes == 0 {
		t.Fatal("no piece spilled")
	}
	p.Close()
	if ents, _ := os.ReadDir(dir); len(ents) != 0 {
		t.Errorf("temporary folder holds %d entries after closing the pieces", len(ents))
	}
}

// A temporary folder that cannot hold files gives ErrTempDisk (exit 2 in
// the command), whether it is missing, removed before the first spill, or
// not a folder.
func TestSpillFolderErrors(t *testing.T) {
	const ns = 3
	contigs, sites := denseCohort(3, ns, 2000)
	bs, fs := batches(sites, ns, 400)
	base := t.TempDir()
	notDir := filepath.Join(base, "file")
	os.WriteFile(notDir, []byte("x"), 0o644)
	removed := filepath.Join(base, "removed")
	os.Mkdir(removed, 0o755)
	for _, dir := range []string{filepath.Join(base, "missing"), notDir, removed} {
		cfg := DefaultConfig()
		cfg.MemoryBudget = 1
		cfg.TempDir = dir
		c, err := NewCollector(cfg, sampleNames(ns), contigs)
		if err != nil {
			t.Fatal(err)
		}
		os.Remove(removed)
		for i, b := range bs {
			if err = c.AddBatch(b, fs[i]); err != nil {
				break
			}
		}
		if err == nil {
			_, err = c.Finish()
		} else {
			c.Close()
		}
		var te *TempDiskError
		if !errors.Is(err, ErrTempDisk) || !errors.As(err, &te) || te.Dir != dir {
			t.Errorf("%s: error %v, want a TempDiskError for the folder", dir, err)
		}
	}
}

// Sweep 3's posteriors are bit for bit those of the whole-chromosome
// forward-backward (backward with the Viterbi path), at exactly the
// autozygous sites of the whole-chromosome Viterbi path, with windows of
// the smallest size and spilled data.
func TestEnginePosteriorsExact(t *testing.T) {
	const ns, n = 6, 4000
	contigs, sites := denseCohort(11, ns, n)
	sites = sites[:n] // chromosome 1
	for _, pl := range []bool{false, true} {
		bs, fs := batches(sites, ns, 512)
		if pl {
			withPL(bs)
		}
		ch := wholeChrom(t, bs, fs, ns)
		// weak evidence, so that posteriors are far from 0 and 1 and a
		// change in the last bits of the recursions shows
		cfg := DefaultConfig()
		cfg.GenotypeError = 0.3
		cfg.AutozygousPrior = 0.3
		ref, _ := NewCollector(cfg, sampleNames(ns), contigs)
		ref.prepare(ch)
		ref.Close()
		want := map[[2]int]float64{}
		var sc hmmScratch
		for s := 0; s < ns; s++ {
			sc.code = grow(sc.code, n)
			ch.unpack(s, sc.code)
			if pl {
				sc.fillEmissions(ch, s)
			}
			sc.forwardViterbi(ch, ch.trans, cfg.AutozygousPrior, !pl)
			sc.backward(ch.trans, cfg.AutozygousPrior, ch.cm, nil, sc.path)
			for t, st := range sc.path {
				if st == stA {
					want[[2]int{s, t}] = sc.post[t]
				}
			}
		}
		got := map[[2]int]float64{}
		postHook = func(s, t int, p float64) { got[[2]int{s, t}] = p }
		c := *cfg
		c.MemoryBudget = 1
		c.TempDir = t.TempDir()
		c.Threads = 1
		runCollector(t, &c, ns, contigs, bs, fs, false)
		postHook = nil
		mid := 0
		for _, v := range want {
			if v > 0.01 && v < 0.99 {
				mid++
			}
		}
		if len(want) < 500 || mid < 100 {
			t.Fatalf("only %d autozygous sites, %d with a posterior in (0.01, 0.99)", len(want), mid)
		}
		if len(got) != len(want) {
			t.Errorf("likelihoods %v: %d posteriors, want %d", pl, len(got), len(want))
		}
		bad := 0
		for k, v := range want {
			if g, ok := got[k]; !ok || math.Float64bits(g) != math.Float64bits(v) {
				if bad++; bad < 5 {
					t.Errorf("likelihoods %v: sample %d site %d: posterior %v, want %v", pl, k[0], k[1], g, v)
				}
			}
		}
	}
}
