package vcfscan

import (
	"encoding/binary"
	"errors"
	"slices"
)

// tabixBuild is the in-memory tabix index TabixWriter fills (hts-specs,
// "The tabix index file format": a binning index of chunks per bin, a
// linear index of 16 kb windows, a pseudo-bin 37450 with the reference's
// span and record count). It takes the same steps as biogo/hts v1.4.5's
// index (internal.Index.Add, MergeChunks(index.Adjacent) and WriteIndex,
// tabix.WriteTo), so the .tbi bytes are the same, with one change: biogo
// finds a record's bin by a linear search over every bin of the
// reference, which made indexing a 1 M-site table cost O(sites x bins);
// here a map finds it. TestTabixBuildMatchesBiogo and FuzzTabixBuild
// compare the bytes with biogo's.
type tabixBuild struct {
	names    []string
	ids      map[string]int
	refs     []tabixRef
	lastBeg  int
	lastRef  int  // the reference of the previous record
	unmapped bool // set by the first record (biogo writes n_no_coor 0 then)
}

// tabixRef is one reference: its bins in order of first use, a map from
// bin number to position there, the linear index and the pseudo-bin.
type tabixRef struct {
	bins      []tabixBin
	binAt     map[uint32]int
	lastBin   int // the bin of the previous record
	intervals []Offset
	stats     bool
	span      Chunk
	records   uint64
}

type tabixBin struct {
	bin    uint32
	chunks []Chunk
	maxEnd uint64 // the largest chunk end: records in file order start there
	slow   bool   // a record out of file order came: merge only at the end
}

const tabixTileWidth = 1 << 14

var (
	errTabixOrder  = errors.New("index: attempt to add record out of position sort order")
	errTabixLength = errors.New("index: unexpected alignment length")
)

func newTabixBuild() *tabixBuild {
	return &tabixBuild{ids: make(map[string]int)}
}

// tabixBinFor is the bin of the 0-based half-open [beg, end) in the UCSC
// binning scheme of the SAM/tabix specs (reg2bin, hts-specs SAM v1 5.3).
func tabixBinFor(beg, end int) uint32 {
	end--
	switch {
	case beg>>14 == end>>14:
		return ((1<<15)-1)/7 + uint32(beg>>14)
	case beg>>17 == end>>17:
		return ((1<<12)-1)/7 + uint32(beg>>17)
	case beg>>20 == end>>20:
		return ((1<<9)-1)/7 + uint32(beg>>20)
	case beg>>23 == end>>23:
		return ((1<<6)-1)/7 + uint32(beg>>23)
	case beg>>26 == end>>26:
		return ((1<<3)-1)/7 + uint32(beg>>26)
	}
	return 0
}

// add records [beg, end) of chrom in chunk c; beg and end are in the
// indexable range (checked by TabixWriter.Add).
func (x *tabixBuild) add(chrom string, beg, end int, c Chunk) error {
	rid, ok := x.lastRef, x.names != nil && x.names[x.lastRef] == chrom
	if !ok {
		rid, ok = x.ids[chrom]
	}
	if !ok {
		rid = len(x.names)
		x.names = append(x.names, chrom)
		x.ids[chrom] = rid
	}
	x.lastRef = rid
	if !(beg >= -1 && beg <= 1<<29-2 && end >= -1 && end <= 1<<29-2) {
		return errors.New("index: attempt to add record outside indexable range")
	}
	x.unmapped = true
	switch {
	case rid < len(x.refs)-1:
		return errors.New("index: attempt to add record out of reference ID sort order")
	case rid >= len(x.refs):
		x.refs = append(x.refs, make([]tabixRef, rid+1-len(x.refs))...)
		x.lastBeg = 0
	}
	ref := &x.refs[rid]
	if ref.binAt == nil {
		ref.binAt = make(map[uint32]int)
	}

	// Binning index: extend the first chunk of the bin that ends past
	// c's begin, else append c.
	bin := tabixBinFor(beg, end)
	i, ok := ref.lastBin, ref.bins != nil && ref.bins[ref.lastBin].bin == bin
	if !ok {
		i, ok = ref.binAt[bin]
	}
	if ok {
		ref.lastBin = i
		b := &ref.bins[i]
		if cb := c.Begin.Virtual(); b.maxEnd <= cb {
			// No chunk ends past c's begin (the case of records in file
			// order): append without looking, or, when the last chunk
			// reaches c's begin, let it absorb c now as mergeAdjacent
			// would at the end (the chunks stay sorted by begin, so the
			// result is the same), which keeps the index O(bins) in
			// memory instead of one chunk per record.
			if k := len(b.chunks) - 1; k >= 0 && !b.slow && b.chunks[k].End.Virtual() >= cb {
				if c.End.Virtual() > b.chunks[k].End.Virtual() {
					b.chunks[k].End = c.End
				}
			} else {
				b.chunks = append(b.chunks, c)
			}
			b.maxEnd = max(b.maxEnd, c.End.Virtual())
		} else {
			b.slow = true
			for j := range b.chunks {
				if b.chunks[j].End.Virtual() > cb {
					b.chunks[j].End = c.End
					break
				}
			}
			b.maxEnd = 0
			for _, ch := range b.chunks {
				b.maxEnd = max(b.maxEnd, ch.End.Virtual())
			}
		}
	} else {
		ref.binAt[bin] = len(ref.bins)
		ref.lastBin = len(ref.bins)
		ref.bins = append(ref.bins, tabixBin{bin: bin, chunks: []Chunk{c}, maxEnd: c.End.Virtual()})
	}

	// Linear index.
	biv := beg / tabixTileWidth
	if beg < x.lastBeg {
		return errTabixOrder
	}
	x.lastBeg = beg
	eiv := end / tabixTileWidth
	if eiv == len(ref.intervals) {
		if eiv > biv {
			return errTabixLength
		}
		ref.intervals = append(ref.intervals, c.Begin)
	} else if eiv > len(ref.intervals) {
		iv := make([]Offset, eiv)
		if len(ref.intervals) > biv {
			biv = len(ref.intervals)
		}
		for k := biv; k < eiv; k++ {
			iv[k] = c.Begin
		}
		copy(iv, ref.intervals)
		ref.intervals = iv
	}

	// Pseudo-bin.
	if !ref.stats {
		ref.stats, ref.span = true, c
	} else {
		ref.span.End = c.End
	}
	ref.records++
	return nil
}

// mergeAdjacent sorts each bin's chunks by begin and merges chunks that
// touch or overlap (biogo's index.Adjacent).
func (x *tabixBuild) mergeAdjacent() {
	byBegin := func(a, b Chunk) int {
		av, bv := a.Begin.Virtual(), b.Begin.Virtual()
		switch {
		case av < bv:
			return -1
		case av > bv:
			return 1
		}
		return 0
	}
	for r := range x.refs {
		for i := range x.refs[r].bins {
			b := &x.refs[r].bins[i]
			if !slices.IsSortedFunc(b.chunks, byBegin) {
				slices.SortStableFunc(b.chunks, byBegin)
			}
			cs := b.chunks
			if len(cs) == 0 {
				continue
			}
			// One pass: the last kept chunk absorbs the next one when it
			// reaches it (biogo deletes the left one of such a pair).
			out := cs[:1]
			for _, r := range cs[1:] {
				last := &out[len(out)-1]
				if le := last.End.Virtual(); le >= r.Begin.Virtual() {
					r.Begin = last.Begin
					if le > r.End.Virtual() {
						r.End = last.End
					}
					*last = r
				} else {
					out = append(out, r)
				}
			}
			cs = out
			b.chunks = cs
		}
	}
}

// appendTBI appends the uncompressed .tbi of x (after mergeAdjacent) for
// a table laid out as cols.
func (x *tabixBuild) appendTBI(p []byte, cols TabixColumns) []byte {
	le := binary.LittleEndian
	p = append(p, 'T', 'B', 'I', 1)
	p = le.AppendUint32(p, uint32(len(x.refs)))
	format := uint32(0)
	if cols.VCF {
		format = 2
	}
	if cols.ZeroBased {
		format |= 0x10000
	}
	p = le.AppendUint32(p, format)
	p = le.AppendUint32(p, uint32(int32(cols.Seq)))
	p = le.AppendUint32(p, uint32(int32(cols.Begin)))
	p = le.AppendUint32(p, uint32(int32(cols.End)))
	p = le.AppendUint32(p, uint32(cols.Meta))
	p = le.AppendUint32(p, uint32(int32(cols.Skip)))
	n := 0
	for _, s := range x.names {
		n += len(s) + 1
	}
	p = le.AppendUint32(p, uint32(n))
	for _, s := range x.names {
		p = append(append(p, s...), 0)
	}
	for r := range x.refs {
		ref := &x.refs[r]
		bins := slices.Clone(ref.bins)
		slices.SortFunc(bins, func(a, b tabixBin) int { return int(a.bin) - int(b.bin) })
		nb := len(bins)
		if ref.stats {
			nb++
		}
		p = le.AppendUint32(p, uint32(nb))
		for _, b := range bins {
			p = le.AppendUint32(p, b.bin)
			p = le.AppendUint32(p, uint32(len(b.chunks)))
			for _, c := range b.chunks {
				p = le.AppendUint64(p, c.Begin.Virtual())
				p = le.AppendUint64(p, c.End.Virtual())
			}
		}
		if ref.stats {
			p = le.AppendUint32(p, 37450) // the pseudo-bin
			p = le.AppendUint32(p, 2)
			p = le.AppendUint64(p, ref.span.Begin.Virtual())
			p = le.AppendUint64(p, ref.span.End.Virtual())
			p = le.AppendUint64(p, ref.records)
			p = le.AppendUint64(p, 0) // unmapped records
		}
		iv := slices.Clone(ref.intervals)
		slices.SortFunc(iv, func(a, b Offset) int {
			av, bv := a.Virtual(), b.Virtual()
			switch {
			case av < bv:
				return -1
			case av > bv:
				return 1
			}
			return 0
		})
		p = le.AppendUint32(p, uint32(len(iv)))
		for _, o := range iv {
			p = le.AppendUint64(p, o.Virtual())
		}
	}
	if x.unmapped {
		p = le.AppendUint64(p, 0) // n_no_coor
	}
	return p
}
