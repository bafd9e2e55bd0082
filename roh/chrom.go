package roh

import "encoding/binary"

// chromData holds one whole chromosome for the detectors that need it
// whole (the rules, the fitted HMM; see chromRun.materialize): per-site
// positions and allele frequencies, and per-sample genotypes packed 2
// bits per call (32 calls per uint64), sample-major so that a worker walks
// one sample's calls contiguously. Phred likelihoods, where present, take
// 3 bytes per call (capped at 255) in a per-sample slice indexed by
// plSite. For S sites and N samples it takes N*S/4 bytes of genotypes,
// 3*N bytes per site with likelihoods, 20*S bytes of per-site data, and
// while it is detected another 48*S bytes of shared tables and 50*S bytes
// per worker.
type chromData struct {
	id     int
	name   string
	length int64
	pos    []int64
	freq   []float64
	cm     []float64
	geno   [][]uint64
	plSite []int32
	pl     [][]uint8 // nil until a site with likelihoods is seen
	nPL    int32

	// built before detection, shared read-only by workers
	emit  []float32 // 8 per site: see emissionRow
	trans []float64 // 1 per site: see switchWeights
}

func newChromData(id int, name string, length int64, nSamples int) *chromData {
	return &chromData{id: id, name: name, length: length, geno: make([][]uint64, nSamples)}
}

// unpack writes sample s's genotype codes (0..3) into dst. Whole words
// go a byte (four codes) at a time through unpackByte.
func (ch *chromData) unpack(s int, dst []uint8) {
	words := ch.geno[s]
	n := len(dst)
	for w, v := range words {
		base := w * 32
		if base+32 <= n {
			d := dst[base : base+32 : base+32]
			for k := 0; k < 32; k += 4 {
				binary.LittleEndian.PutUint32(d[k:k+4:k+4], unpackByte[uint8(v)])
				v >>= 8
			}
			continue
		}
		for t := base; t < n; t++ {
			dst[t] = uint8(v & 3)
			v >>= 2
		}
	}
}

// unpackByte[b] holds the four 2-bit codes of b as four bytes, lowest
// code first (little-endian).
var unpackByte = func() (t [256]uint32) {
	for b := range t {
		for k := 0; k < 4; k++ {
			t[b] |= uint32(b>>(2*k)&3) << (8 * k)
		}
	}
	return
}()
