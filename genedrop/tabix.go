package genedrop

import (
	"encoding/binary"
	"io"
)

// tabixIndex builds a tabix (.tbi) index for a position-sorted VCF written
// in BGZF, following the SAMtools hts-specs "The Tabix index format"
// (binning scheme of section 5.3 of the SAM specification, 16 kb linear
// index). Offsets are BGZF virtual offsets (compressed block start << 16 |
// offset within the block).
type tabixIndex struct {
	names []string
	refs  []tabixRef
}

type tabixRef struct {
	binOrder []uint32
	bins     map[uint32][][2]uint64
	linear   []uint64
	first    uint64
	last     uint64
	n        uint64
}

// reg2bin is the binning function of the SAM specification (0-based,
// half-open [beg, end)).
func reg2bin(beg, end int64) uint32 {
	end--
	switch {
	case beg>>14 == end>>14:
		return uint32(((1<<15)-1)/7 + (beg >> 14))
	case beg>>17 == end>>17:
		return uint32(((1<<12)-1)/7 + (beg >> 17))
	case beg>>20 == end>>20:
		return uint32(((1<<9)-1)/7 + (beg >> 20))
	case beg>>23 == end>>23:
		return uint32(((1<<6)-1)/7 + (beg >> 23))
	case beg>>26 == end>>26:
		return uint32(((1<<3)-1)/7 + (beg >> 26))
	}
	return 0
}

// add records one line covering the 0-based [beg, end) on chrom, stored
// between virtual offsets vbeg and vend. Lines must come sorted.
func (t *tabixIndex) add(chrom string, beg, end int64, vbeg, vend uint64) {
	if len(t.names) == 0 || t.names[len(t.names)-1] != chrom {
		t.names = append(t.names, chrom)
		t.refs = append(t.refs, tabixRef{bins: map[uint32][][2]uint64{}, first: vbeg})
	}
	r := &t.refs[len(t.refs)-1]
	bin := reg2bin(beg, end)
	ch, ok := r.bins[bin]
	if !ok {
		r.binOrder = append(r.binOrder, bin)
	}
	if k := len(ch); k > 0 && ch[k-1][1] == vbeg {
		ch[k-1][1] = vend
	} else {
		ch = append(ch, [2]uint64{vbeg, vend})
	}
	r.bins[bin] = ch
	for w := beg >> 14; w <= (end-1)>>14; w++ {
		for int64(len(r.linear)) <= w {
			r.linear = append(r.linear, 0)
		}
		if r.linear[w] == 0 {
			r.linear[w] = vbeg
		}
	}
	r.last = vend
	r.n++
}

// writeTo writes the uncompressed index (the caller compresses it with BGZF).
func (t *tabixIndex) writeTo(w io.Writer) error {
	var b []byte
	le := binary.LittleEndian
	b = append(b, "TBI\x01"...)
	b = le.AppendUint32(b, uint32(len(t.names)))
	// format 2 = VCF; sequence column 1, begin 2, end 0; meta '#'; skip 0.
	for _, v := range []int32{2, 1, 2, 0, '#', 0} {
		b = le.AppendUint32(b, uint32(v))
	}
	l := 0
	for _, n := range t.names {
		l += len(n) + 1
	}
	b = le.AppendUint32(b, uint32(l))
	for _, n := range t.names {
		b = append(b, n...)
		b = append(b, 0)
	}
	for _, r := range t.refs {
		b = le.AppendUint32(b, uint32(len(r.binOrder)+1))
		for _, bin := range r.binOrder {
			ch := r.bins[bin]
			b = le.AppendUint32(b, bin)
			b = le.AppendUint32(b, uint32(len(ch)))
			for _, c := range ch {
				b = le.AppendUint64(b, c[0])
				b = le.AppendUint64(b, c[1])
			}
		}
		// Pseudo-bin 37450: the reference's offset range and record counts.
		b = le.AppendUint32(b, 37450)
		b = le.AppendUint32(b, 2)
		b = le.AppendUint64(b, r.first)
		b = le.AppendUint64(b, r.last)
		b = le.AppendUint64(b, r.n)
		b = le.AppendUint64(b, 0)
		// Fill empty linear windows with the next non-empty offset to the left.
		prev := r.first
		b = le.AppendUint32(b, uint32(len(r.linear)))
		for _, v := range r.linear {
			if v == 0 {
				v = prev
			}
			prev = v
			b = le.AppendUint64(b, v)
		}
		if len(b) > 1<<20 {
			if _, err := w.Write(b); err != nil {
				return err
			}
			b = b[:0]
		}
	}
	b = le.AppendUint64(b, 0) // n_no_coor
	_, err := w.Write(b)
	return err
}
