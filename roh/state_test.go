package roh

import (
	"fmt"
	"testing"
)

// Pieces of a chromosome collected by separate shards and joined give the
// same runs, qualities and fitted parameters as one collector over the
// whole chromosome (identity by construction: the joined data are the
// same). Cuts fall inside packed genotype words on purpose.
func TestJoinAndDetectMatchesWhole(t *testing.T) {
	const ns = 5
	contigs, sites := randomCohort(9, ns)
	for _, tc := range []struct {
		name string
		edit func(*Config)
	}{
		{"hmm", func(*Config) {}},
		{"hmm_fit", func(c *Config) { c.Fit = true; c.FitIterations = 5 }},
		{"rules", func(c *Config) { c.Method = MethodRules }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cfg := DefaultConfig()
			cfg.Threads = 2
			tc.edit(cfg)
			whole := collect(t, cfg, sampleNames(ns), contigs, sites)
			// Chromosome 1 (id 0) in three shards, X (not an autosome) in two.
			cuts := []int64{7_777_777, 19_000_001}
			shardOf := func(s site) int {
				k := 0
				for k < len(cuts) && s.pos >= cuts[k] {
					k++
				}
				return k
			}
			var groups []Piece
			excluded := map[string]int64{}
			for k := 0; k <= len(cuts); k++ {
				var part []site
				for _, s := range sites {
					if (s.chrom == 0 || s.chrom == 2) && shardOf(s) == k {
						part = append(part, s)
					}
				}
				pc, err := NewPieceCollector(cfg, ns)
				if err != nil {
					t.Fatal(err)
				}
				bs, fs := batches(part, ns, 97)
				for i, b := range bs {
					if err := pc.AddBatch(b, fs[i]); err != nil {
						t.Fatal(err)
					}
				}
				ps, ex := pc.Pieces(contigs)
				if len(ps) != 1 || ps[0].Name != "1" {
					t.Fatalf("shard %d: pieces %d", k, len(ps))
				}
				groups = append(groups, ps...)
				for n, v := range ex {
					excluded[n] += v
				}
			}
			joined, err := JoinAndDetect(cfg, sampleNames(ns), [][]Piece{groups})
			if err != nil {
				t.Fatal(err)
			}
			// %+v prints NaN qualities (rules) alike, unlike reflect.DeepEqual.
			if len(joined.Chroms) != 1 || fmt.Sprintf("%+v", joined.Chroms[0]) != fmt.Sprintf("%+v", whole.Chroms[0]) {
				t.Errorf("joined chromosome 1 differs from the single pass: %d vs %d runs",
					len(joined.Chroms[0].Runs), len(whole.Chroms[0].Runs))
			}
			if len(whole.Chroms[0].Runs) == 0 {
				t.Error("no runs on chromosome 1: the check is empty")
			}
			if excluded["X"] != whole.Excluded["X"] || excluded["X"] == 0 {
				t.Errorf("X records counted %d by pieces, %d by the collector", excluded["X"], whole.Excluded["X"])
			}
		})
	}
}

func TestJoinRejectsBadPieces(t *testing.T) {
	p := Piece{Name: "1", Pos: []int64{100, 200}, Freq: []float64{0.5, 0.5}, Geno: [][]uint64{{0}}, PLSite: []int32{-1, -1}}
	q := p
	q.Pos = []int64{150, 300}
	for _, tc := range []struct {
		name   string
		pieces []Piece
	}{
		{"overlapping", []Piece{p, q}},
		{"wrong sample count", []Piece{{Name: "1", Pos: []int64{1}, Freq: []float64{0.5}, Geno: [][]uint64{{0}, {0}}, PLSite: []int32{-1}}}},
		{"other chromosome", []Piece{p, {Name: "2", Pos: []int64{500}, Freq: []float64{0.5}, Geno: [][]uint64{{0}}, PLSite: []int32{-1}}}},
		{"short genotypes", []Piece{{Name: "1", Pos: []int64{1}, Freq: []float64{0.5}, Geno: [][]uint64{{}}, PLSite: []int32{-1}}}},
	} {
		if _, err := JoinAndDetect(DefaultConfig(), []string{"calf_a"}, [][]Piece{tc.pieces}); err == nil {
			t.Errorf("%s: want an error", tc.name)
		}
	}
}
