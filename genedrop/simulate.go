package genedrop

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"

	"fgauge/genmap"
	"fgauge/stats/pedigree"
)

// seg is a piece of a haplotype: label applies up to End (cM, exclusive),
// from the End of the previous piece (or 0).
type seg struct {
	End   float64
	Label int32
}

// SampleTruth is what is known about one simulated animal.
type SampleTruth struct {
	ID        string
	Replicate int    // 1-based
	Design    string // design string, or "pedigree" for the input pedigree
	Class     string // founder, parent, focal, herd_generation_k, non_founder, ...
	// FPedigree is the pedigree inbreeding coefficient (Meuwissen & Luo).
	FPedigree float64
	// FRealized is the share of the genome's bp in autozygous segments.
	FRealized    float64
	AutozygousBP int64
	NSegments    int
}

// Segment is one autozygous stretch: both genome copies of the animal
// descend from the same founder chromosome copy. Start and End are 1-based
// inclusive physical bounds of the tract (not site positions).
type Segment struct {
	Sample     int // index into Result.Samples
	Chrom      int // index into Result.Chromosomes
	Start, End int64
	StartCM    float64
	EndCM      float64
	NSites     int // simulated sites inside [Start, End]
}

// LengthBP returns End - Start + 1.
func (s Segment) LengthBP() int64 { return s.End - s.Start + 1 }

// siteSet holds the sites of one chromosome.
type siteSet struct {
	pos  []int64
	cm   []float64
	ref  []byte
	alt  []byte
	freq []float64 // alt allele frequency in the ancestral pool
	// anc[k] is a bitset over sites: allele of ancestral haplotype k.
	anc [][]uint64
}

// Result is a finished simulation, kept in memory.
type Result struct {
	Config      Config
	Chromosomes []Chromosome
	Pedigree    *pedigree.Pedigree // the pedigree used (with replicates)
	Samples     []SampleTruth      // in pedigree order (parents first), = VCF order
	Segments    []Segment          // sorted by sample, chrom, start
	// AgedSegments (only with Config.Ages or AncestralEpochs): autozygous
	// stretches with one common ancestor each, pedigree and ancestral,
	// sorted by sample, chrom, start; Ages is indexed like Samples.
	AgedSegments []AgedSegment
	Ages         []SampleAges

	sites []siteSet
	// haps[i][c][h]: haplotype h (0 from sire, 1 from dam) of animal i on chromosome c.
	haps [][][2][]seg
	// founders[label][c]: mosaic of ancestral haplotypes for founder copy label.
	founders [][][]ancSeg
	// origin[i][c][h]: which copy of the parent (Label 0 or 1) each piece
	// of haplotype h came from (only when ages are recorded).
	origin [][][2][]seg
	// epochs[label][c]: ancestral epoch pieces of founder copy label.
	epochs [][][]epochPiece
}

type ancSeg struct {
	End float64
	Anc int32
}

// NumSites returns the number of simulated sites on chromosome c.
func (r *Result) NumSites(c int) int { return len(r.sites[c].pos) }

// Run simulates cfg and returns the result with its truth.
func Run(cfg Config) (*Result, error) {
	if err := cfg.normalize(); err != nil {
		return nil, err
	}
	res := &Result{Config: cfg, Chromosomes: cfg.Chromosomes}
	members, err := assemble(&cfg)
	if err != nil {
		return nil, err
	}
	recs := make([]pedigree.Record, len(members))
	meta := make(map[string]*member, len(members))
	for i := range members {
		recs[i] = members[i].rec
		meta[members[i].rec.ID] = &members[i]
	}
	ped, err := pedigree.FromRecords(recs, "simulated pedigree")
	if err != nil {
		return nil, err
	}
	res.Pedigree = ped
	fped := ped.Inbreeding()

	dropRNG := rand.New(rand.NewPCG(cfg.Seed, 0x9e3779b97f4a7c15))
	res.geneDrop(dropRNG)
	if len(cfg.AncestralEpochs) > 0 {
		res.makeEpochPieces(rand.New(rand.NewPCG(cfg.Seed, 0x2545f4914f6cdd1d)))
	}

	if !cfg.NoSites {
		siteRNG := rand.New(rand.NewPCG(cfg.Seed, 0x5851f42d4c957f2d))
		res.makeSites(siteRNG)
	}
	founderRNG := rand.New(rand.NewPCG(cfg.Seed, 0x14057b7ef767814f))
	if !cfg.NoSites && len(cfg.AncestralEpochs) > 0 {
		res.makeEpochMosaics(founderRNG)
	} else if !cfg.NoSites {
		res.makeFounderMosaics(founderRNG)
	}

	n := ped.Len()
	res.Samples = make([]SampleTruth, n)
	var genomeBP int64
	for _, c := range res.Chromosomes {
		genomeBP += c.LengthBP
	}
	for i := 0; i < n; i++ {
		id := ped.ID(i)
		st := SampleTruth{ID: id, FPedigree: fped[i], Replicate: 1, Design: "pedigree", Class: "founder"}
		if m := meta[id]; m != nil {
			st.Design, st.Class, st.Replicate = m.design, m.class, m.rep
		} else if ped.Sire(i) >= 0 || ped.Dam(i) >= 0 {
			st.Class = "non_founder"
		}
		for c := range res.Chromosomes {
			for _, sg := range res.autozygous(i, c) {
				st.AutozygousBP += sg.LengthBP()
				st.NSegments++
				res.Segments = append(res.Segments, sg)
			}
		}
		st.FRealized = float64(st.AutozygousBP) / float64(genomeBP)
		res.Samples[i] = st
	}
	if cfg.agesOn() {
		res.recordAges()
	}
	return res, nil
}

// assemble lists every animal of the configured pedigree and designs,
// once per replicate, with unique ids.
func assemble(cfg *Config) ([]member, error) {
	var out []member
	herdRNG := rand.New(rand.NewPCG(cfg.Seed, 0xda3e39cb94b95bdb))
	for rep := 1; rep <= cfg.Replicates; rep++ {
		suffix := ""
		if cfg.Replicates > 1 {
			suffix = fmt.Sprintf("_r%d", rep)
		}
		if p := cfg.Pedigree; p != nil {
			for i := 0; i < p.Len(); i++ {
				r := pedigree.Record{ID: p.ID(i) + suffix, Sex: p.SexOf(i)}
				class := "founder"
				if s := p.Sire(i); s >= 0 {
					r.Sire = p.ID(s) + suffix
					class = "non_founder"
				}
				if d := p.Dam(i); d >= 0 {
					r.Dam = p.ID(d) + suffix
					class = "non_founder"
				}
				out = append(out, member{rec: r, design: "pedigree", class: class, rep: rep})
			}
		}
		for _, d := range cfg.Designs {
			if err := d.normalize(); err != nil {
				return nil, err
			}
			prefix := fmt.Sprintf("%s_r%d_", d.Kind, rep)
			for _, m := range d.build(prefix, herdRNG) {
				m.rep = rep
				out = append(out, m)
			}
		}
	}
	return out, nil
}

// geneDrop gives every animal two haplotypes per chromosome: a gamete of
// each known parent, or a fresh founder copy with a new label.
func (r *Result) geneDrop(rng *rand.Rand) {
	p := r.Pedigree
	n := p.Len()
	nc := len(r.Chromosomes)
	r.haps = make([][][2][]seg, n)
	ages := r.Config.agesOn()
	if ages {
		r.origin = make([][][2][]seg, n)
	}
	var label int32
	for i := 0; i < n; i++ {
		r.haps[i] = make([][2][]seg, nc)
		if ages {
			r.origin[i] = make([][2][]seg, nc)
		}
		parents := [2]int{p.Sire(i), p.Dam(i)}
		for h, par := range parents {
			if par < 0 {
				for c := 0; c < nc; c++ {
					r.haps[i][c][h] = []seg{{End: r.Chromosomes[c].LengthCM, Label: label}}
				}
				label++
				continue
			}
			for c := 0; c < nc; c++ {
				ph := r.haps[par][c]
				var orig *[]seg
				if ages {
					orig = &r.origin[i][c][h]
				}
				r.haps[i][c][h] = gamete(rng, ph[0], ph[1], r.Chromosomes[c].LengthCM, orig)
			}
		}
	}
	r.founders = make([][][]ancSeg, label)
}

// Crossovers returns the crossover positions (cM, increasing) of one
// meiosis on a chromosome of lengthCM: a Poisson process with rate one per
// Morgan, i.e. no interference (Haldane 1919, J Genet 8:299-309). The
// count is drawn from a Poisson distribution of mean lengthCM/100
// (gonum distuv.Poisson) and the positions uniformly on [0, lengthCM),
// which given the count is the same process.
func Crossovers(rng *rand.Rand, lengthCM float64, buf []float64) []float64 {
	buf = buf[:0]
	if !(lengthCM > 0) {
		return buf
	}
	n := int(distuv.Poisson{Lambda: lengthCM / 100, Src: rng}.Rand())
	for range n {
		buf = append(buf, rng.Float64()*lengthCM)
	}
	slices.Sort(buf)
	return buf
}

// HaldaneR is the recombination fraction between loci d Morgans apart
// under Haldane's map function: r = (1 - exp(-2d)) / 2 (Haldane 1919).
func HaldaneR(d float64) float64 { return (1 - math.Exp(-2*d)) / 2 }

// HaldaneD inverts HaldaneR: d = -ln(1 - 2r) / 2 Morgans, for 0 <= r < 1/2.
func HaldaneD(r float64) float64 { return -math.Log(1-2*r) / 2 }

// gamete recombines the two parental haplotypes a and b. With orig != nil
// it also records which of them (Label 0 for a, 1 for b) each piece copies.
func gamete(rng *rand.Rand, a, b []seg, lengthCM float64, orig *[]seg) []seg {
	var xbuf [16]float64
	xs := Crossovers(rng, lengthCM, xbuf[:0])
	src := [2][]seg{a, b}
	cur := rng.IntN(2)
	out := make([]seg, 0, len(a)+len(xs))
	start := 0.0
	emit := func(end float64, label int32) {
		if end <= start {
			return
		}
		if k := len(out); k > 0 && out[k-1].Label == label {
			out[k-1].End = end
		} else {
			out = append(out, seg{End: end, Label: label})
		}
		start = end
	}
	for k := 0; k <= len(xs); k++ {
		end := lengthCM
		if k < len(xs) {
			end = xs[k]
		}
		// copy src[cur] over [start, end)
		for _, s := range src[cur] {
			if s.End <= start {
				continue
			}
			e := math.Min(s.End, end)
			emit(e, s.Label)
			if s.End >= end {
				break
			}
		}
		if orig != nil {
			*orig = append(*orig, seg{End: end, Label: int32(cur)})
		}
		cur ^= 1
	}
	return out
}

// cmToBP converts a genetic position on chromosome c to bp (fractional).
// With a map, genetic positions count from the map's value at position 0
// (see mapLengthCM).
func (r *Result) cmToBP(c int, cm float64) float64 {
	ch := r.Chromosomes[c]
	if m := r.Config.Map.Chrom(ch.Name); m != nil {
		fb := mapFallback(ch)
		return m.PosAt(cm+m.At(0, fb), fb)
	}
	return cm / ch.LengthCM * float64(ch.LengthBP)
}

func (r *Result) bpToCM(c int, pos int64) float64 {
	ch := r.Chromosomes[c]
	if m := r.Config.Map.Chrom(ch.Name); m != nil {
		fb := mapFallback(ch)
		return m.At(pos, fb) - m.At(0, fb)
	}
	return float64(pos) / float64(ch.LengthBP) * ch.LengthCM
}

// mapLengthCM is the genetic length of chromosome ch under map m: the
// genetic distance from position 0 to its last base, by the rules of
// package genmap (a single-point map extrapolates at ch's own mean rate).
func mapLengthCM(m *genmap.Chrom, ch *Chromosome) float64 {
	fb := mapFallback(*ch)
	return m.At(ch.LengthBP, fb) - m.At(0, fb)
}

// mapFallback is the cM per Mb of chromosome ch's given lengths, used
// where its map has a single point.
func mapFallback(ch Chromosome) float64 {
	return ch.LengthCM / float64(ch.LengthBP) * 1e6
}

// autozygous returns the merged stretches of chromosome c where the two
// haplotypes of animal i carry the same founder label.
func (r *Result) autozygous(i, c int) []Segment {
	a, b := r.haps[i][c][0], r.haps[i][c][1]
	var out []Segment
	ja, jb := 0, 0
	start := 0.0
	inRun := false
	runStart := 0.0
	flush := func(end float64) {
		if sg, ok := r.newSegment(i, c, runStart, end); ok {
			out = append(out, sg)
		}
	}
	for ja < len(a) && jb < len(b) {
		end := math.Min(a[ja].End, b[jb].End)
		same := a[ja].Label == b[jb].Label
		if same && !inRun {
			inRun, runStart = true, start
		} else if !same && inRun {
			inRun = false
			flush(start)
		}
		start = end
		if a[ja].End == end {
			ja++
		}
		if jb < len(b) && b[jb].End == end {
			jb++
		}
	}
	if inRun {
		flush(start)
	}
	return out
}

// newSegment gives the 1-based inclusive bp bounds of [startCM, endCM) on
// chromosome c of animal i and the sites inside; false when no whole base
// falls inside.
func (r *Result) newSegment(i, c int, startCM, endCM float64) (Segment, bool) {
	ch := r.Chromosomes[c]
	s := int64(math.Floor(r.cmToBP(c, startCM))) + 1
	e := int64(math.Floor(r.cmToBP(c, endCM)))
	if endCM >= ch.LengthCM {
		e = ch.LengthBP
	}
	s = max(s, 1)
	e = min(e, ch.LengthBP)
	if e < s {
		return Segment{}, false
	}
	sg := Segment{Sample: i, Chrom: c, Start: s, End: e, StartCM: startCM, EndCM: endCM}
	if !r.Config.NoSites && r.sites != nil {
		pos := r.sites[c].pos
		lo := sort.Search(len(pos), func(k int) bool { return pos[k] >= s })
		hi := sort.Search(len(pos), func(k int) bool { return pos[k] > e })
		sg.NSites = hi - lo
	}
	return sg, true
}

// makeSites draws site positions, alleles and the ancestral pool.
func (r *Result) makeSites(rng *rand.Rand) {
	cfg := &r.Config
	K := cfg.AncestralHaplotypes
	bases := []byte("ACGT")
	r.sites = make([]siteSet, len(r.Chromosomes))
	for c, ch := range r.Chromosomes {
		ss := &r.sites[c]
		ss.anc = make([][]uint64, K)
		x := 0.0
		alleles := make([]bool, K)
		for {
			x += rng.ExpFloat64() * cfg.SiteSpacing
			pos := int64(x) + 1
			if pos > ch.LengthBP {
				break
			}
			if n := len(ss.pos); n > 0 && ss.pos[n-1] == pos {
				continue
			}
			// Draw a polymorphic ancestral pool at this site (bounded retries).
			var p float64
			ok := false
			for try := 0; try < 50 && !ok; try++ {
				switch cfg.Spectrum {
				case SpectrumNeutral:
					// density proportional to 1/x on [1/(2K), 1 - 1/(2K)]
					lo := 1 / float64(2*K)
					p = lo * math.Pow((1-lo)/lo, rng.Float64())
				default:
					s := math.Sin(math.Pi / 2 * rng.Float64())
					p = s * s // arcsine = Beta(1/2, 1/2)
				}
				nalt := 0
				for k := range alleles {
					alleles[k] = rng.Float64() < p
					if alleles[k] {
						nalt++
					}
				}
				maf := float64(min(nalt, K-nalt)) / float64(K)
				ok = nalt > 0 && nalt < K && maf >= cfg.MinMAF
				p = float64(nalt) / float64(K)
			}
			if !ok {
				continue
			}
			idx := len(ss.pos)
			if idx%64 == 0 {
				for k := range ss.anc {
					ss.anc[k] = append(ss.anc[k], 0)
				}
			}
			for k, a := range alleles {
				if a {
					ss.anc[k][idx/64] |= 1 << (idx % 64)
				}
			}
			ref := bases[rng.IntN(4)]
			alt := bases[(int(indexOf(bases, ref))+1+rng.IntN(3))%4]
			ss.pos = append(ss.pos, pos)
			ss.cm = append(ss.cm, r.bpToCM(c, pos))
			ss.ref = append(ss.ref, ref)
			ss.alt = append(ss.alt, alt)
			ss.freq = append(ss.freq, p)
		}
	}
}

func indexOf(b []byte, c byte) int {
	for i, x := range b {
		if x == c {
			return i
		}
	}
	return -1
}

// makeFounderMosaics builds, for every founder label, a mosaic of ancestral
// haplotypes with exponential piece lengths.
func (r *Result) makeFounderMosaics(rng *rand.Rand) {
	K := r.Config.AncestralHaplotypes
	mean := r.Config.AncestralSegmentCM
	for l := range r.founders {
		r.founders[l] = make([][]ancSeg, len(r.Chromosomes))
		for c, ch := range r.Chromosomes {
			var ms []ancSeg
			x := 0.0
			for {
				x += rng.ExpFloat64() * mean
				a := int32(rng.IntN(K))
				if x >= ch.LengthCM || mean == 0 {
					ms = append(ms, ancSeg{End: ch.LengthCM, Anc: a})
					break
				}
				ms = append(ms, ancSeg{End: x, Anc: a})
			}
			r.founders[l][c] = ms
		}
	}
}
