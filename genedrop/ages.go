package genedrop

import (
	"fmt"
	"math/rand/v2"
	"sort"
	"strconv"
	"strings"
)

// Ages of autozygosity.
//
// With Config.Ages (or Config.AncestralEpochs) the simulation records, for
// every autozygous stretch of every animal, where its two copies meet: the
// common ancestor and the number of meioses from it to each copy. The age
// of a stretch is
//
//	ancestor_generations = (m0 + m1) / 2
//
// where m0 and m1 count the meioses from the common ancestor's copy down to
// the animal's copy from its sire and from its dam. For a symmetric loop it
// is the ancestor's generation depth counted from the animal (selfing: 1,
// full sibs: 2, first cousins: 3); a sire mated to his daughter gives
// (1 + 2) / 2 = 1.5. The length of such a stretch along the genome is
// exponential with rate m0 + m1 per Morgan, so mean 100 / (2 g) cM for age g
// (Haldane 1919 crossovers; the relation used by multi-class autozygosity
// models, Druet & Gautier 2017, Molecular Ecology 26:5820-5841).
//
// Pedigree stretches (source "pedigree"): both copies descend from the same
// founder chromosome copy; the common ancestor is found by tracing both
// copies up the pedigree at each position (the first shared animal copy).
// A merged stretch of Result.Segments is split where the common ancestor
// changes.
//
// Ancestral stretches (source "ancestral"): the two copies descend from
// different founder copies that carry the same old haplotype of an
// ancestral epoch (see Epoch). Their age is the epoch's age plus half the
// pedigree meioses from the two founder copies down to the animal.

// Epoch is one layer of old shared ancestry behind the founders. Each
// founder chromosome copy is a mosaic: a share Share of it (on average)
// copies one of Haplotypes old haplotypes of the epoch, in pieces whose
// lengths are exponential with mean 100/Generations cM (Generations meioses
// between the old haplotype and the founder copy); the rest copies the
// ancestral haplotype pool directly in short pieces (identity by state
// only, not autozygous). Two founder copies that hold the same old
// haplotype at a position share a segment whose length is exponential
// with mean 100/(2 Generations) cM: the ancient autozygosity of an
// unrelated founder from this epoch is about Share^2/Haplotypes.
type Epoch struct {
	Generations int
	Haplotypes  int
	Share       float64
}

// String gives the epoch in the form ParseEpochs reads.
func (e Epoch) String() string {
	return fmt.Sprintf("%d:%d:%s", e.Generations, e.Haplotypes, ftoa(e.Share))
}

// ExpectedF is the ancient autozygosity this epoch gives an unrelated
// founder: the chance that both its copies copy the epoch at a position,
// and the same old haplotype.
func (e Epoch) ExpectedF() float64 { return e.Share * e.Share / float64(e.Haplotypes) }

// ParseEpochs parses "generations:haplotypes:share,...", e.g.
// "16:20:0.3,64:10:0.3,256:5:0.3".
func ParseEpochs(s string) ([]Epoch, error) {
	var out []Epoch
	for _, part := range strings.Split(s, ",") {
		f := strings.Split(strings.TrimSpace(part), ":")
		if len(f) != 3 {
			return nil, fmt.Errorf("%w: ancestral epoch %q: want generations:haplotypes:share", ErrConfig, part)
		}
		g, err1 := strconv.Atoi(f[0])
		k, err2 := strconv.Atoi(f[1])
		sh, err3 := strconv.ParseFloat(f[2], 64)
		if err1 != nil || err2 != nil || err3 != nil {
			return nil, fmt.Errorf("%w: ancestral epoch %q: want whole generations, whole haplotypes and a share", ErrConfig, part)
		}
		out = append(out, Epoch{Generations: g, Haplotypes: k, Share: sh})
	}
	c := Config{AncestralEpochs: out}
	return out, c.checkEpochs()
}

// checkEpochs validates Config.AncestralEpochs.
func (c *Config) checkEpochs() error {
	var sum float64
	for _, e := range c.AncestralEpochs {
		if e.Generations < 1 || e.Generations > 100_000 || e.Haplotypes < 1 || e.Haplotypes > 100_000 || !(e.Share > 0 && e.Share <= 1) {
			return fmt.Errorf("%w: ancestral epoch %s: want 1..100000 generations, 1..100000 haplotypes and a share in (0, 1]", ErrConfig, e)
		}
		sum += e.Share
	}
	if sum > 1+1e-12 {
		return fmt.Errorf("%w: ancestral epoch shares sum to %v (at most 1)", ErrConfig, sum)
	}
	return nil
}

// agesOn reports whether ages are recorded.
func (c *Config) agesOn() bool { return c.Ages || len(c.AncestralEpochs) > 0 }

// AgeCuts are the age limits (generations) of SampleAges.Within.
var AgeCuts = [...]int{2, 4, 8, 16, 32, 64, 128, 256}

// Source says where an autozygous stretch comes from.
type Source uint8

// Sources of autozygosity.
const (
	SourcePedigree  Source = 1 // same founder copy (within the simulated pedigree)
	SourceAncestral Source = 2 // same old haplotype of an ancestral epoch
)

func (s Source) String() string {
	switch s {
	case SourcePedigree:
		return "pedigree"
	case SourceAncestral:
		return "ancestral"
	}
	return "unknown"
}

// AgedSegment is an autozygous stretch with one common ancestor.
type AgedSegment struct {
	Segment
	Source Source
	// Ancestor is the index (into Result.Samples) of the common ancestor
	// of a pedigree stretch, -1 for ancestral stretches.
	Ancestor int
	// Epoch is the index into Config.AncestralEpochs of an ancestral
	// stretch, -1 for pedigree stretches.
	Epoch int
	// Meioses from the common ancestor's copy to the animal's copy from
	// its sire (0) and from its dam (1). For ancestral stretches they
	// include the epoch's generations.
	Meioses [2]int
}

// Generations is the age of the stretch: (Meioses[0] + Meioses[1]) / 2.
func (a AgedSegment) Generations() float64 { return float64(a.Meioses[0]+a.Meioses[1]) / 2 }

// SampleAges is the autozygosity of one animal split by source and age,
// as shares of the genome's bp (the measure of SampleTruth.FRealized).
type SampleAges struct {
	// Within[k]: stretches whose age is at most AgeCuts[k] generations.
	Within [len(AgeCuts)]float64
	// Pedigree equals SampleTruth.FRealized; Ancestral is the share from
	// the ancestral epochs; Total their sum (all ages).
	Pedigree, Ancestral, Total float64
}

// epochPiece is a piece of a founder copy: copied from old haplotype Hap
// of epoch Epoch, or from the pool directly (Epoch -1), up to End (cM).
type epochPiece struct {
	End   float64
	Epoch int32
	Hap   int32
}

// makeEpochPieces draws, for every founder copy and chromosome, which
// stretches copy which old haplotype of which epoch. The type of the next
// piece is drawn with probability proportional to share / mean length, so
// each type covers its share of the genome; the first piece is drawn from
// the shares themselves (the stationary state). Consecutive pool pieces
// are merged.
func (r *Result) makeEpochPieces(rng *rand.Rand) {
	eps := r.Config.AncestralEpochs
	nt := len(eps) + 1 // last type: the pool directly
	share := make([]float64, nt)
	mean := make([]float64, nt)
	rest := 1.0
	for t, e := range eps {
		share[t], mean[t] = e.Share, 100/float64(e.Generations)
		rest -= e.Share
	}
	share[nt-1], mean[nt-1] = max(rest, 0), r.Config.AncestralSegmentCM
	if share[nt-1] < 1e-12 {
		share[nt-1] = 0
	}
	cumOf := func(w []float64) []float64 {
		c := make([]float64, len(w))
		var s float64
		for i, x := range w {
			s += x
			c[i] = s
		}
		for i := range c {
			c[i] /= s
		}
		return c
	}
	next := make([]float64, nt)
	for t := range next {
		next[t] = share[t] / mean[t]
	}
	first, cnext := cumOf(share), cumOf(next)
	draw := func(cum []float64) int {
		u := rng.Float64()
		for t, c := range cum {
			if u < c && (t == nt-1 || share[t] > 0) {
				return t
			}
		}
		for t := nt - 1; t >= 0; t-- {
			if share[t] > 0 {
				return t
			}
		}
		return nt - 1
	}
	r.epochs = make([][][]epochPiece, len(r.founders))
	for l := range r.epochs {
		r.epochs[l] = make([][]epochPiece, len(r.Chromosomes))
		for c, ch := range r.Chromosomes {
			var ps []epochPiece
			x := 0.0
			t := draw(first)
			for {
				x += rng.ExpFloat64() * mean[t]
				p := epochPiece{End: min(x, ch.LengthCM), Epoch: -1}
				if t < len(eps) {
					p.Epoch, p.Hap = int32(t), int32(rng.IntN(eps[t].Haplotypes))
				}
				if k := len(ps); k > 0 && p.Epoch < 0 && ps[k-1].Epoch < 0 {
					ps[k-1].End = p.End
				} else {
					ps = append(ps, p)
				}
				if x >= ch.LengthCM {
					break
				}
				t = draw(cnext)
			}
			r.epochs[l][c] = ps
		}
	}
}

// poolMosaic appends to ms a mosaic of the ancestral pool over [from, to)
// with exponential pieces of mean cM, as in makeFounderMosaics.
func poolMosaic(rng *rand.Rand, ms []ancSeg, from, to float64, K int, mean float64) []ancSeg {
	x := from
	for {
		x += rng.ExpFloat64() * mean
		a := int32(rng.IntN(K))
		if x >= to {
			return append(ms, ancSeg{End: to, Anc: a})
		}
		ms = append(ms, ancSeg{End: x, Anc: a})
	}
}

// makeEpochMosaics builds the founder mosaics when ancestral epochs are
// set: every old haplotype of every epoch is itself a pool mosaic over the
// whole chromosome; a founder copy takes the old haplotype's mosaic over
// its epoch pieces and fresh pool pieces elsewhere, so copies that share an
// old haplotype carry the same alleles there.
func (r *Result) makeEpochMosaics(rng *rand.Rand) {
	K := r.Config.AncestralHaplotypes
	mean := r.Config.AncestralSegmentCM
	eps := r.Config.AncestralEpochs
	old := make([][][][]ancSeg, len(eps)) // [epoch][hap][chrom]
	for e, ep := range eps {
		old[e] = make([][][]ancSeg, ep.Haplotypes)
		for k := range old[e] {
			old[e][k] = make([][]ancSeg, len(r.Chromosomes))
			for c, ch := range r.Chromosomes {
				old[e][k][c] = poolMosaic(rng, nil, 0, ch.LengthCM, K, mean)
			}
		}
	}
	for l := range r.founders {
		r.founders[l] = make([][]ancSeg, len(r.Chromosomes))
		for c := range r.Chromosomes {
			var ms []ancSeg
			start := 0.0
			for _, p := range r.epochs[l][c] {
				if p.Epoch < 0 {
					ms = poolMosaic(rng, ms, start, p.End, K, mean)
				} else {
					src := old[p.Epoch][p.Hap][c]
					j := sort.Search(len(src), func(j int) bool { return src[j].End > start })
					for ; j < len(src); j++ {
						if src[j].End >= p.End {
							ms = append(ms, ancSeg{End: p.End, Anc: src[j].Anc})
							break
						}
						ms = append(ms, src[j])
					}
				}
				start = p.End
			}
			r.founders[l][c] = ms
		}
	}
}

// depthSeg: the copy is D meioses below its founder copy up to End (cM).
type depthSeg struct {
	End float64
	D   int32
}

// depthMaps gives, for every animal, chromosome and copy, the number of
// meioses between the copy and the founder copy it descends from, along
// the genome. Animals come parents first.
func (r *Result) depthMaps() [][][2][]depthSeg {
	p := r.Pedigree
	out := make([][][2][]depthSeg, p.Len())
	for i := range out {
		out[i] = make([][2][]depthSeg, len(r.Chromosomes))
		parents := [2]int{p.Sire(i), p.Dam(i)}
		for c, ch := range r.Chromosomes {
			for h, par := range parents {
				if par < 0 {
					out[i][c][h] = []depthSeg{{End: ch.LengthCM, D: 0}}
					continue
				}
				var ds []depthSeg
				start := 0.0
				for _, o := range r.origin[i][c][h] {
					src := out[par][c][o.Label]
					j := sort.Search(len(src), func(j int) bool { return src[j].End > start })
					for ; j < len(src) && start < o.End; j++ {
						end := min(src[j].End, o.End)
						if end > start {
							d := src[j].D + 1
							if k := len(ds); k > 0 && ds[k-1].D == d {
								ds[k-1].End = end
							} else {
								ds = append(ds, depthSeg{End: end, D: d})
							}
						}
						start = end
					}
				}
				out[i][c][h] = ds
			}
		}
	}
	return out
}

// node is one chromosome copy of one animal.
type node struct {
	ind int32
	hap uint8
}

// lineage calls fn for the pieces of [s, e) over which copy h of animal
// ind traces to the same chain of ancestral copies, with that chain
// (path[0] is the copy itself, the last entry its founder copy). fn must
// copy path to keep it.
func (r *Result) lineage(ind, h, c int, s, e float64, path []node, fn func(s, e float64, path []node)) {
	path = append(path, node{int32(ind), uint8(h)})
	par := r.Pedigree.Sire(ind)
	if h == 1 {
		par = r.Pedigree.Dam(ind)
	}
	if par < 0 {
		fn(s, e, path)
		return
	}
	start := 0.0
	for _, o := range r.origin[ind][c][h] {
		if lo, hi := max(start, s), min(o.End, e); lo < hi {
			r.lineage(par, int(o.Label), c, lo, hi, path, fn)
		}
		start = o.End
		if start >= e {
			break
		}
	}
}

type linPiece struct {
	s, e float64
	path []node
}

// pieceKey identifies one common-ancestor event; adjacent pieces with the
// same key are one stretch.
type pieceKey struct {
	src      Source
	anc      node
	m0, m1   int
	la, lb   int32 // founder labels (ancestral)
	pa, pb   int   // epoch piece indices (ancestral)
	epoch    int
	ancestor int
}

type agePiece struct {
	s, e float64
	key  pieceKey
}

// agePieces returns the aged autozygous pieces of animal i on chromosome c
// in position order.
func (r *Result) agePieces(i, c int, depth [][][2][]depthSeg) []agePiece {
	var out []agePiece
	emit := func(s, e float64, k pieceKey) {
		if e <= s {
			return
		}
		if n := len(out); n > 0 && out[n-1].key == k && out[n-1].e == s {
			out[n-1].e = e
			return
		}
		out = append(out, agePiece{s, e, k})
	}
	pedigreeRun := func(s, e float64) {
		var pa, pb []linPiece
		collect := func(dst *[]linPiece) func(s, e float64, path []node) {
			return func(s, e float64, path []node) {
				*dst = append(*dst, linPiece{s, e, append([]node(nil), path...)})
			}
		}
		r.lineage(i, 0, c, s, e, nil, collect(&pa))
		r.lineage(i, 1, c, s, e, nil, collect(&pb))
		for ja, jb := 0, 0; ja < len(pa) && jb < len(pb); {
			A, B := pa[ja].path, pb[jb].path
			lo, hi := max(pa[ja].s, pb[jb].s), min(pa[ja].e, pb[jb].e)
			ia, ib := len(A)-1, len(B)-1
			if A[ia] != B[ib] {
				panic("genedrop: autozygous copies trace to different founder copies")
			}
			for ia > 0 && ib > 0 && A[ia-1] == B[ib-1] {
				ia--
				ib--
			}
			emit(lo, hi, pieceKey{src: SourcePedigree, anc: A[ia], m0: ia, m1: ib, la: -1, lb: -1, pa: -1, pb: -1, epoch: -1, ancestor: int(A[ia].ind)})
			if pa[ja].e == hi {
				ja++
			}
			if pb[jb].e == hi {
				jb++
			}
		}
	}
	eps := r.Config.AncestralEpochs
	ancestral := func(s, e float64, la, lb int32, da, db int32) {
		ea, eb := r.epochs[la][c], r.epochs[lb][c]
		ja := sort.Search(len(ea), func(j int) bool { return ea[j].End > s })
		jb := sort.Search(len(eb), func(j int) bool { return eb[j].End > s })
		x := s
		for x < e && ja < len(ea) && jb < len(eb) {
			end := min(ea[ja].End, eb[jb].End, e)
			if p, q := ea[ja], eb[jb]; p.Epoch >= 0 && p.Epoch == q.Epoch && p.Hap == q.Hap {
				g := eps[p.Epoch].Generations
				emit(x, end, pieceKey{src: SourceAncestral, anc: node{-1, 0}, m0: g + int(da), m1: g + int(db),
					la: la, lb: lb, pa: ja, pb: jb, epoch: int(p.Epoch), ancestor: -1})
			}
			if ea[ja].End == end {
				ja++
			}
			if eb[jb].End == end {
				jb++
			}
			x = end
		}
	}
	a, b := r.haps[i][c][0], r.haps[i][c][1]
	da, db := depth[i][c][0], depth[i][c][1]
	ja, jb, ka, kb := 0, 0, 0, 0
	x := 0.0
	inRun, runStart := false, 0.0
	for ja < len(a) && jb < len(b) && ka < len(da) && kb < len(db) {
		end := min(a[ja].End, b[jb].End, da[ka].End, db[kb].End)
		if end > x {
			if a[ja].Label == b[jb].Label {
				if !inRun {
					inRun, runStart = true, x
				}
			} else {
				if inRun {
					pedigreeRun(runStart, x)
					inRun = false
				}
				if len(eps) > 0 {
					ancestral(x, end, a[ja].Label, b[jb].Label, da[ka].D, db[kb].D)
				}
			}
			x = end
		}
		if a[ja].End == end {
			ja++
		}
		if b[jb].End == end {
			jb++
		}
		if da[ka].End == end {
			ka++
		}
		if db[kb].End == end {
			kb++
		}
	}
	if inRun {
		pedigreeRun(runStart, x)
	}
	return out
}

// recordAges fills Result.AgedSegments and Result.Ages.
func (r *Result) recordAges() {
	depth := r.depthMaps()
	var genomeBP int64
	for _, ch := range r.Chromosomes {
		genomeBP += ch.LengthBP
	}
	r.Ages = make([]SampleAges, len(r.Samples))
	for i := range r.Samples {
		var within [len(AgeCuts)]int64
		var ped, anc int64
		for c := range r.Chromosomes {
			for _, p := range r.agePieces(i, c, depth) {
				sg, ok := r.newSegment(i, c, p.s, p.e)
				if !ok {
					continue
				}
				as := AgedSegment{Segment: sg, Source: p.key.src, Ancestor: p.key.ancestor, Epoch: p.key.epoch, Meioses: [2]int{p.key.m0, p.key.m1}}
				r.AgedSegments = append(r.AgedSegments, as)
				bp := sg.LengthBP()
				if as.Source == SourcePedigree {
					ped += bp
				} else {
					anc += bp
				}
				for k, g := range AgeCuts {
					if as.Generations() <= float64(g) {
						within[k] += bp
					}
				}
			}
		}
		sa := &r.Ages[i]
		for k := range within {
			sa.Within[k] = float64(within[k]) / float64(genomeBP)
		}
		sa.Pedigree = float64(ped) / float64(genomeBP)
		sa.Ancestral = float64(anc) / float64(genomeBP)
		sa.Total = float64(ped+anc) / float64(genomeBP)
	}
}
