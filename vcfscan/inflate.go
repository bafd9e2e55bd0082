package vcfscan

import (
	"encoding/binary"
	"errors"
	"math/bits"
)

// A whole-block DEFLATE decoder (RFC 1951) for BGZF blocks: the inflated
// size is known from the block's ISIZE and is at most 64 KiB, so the block
// is decoded straight into its final place with no sliding window, no
// streaming state and no copy out of a history buffer. Bits are read from
// a 64-bit buffer refilled eight bytes at a time; Huffman codes are decoded
// by table (11-bit first level for literal/length codes, 9-bit for
// distances, second-level tables for longer codes), and the inner loop
// takes up to three literals per refill. The result is byte-for-byte what
// compress/flate produces, and every input compress/flate rejects is
// rejected here too (FuzzInflate checks both).

const (
	litBits  = 11 // first-level bits of the literal/length table
	distBits = 9  // first-level bits of the distance table
	// Second-level tables are sized for the longest code (15 bits); there
	// are at most as many as codes longer than the first level.
	litTabSize  = 1<<litBits + 288<<(15-litBits)
	distTabSize = 1<<distBits + 32<<(15-distBits)

	numLitCodes  = 288 // literal/length alphabet (286, 287 are invalid)
	numDistCodes = 32  // distance alphabet (30, 31 are invalid)
	maxNumLitRd  = 286 // largest HLIT+257 compress/flate accepts
	maxNumDistRd = 30  // largest HDIST+1 compress/flate accepts
)

// Table entries: bits 0-3 the number of bits this level consumes, bits
// 4-7 the number of extra bits (lengths, distances) or the second-level
// width (links), flags in bits 8-12, the value in bits 16-31 (literal
// byte, length or distance base, offset of a second-level table).
const (
	entLiteral = 1 << 8
	entSpecial = 1 << 9 // end of block, link or invalid: the slow branch
	entEOB     = 1 << 10
	entLink    = 1 << 11
	entInvalid = 1 << 12
)

var (
	errInflateCorrupt   = errors.New("corrupt deflate data")
	errInflateTruncated = errors.New("deflate data ends early")
	errInflateTooLong   = errors.New("deflate data inflates to more bytes than expected")
)

// Base values and extra bits of the length codes 257-285 and the distance
// codes 0-29 (RFC 1951 section 3.2.5).
var (
	lenBase = [29]uint16{3, 4, 5, 6, 7, 8, 9, 10, 11, 13, 15, 17, 19, 23, 27, 31,
		35, 43, 51, 59, 67, 83, 99, 115, 131, 163, 195, 227, 258}
	lenExtra = [29]uint8{0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2,
		3, 3, 3, 3, 4, 4, 4, 4, 5, 5, 5, 5, 0}
	distBase = [30]uint16{1, 2, 3, 4, 5, 7, 9, 13, 17, 25, 33, 49, 65, 97, 129, 193,
		257, 385, 513, 769, 1025, 1537, 2049, 3073, 4097, 6145, 8193, 12289, 16385, 24577}
	distExtra = [30]uint8{0, 0, 0, 0, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6, 6,
		7, 7, 8, 8, 9, 9, 10, 10, 11, 11, 12, 12, 13, 13}
	// Order of the code length code lengths (RFC 1951 section 3.2.7).
	clenOrder = [19]uint8{16, 17, 18, 0, 8, 7, 9, 6, 10, 5, 11, 4, 12, 3, 13, 2, 14, 1, 15}
)

// Table entries of every symbol, without the code length.
var (
	litEntries = func() (t [numLitCodes]uint32) {
		for i := range t {
			t[i] = litEntry(i)
		}
		return t
	}()
	distEntries = func() (t [numDistCodes]uint32) {
		for i := range t {
			t[i] = distEntry(i)
		}
		return t
	}()
	clenEntries = func() (t [19]uint32) {
		for i := range t {
			t[i] = uint32(i) << 16
		}
		return t
	}()
)

func litEntry(sym int) uint32 {
	switch {
	case sym < 256:
		return entLiteral | uint32(sym)<<16
	case sym == 256:
		return entSpecial | entEOB
	case sym < 286:
		k := sym - 257
		return uint32(lenExtra[k])<<4 | uint32(lenBase[k])<<16
	}
	return entSpecial | entInvalid
}

func distEntry(sym int) uint32 {
	if sym < 30 {
		return uint32(distExtra[sym])<<4 | uint32(distBase[sym])<<16
	}
	return entSpecial | entInvalid
}

// inflater holds the decoding tables; one per goroutine, reused for every
// block.
type inflater struct {
	lit  [litTabSize]uint32
	dist [distTabSize]uint32
	clen [1 << 7]uint32
	lens [numLitCodes + numDistCodes]uint8
}

var fixedLit, fixedDist = func() (*[litTabSize]uint32, *[distTabSize]uint32) {
	var f inflater
	var l [numLitCodes]uint8
	for i := range l {
		switch {
		case i < 144:
			l[i] = 8
		case i < 256:
			l[i] = 9
		case i < 280:
			l[i] = 7
		default:
			l[i] = 8
		}
	}
	var d [numDistCodes]uint8
	for i := range d {
		d[i] = 5
	}
	if !buildTable(f.lit[:], l[:], litBits, litEntries[:]) || !buildTable(f.dist[:], d[:], distBits, distEntries[:]) {
		panic("vcfscan: fixed Huffman tables do not build")
	}
	return &f.lit, &f.dist
}()

// buildTable fills table for the canonical Huffman code with the given
// code lengths (RFC 1951 section 3.2.2); entries[sym] is the entry of a
// symbol without its length. It reports false for a code that
// compress/flate rejects: over-subscribed, or incomplete unless it is
// empty or a single code of length 1 (the unused bit patterns then decode
// as invalid).
//
// Codes up to the first-level width are written in canonical order, one
// length at a time: the table for codes up to length l is its first 2^l
// entries, and doubling it with one copy replicates every entry for the
// next length, so each code is stored once instead of once per unused
// high bit pattern.
func buildTable(table []uint32, lens []uint8, first uint, entries []uint32) bool {
	var count [16]int
	maxLen := 0
	for _, l := range lens {
		count[l&15]++
		maxLen = max(maxLen, int(l))
	}
	count[0] = 0
	kraft := 0
	for l := 1; l <= 15; l++ {
		kraft += count[l] << (15 - l)
	}
	table = table[:len(table):len(table)]
	if kraft != 1<<15 {
		if kraft > 1<<15 {
			return false
		}
		if maxLen != 0 && !(maxLen == 1 && count[1] == 1) {
			return false
		}
		// Empty or a single one-bit code: every pattern starts invalid.
		for i := range table[:1<<first] {
			table[i] = entSpecial | entInvalid | uint32(first)
		}
	}
	// Symbols in canonical order: by length, then by value.
	var start [17]int
	for l := 1; l <= 15; l++ {
		start[l+1] = start[l] + count[l]
	}
	var order [numLitCodes]uint16
	for sym, l := range lens {
		if l != 0 {
			order[start[l]] = uint16(sym)
			start[l]++
		}
	}
	// start[l] is now the end of length l in order.
	k, code := 0, 0
	short := min(int(first), maxLen)
	for l := 1; l <= int(first); l++ {
		for ; k < start[l]; k++ {
			sym := order[k]
			rev := int(bits.Reverse16(uint16(code)) >> (16 - l))
			table[rev&(1<<first-1)] = entries[sym] | uint32(l)
			code++
		}
		code <<= 1
		if l < short {
			copy(table[1<<l:2<<l], table[:1<<l])
		}
	}
	if maxLen <= int(first) {
		for w := 1 << short; w < 1<<first; w <<= 1 {
			copy(table[w:2*w], table[:w])
		}
		return true
	}
	// Long codes, in canonical order, so that codes sharing their first
	// `first` bits are consecutive and share one second-level table.
	subBits := uint(maxLen) - first
	prefix, off := -1, 1<<first
	for l := int(first) + 1; l <= maxLen; l++ {
		for ; k < start[l]; k++ {
			sym := order[k]
			rev := int(bits.Reverse16(uint16(code)) >> (16 - l))
			code++
			p := rev & (1<<first - 1)
			if p != prefix {
				if prefix >= 0 {
					off += 1 << subBits
				}
				prefix = p
				table[p] = entSpecial | entLink | uint32(subBits)<<4 | uint32(off)<<16 | uint32(first)
			}
			rem := uint(l) - first
			e := entries[sym] | uint32(rem)
			for i := rev >> first; i < 1<<subBits; i += 1 << rem {
				table[off+i] = e
			}
		}
		code <<= 1
	}
	return true
}

// inflate decodes the raw DEFLATE stream at the start of src into dst,
// whose length is the expected inflated size. It returns the number of
// bytes written and of src bytes used (the stream may end before src).
// Decoding more than len(dst) bytes is errInflateTooLong.
func (f *inflater) inflate(dst, src []byte) (n, used int, err error) {
	var (
		bb  uint64 // bit buffer, next bit lowest
		nb  uint   // valid bits in bb
		in  int    // next byte of src to load
		out int    // next byte of dst to write
	)
	// refillSlow loads bytes one at a time; past the end of src it loads
	// zeros and lets the caller detect the overrun from in.
	refillSlow := func() {
		for nb <= 56 {
			var c byte
			if in < len(src) {
				c = src[in]
			}
			in++
			bb |= uint64(c) << nb
			nb += 8
		}
	}
	overrun := func() bool { return in*8-int(nb) > len(src)*8 }

	for final := false; !final; {
		if in+8 <= len(src) {
			bb |= binary.LittleEndian.Uint64(src[in:]) << nb
			in += int((63 - nb) >> 3)
			nb |= 56
		} else {
			refillSlow()
			if overrun() {
				return out, 0, errInflateTruncated
			}
		}
		final = bb&1 != 0
		typ := (bb >> 1) & 3
		bb >>= 3
		nb -= 3
		var lit *[litTabSize]uint32
		var dist *[distTabSize]uint32
		switch typ {
		case 0: // stored
			// Drop to a byte boundary and give back the whole bytes left
			// in the bit buffer.
			bb >>= nb & 7
			nb &^= 7
			in -= int(nb >> 3)
			bb, nb = 0, 0
			if in+4 > len(src) {
				return out, 0, errInflateTruncated
			}
			ln := int(binary.LittleEndian.Uint16(src[in:]))
			nln := binary.LittleEndian.Uint16(src[in+2:])
			in += 4
			if uint16(ln) != ^nln {
				return out, 0, errInflateCorrupt
			}
			if in+ln > len(src) {
				// compress/flate delivers what there is, then fails.
				return out, 0, errInflateTruncated
			}
			if out+ln > len(dst) {
				return out, 0, errInflateTooLong
			}
			copy(dst[out:out+ln], src[in:in+ln])
			out += ln
			in += ln
			continue
		case 1:
			lit, dist = fixedLit, fixedDist
		case 2:
			if err := f.readTables(src, &bb, &nb, &in); err != nil {
				return out, 0, err
			}
			lit, dist = &f.lit, &f.dist
		default:
			return out, 0, errInflateCorrupt
		}
		var err error
		bb, nb, in, out, err = decodeHuffman(dst, src, lit, dist, bb, nb, in, out)
		if err != nil {
			return out, 0, err
		}
	}
	if overrun() {
		return out, 0, errInflateTruncated
	}
	used = (in*8 - int(nb) + 7) / 8
	return out, used, nil
}

// readTables reads the code lengths of a dynamic block (RFC 1951 section
// 3.2.7) and builds f.lit and f.dist.
func (f *inflater) readTables(src []byte, pbb *uint64, pnb *uint, pin *int) error {
	bb, nb, in := *pbb, *pnb, *pin
	refill := func() {
		if in+8 <= len(src) {
			bb |= binary.LittleEndian.Uint64(src[in:]) << nb
			in += int((63 - nb) >> 3)
			nb |= 56
			return
		}
		for nb <= 56 {
			var c byte
			if in < len(src) {
				c = src[in]
			}
			in++
			bb |= uint64(c) << nb
			nb += 8
		}
	}
	defer func() { *pbb, *pnb, *pin = bb, nb, in }()
	refill()
	nlit := int(bb&31) + 257
	ndist := int(bb>>5&31) + 1
	nclen := int(bb>>10&15) + 4
	bb >>= 14
	nb -= 14
	if nlit > maxNumLitRd || ndist > maxNumDistRd {
		return errInflateCorrupt
	}
	var cl [19]uint8
	for i := 0; i < nclen; i++ {
		if nb < 3 {
			refill()
		}
		cl[clenOrder[i]] = uint8(bb & 7)
		bb >>= 3
		nb -= 3
	}
	if !buildTable(f.clen[:], cl[:], 7, clenEntries[:]) {
		return errInflateCorrupt
	}
	lens := f.lens[:nlit+ndist]
	for i := 0; i < len(lens); {
		if nb < 7+7 {
			refill()
		}
		e := f.clen[bb&127]
		if e&entInvalid != 0 {
			return errInflateCorrupt
		}
		bb >>= e & 15
		nb -= uint(e & 15)
		sym := e >> 16
		if sym < 16 {
			lens[i] = uint8(sym)
			i++
			continue
		}
		var rep int
		var v uint8
		switch sym {
		case 16:
			if i == 0 {
				return errInflateCorrupt
			}
			v = lens[i-1]
			rep = 3 + int(bb&3)
			bb >>= 2
			nb -= 2
		case 17:
			rep = 3 + int(bb&7)
			bb >>= 3
			nb -= 3
		default:
			rep = 11 + int(bb&127)
			bb >>= 7
			nb -= 7
		}
		if i+rep > len(lens) {
			return errInflateCorrupt
		}
		for k := 0; k < rep; k++ {
			lens[i+k] = v
		}
		i += rep
	}
	if in*8-int(nb) > len(src)*8 {
		return errInflateTruncated
	}
	if !buildTable(f.lit[:], lens[:nlit], litBits, litEntries[:]) ||
		!buildTable(f.dist[:], lens[nlit:], distBits, distEntries[:]) {
		return errInflateCorrupt
	}
	return nil
}

// decodeHuffman decodes one Huffman-coded block into dst from out on,
// with the bit reader state (bb, nb, in) passed in and handed back (locals,
// not closures, so that they stay in registers). The fast loop runs while
// at least 16 input bytes and 266 bytes of output room remain (a refill
// reads eight bytes, a match writes at most 258 bytes plus one word of
// overshoot); the careful loop finishes the block.
func decodeHuffman(dst, src []byte, lit *[litTabSize]uint32, dist *[distTabSize]uint32,
	bb uint64, nb uint, in, out int) (uint64, uint, int, int, error) {
	const litMask = 1<<litBits - 1
	const distMask = 1<<distBits - 1
	for in+16 <= len(src) && out+266 <= len(dst) {
		bb |= binary.LittleEndian.Uint64(src[in:]) << nb
		in += int((63 - nb) >> 3)
		nb |= 56
		e := lit[bb&litMask]
		if e&entLiteral != 0 {
			bb >>= e & 15
			nb -= uint(e & 15)
			dst[out] = byte(e >> 16)
			out++
			e = lit[bb&litMask]
			if e&entLiteral != 0 {
				bb >>= e & 15
				nb -= uint(e & 15)
				dst[out] = byte(e >> 16)
				out++
				e = lit[bb&litMask]
				if e&entLiteral != 0 {
					bb >>= e & 15
					nb -= uint(e & 15)
					dst[out] = byte(e >> 16)
					out++
					continue
				}
			}
		}
		// At least 26 bits remain: enough for a link and a length.
		if e&entSpecial != 0 {
			if e&entLink != 0 {
				bb >>= e & 15
				nb -= uint(e & 15)
				e = lit[(e>>16)+uint32(bb)&(1<<(e>>4&15)-1)]
				if e&entLiteral != 0 {
					bb >>= e & 15
					nb -= uint(e & 15)
					dst[out] = byte(e >> 16)
					out++
					continue
				}
			}
			if e&entEOB != 0 {
				bb >>= e & 15
				nb -= uint(e & 15)
				return bb, nb, in, out, nil
			}
			if e&entInvalid != 0 {
				return bb, nb, in, out, errInflateCorrupt
			}
		}
		bb >>= e & 15
		nb -= uint(e & 15)
		length := int(e>>16) + int(bb&(1<<(e>>4&15)-1))
		bb >>= e >> 4 & 15
		nb -= uint(e >> 4 & 15)
		// Distance: up to 15 code bits and 13 extra bits.
		bb |= binary.LittleEndian.Uint64(src[in:]) << nb
		in += int((63 - nb) >> 3)
		nb |= 56
		d := dist[bb&distMask]
		if d&entSpecial != 0 {
			if d&entLink != 0 {
				bb >>= d & 15
				nb -= uint(d & 15)
				d = dist[(d>>16)+uint32(bb)&(1<<(d>>4&15)-1)]
			}
			if d&entInvalid != 0 {
				return bb, nb, in, out, errInflateCorrupt
			}
		}
		bb >>= d & 15
		nb -= uint(d & 15)
		dd := int(d>>16) + int(bb&(1<<(d>>4&15)-1))
		bb >>= d >> 4 & 15
		nb -= uint(d >> 4 & 15)
		if dd > out {
			return bb, nb, in, out, errInflateCorrupt
		}
		if dd >= length {
			copy(dst[out:out+length], dst[out-dd:])
		} else {
			copyOverlap(dst, out, dd, length)
		}
		out += length
	}
	// Careful loop: byte-wise refills (zeros past the end of src, caught
	// by the overrun checks) and exact output bounds.
	for {
		for nb <= 56 {
			var c byte
			if in < len(src) {
				c = src[in]
			}
			in++
			bb |= uint64(c) << nb
			nb += 8
		}
		if in*8-int(nb) > len(src)*8 {
			return bb, nb, in, out, errInflateTruncated
		}
		e := lit[bb&litMask]
		if e&entLink != 0 {
			bb >>= e & 15
			nb -= uint(e & 15)
			e = lit[(e>>16)+uint32(bb)&(1<<(e>>4&15)-1)]
		}
		if e&entInvalid != 0 {
			return bb, nb, in, out, errInflateCorrupt
		}
		bb >>= e & 15
		nb -= uint(e & 15)
		if e&entLiteral != 0 {
			if out >= len(dst) {
				return bb, nb, in, out, errInflateTooLong
			}
			dst[out] = byte(e >> 16)
			out++
			continue
		}
		if e&entEOB != 0 {
			if in*8-int(nb) > len(src)*8 {
				return bb, nb, in, out, errInflateTruncated
			}
			return bb, nb, in, out, nil
		}
		length := int(e>>16) + int(bb&(1<<(e>>4&15)-1))
		bb >>= e >> 4 & 15
		nb -= uint(e >> 4 & 15)
		for nb <= 56 {
			var c byte
			if in < len(src) {
				c = src[in]
			}
			in++
			bb |= uint64(c) << nb
			nb += 8
		}
		d := dist[bb&distMask]
		if d&entLink != 0 {
			bb >>= d & 15
			nb -= uint(d & 15)
			d = dist[(d>>16)+uint32(bb)&(1<<(d>>4&15)-1)]
		}
		if d&entInvalid != 0 {
			if in*8-int(nb) > len(src)*8 {
				return bb, nb, in, out, errInflateTruncated
			}
			return bb, nb, in, out, errInflateCorrupt
		}
		bb >>= d & 15
		nb -= uint(d & 15)
		dd := int(d>>16) + int(bb&(1<<(d>>4&15)-1))
		bb >>= d >> 4 & 15
		nb -= uint(d >> 4 & 15)
		if in*8-int(nb) > len(src)*8 {
			return bb, nb, in, out, errInflateTruncated
		}
		if dd > out {
			return bb, nb, in, out, errInflateCorrupt
		}
		if out+length > len(dst) {
			return bb, nb, in, out, errInflateTooLong
		}
		for k := 0; k < length; k++ {
			dst[out+k] = dst[out+k-dd]
		}
		out += length
	}
}

// copyOverlap copies length bytes from dist bytes back (dist < length) to
// dst[out:], repeating the pattern as DEFLATE requires. It may write up to
// 8 bytes past out+length (the caller leaves room).
func copyOverlap(dst []byte, out, dist, length int) {
	end := out + length
	if dist >= 8 {
		src := out - dist
		for out < end {
			binary.LittleEndian.PutUint64(dst[out:], binary.LittleEndian.Uint64(dst[src:]))
			out += 8
			src += 8
		}
		return
	}
	// Write the first eight bytes one at a time; from there on the pattern
	// repeats with a period that is a multiple of dist no larger than
	// eight, so whole words can be copied at that stride.
	w := dst[out-dist : out+8]
	for k := dist; k < len(w); k++ {
		w[k] = w[k-dist]
	}
	step := 8 / dist * dist
	out += 8
	for out < end {
		binary.LittleEndian.PutUint64(dst[out:], binary.LittleEndian.Uint64(dst[out-step:]))
		out += step
	}
}
