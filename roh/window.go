package roh

import "unsafe"

// A chromosome is held as a sequence of windows of W consecutive sites
// (the last one may be shorter). A window keeps, for all samples, the
// calls of its sites packed 2 bits each (sample-major inside the window,
// so a worker walks one sample's calls contiguously), the per-site inputs
// (position, frequency, genetic position, likelihood index) and, for the
// HMM, what the three sweeps of detection leave for each other: Viterbi
// back-pointer flags (later the state path), and forward and backward
// checkpoints every block of 128 sites. Windows beyond the memory budget
// are written to a temporary file (see spillFile) and read back one at a
// time, so that memory is bounded whatever the chromosome length.

// blockSites is the distance, in sites, between forward and backward
// checkpoints: posteriors are recomputed only inside blocks holding
// autozygous sites of the Viterbi path. A multiple of 64 and of
// rescaleEvery.
const blockSites = 128

// geometry fixes the layout of every window of one collector.
type geometry struct {
	ns  int  // samples
	w   int  // sites per window, a multiple of blockSites
	ww  int  // 64-bit words per sample per window (w/32)
	nb  int  // checkpoint blocks per window (w/blockSites)
	hmm bool // windows carry HMM sweep data (bp, checkpoints)
	age int  // numbers per sample of the age fit's checkpoint (window.ageCk), 0 when off
}

// windowSites picks W for ns samples and a memory budget: at most 4,096
// sites (so the per-site tables of a window, 160 bytes a site, stay in
// the processor's second-level cache while all samples walk them), and a
// window at most a sixteenth of the budget (two or three windows are in
// flight while the others wait on disk).
func windowSites(ns int, budget int64) int {
	perSite := int64(ns)*3/4 + 36 + 16
	w := budget / 16 / perSite
	w = w / blockSites * blockSites
	return int(min(max(w, blockSites), maxWindowSites))
}

func newGeometry(ns int, budget int64, hmm bool) geometry {
	w := windowSites(ns, budget)
	return geometry{ns: ns, w: w, ww: w / 32, nb: w / blockSites, hmm: hmm}
}

// window is one stretch of sites. Slices are nil while the window's data
// are on disk (off >= 0).
type window struct {
	k   int // index in the chromosome
	t0  int // chromosome index of the first site
	n   int // sites held
	nPL int // sites with likelihoods
	// cmPrev is the genetic position of site t0-1 (0 for the first window).
	cmPrev float64

	pos    []int64
	freq   []float64
	cm     []float64
	u      []float64 // HMM: switch weight before each site (see switchWeights), set by sweep 1
	plSite []int32   // per site: index of its likelihood triple among this window's, or -1

	geno []uint64  // ns*ww: calls, sample s at [s*ww, (s+1)*ww)
	pl   []uint8   // ns*3*w when nPL > 0: sample s at [3*w*s, 3*w*(s+1))
	bp   []uint64  // ns*ww: Viterbi flags, 2 bits a site (see forwardPair); after sweep 2 the path, 1 bit a site (see reversePair)
	ckF  []float64 // ns*nb*2: forward values (scaled) after the site before each block
	ckB  []float64 // ns*nb*2: backward values (scaled) at the last site of each block
	// ageCk holds, per sample, the age fit's forward state at the
	// window's first site (see ageChrom.forwardWindow).
	ageCk []float64

	off  int64 // file offset of the spilled data, or -1 while in memory
	size int64 // bytes of the in-memory buffers (for the budget)
}

// alloc gives a window its buffers (without likelihoods; see allocPL).
func (g geometry) alloc(w *window) {
	w.pos = make([]int64, 0, g.w)
	w.freq = make([]float64, 0, g.w)
	w.cm = make([]float64, 0, g.w)
	w.plSite = make([]int32, 0, g.w)
	w.geno = make([]uint64, g.ns*g.ww)
	if g.hmm {
		w.u = make([]float64, g.w)
		w.bp = make([]uint64, g.ns*g.ww)
		w.ckF = make([]float64, g.ns*g.nb*2)
		w.ckB = make([]float64, g.ns*g.nb*2)
	}
	if g.age > 0 {
		w.ageCk = make([]float64, g.ns*g.age)
	}
	w.off = -1
	w.size = g.bytes(false)
}

func (g geometry) allocPL(w *window) {
	if w.pl == nil {
		w.pl = make([]uint8, 3*g.w*g.ns)
		w.size = g.bytes(true)
	}
}

// bytes is the memory of one window's buffers.
func (g geometry) bytes(pl bool) int64 {
	b := int64(g.w)*28 + int64(g.ns*g.ww)*8
	if g.hmm {
		b += int64(g.w)*8 + int64(g.ns*g.ww)*8 + int64(g.ns*g.nb)*32
	}
	if pl {
		b += int64(3 * g.w * g.ns)
	}
	b += int64(g.ns*g.age) * 8
	return b
}

// reset empties a window for reuse.
func (w *window) reset(k, t0 int, cmPrev float64) {
	w.k, w.t0, w.n, w.nPL, w.cmPrev = k, t0, 0, 0, cmPrev
	w.pos, w.freq, w.cm, w.plSite = w.pos[:0], w.freq[:0], w.cm[:0], w.plSite[:0]
	clear(w.geno)
	w.off = -1
}

// drop forgets a window's buffers (its data are on disk, or no longer
// needed).
func (w *window) drop() {
	w.pos, w.freq, w.cm, w.u, w.plSite, w.geno, w.pl, w.bp, w.ckF, w.ckB, w.ageCk = nil, nil, nil, nil, nil, nil, nil, nil, nil, nil, nil
}

// code returns sample s's call at window site lt.
func (g geometry) code(w *window, s, lt int) uint8 {
	return uint8(w.geno[s*g.ww+lt>>5]>>(uint(lt&31)*2)) & 3
}

// codeEmission is the pair of emissions (autozygous, not) of window site lt
// for the genotype code in gw, one sample's packed calls of the window
// (w.geno[s*g.ww:(s+1)*g.ww]), from rows, the window's emissionRow table.
func codeEmission(gw []uint64, rows []float32, lt int) (float64, float64) {
	c := uint8(gw[lt>>5]>>(uint(lt&31)*2)) & 3
	row := rows[8*lt : 8*lt+8 : 8*lt+8]
	return float64(row[c]), float64(row[4+c])
}

// isA tells whether window site lt is autozygous on sample s's path
// (after sweep 2).
func (g geometry) isA(w *window, s, lt int) bool {
	return w.bp[s*g.ww+2*(lt>>6)]>>uint(lt&63)&1 != 0
}

// asBytes views a slice of fixed-size numbers as bytes, for writing and
// reading temporary files without a copy. Temporary files are read back
// only by the process that wrote them, so native byte order is fine.
func asBytes[T int64 | uint64 | float64 | int32 | uint8](s []T) []byte {
	if len(s) == 0 {
		return nil
	}
	return unsafe.Slice((*byte)(unsafe.Pointer(&s[0])), len(s)*int(unsafe.Sizeof(s[0])))
}

// sections lists a window's buffers in file order; per-site ones are cut
// to n sites, likelihoods present only when nPL > 0.
func (g geometry) sections(w *window) [][]byte {
	s := [][]byte{asBytes(w.geno)}
	if g.hmm {
		s = append(s, asBytes(w.bp), asBytes(w.ckF), asBytes(w.ckB), asBytes(w.u[:w.n]))
	}
	s = append(s, asBytes(w.pos[:w.n]), asBytes(w.freq[:w.n]), asBytes(w.cm[:w.n]), asBytes(w.plSite[:w.n]))
	if w.nPL > 0 {
		s = append(s, w.pl)
	}
	if g.age > 0 {
		s = append(s, asBytes(w.ageCk))
	}
	return s
}

// ageCkOffset is the offset of w.ageCk within the window's spilled data:
// the last section.
func (g geometry) ageCkOffset(w *window) int64 {
	secs := g.sections(w)
	var off int64
	for _, b := range secs[:len(secs)-1] {
		off += int64(len(b))
	}
	return off
}

// maxWindowSites caps W.
var maxWindowSites int64 = 1024

// anyAutozygous tells whether some sample's path (after sweep 2) has an
// autozygous site in window w.
func (g geometry) anyAutozygous(w *window) bool {
	words := (w.n + 63) / 64
	for s := 0; s < g.ns; s++ {
		p := w.bp[s*g.ww : (s+1)*g.ww]
		for m := 0; m < words; m++ {
			x := p[2*m]
			if r := w.n - 64*m; r < 64 {
				x &= 1<<uint(r) - 1
			}
			if x != 0 {
				return true
			}
		}
	}
	return false
}
