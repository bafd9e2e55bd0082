package vcfscan

import (
	"encoding/binary"
	"fmt"
)

// checkIndexCounts walks a tabix or CSI index (hts-specs, "The tabix index
// file format" and "Coordinate Sorted Index (CSI) format") and checks that
// every count it holds (references, bins, chunks, intervals, name and
// auxiliary lengths) fits in the bytes that remain. The index decoders
// allocate what the counts claim before reading, so a damaged or hostile
// index could otherwise ask for gigabytes from a few bytes.
func checkIndexCounts(raw []byte) error {
	le := binary.LittleEndian
	p := raw
	need := func(n int64, what string) error {
		if n < 0 || n > int64(len(p)) {
			return fmt.Errorf("%w: index claims %d bytes of %s but %d remain; the index is damaged: rebuild it", ErrMalformed, n, what, len(p))
		}
		return nil
	}
	i32 := func(what string) (int64, error) {
		if err := need(4, what); err != nil {
			return 0, err
		}
		v := int64(int32(le.Uint32(p)))
		p = p[4:]
		return v, nil
	}
	skip := func(n int64, what string) error {
		if err := need(n, what); err != nil {
			return err
		}
		p = p[n:]
		return nil
	}
	if len(raw) < 4 {
		return fmt.Errorf("%w: index of %d bytes ends inside its magic; the index is damaged: rebuild it", ErrMalformed, len(raw))
	}
	csi := string(raw[:3]) == "CSI"
	p = p[4:]
	var nRef int64
	var err error
	if csi {
		if err = skip(8, "header"); err != nil { // min_shift, depth
			return err
		}
		laux, err := i32("auxiliary length")
		if err != nil {
			return err
		}
		if err = skip(laux, "auxiliary data"); err != nil {
			return err
		}
		if nRef, err = i32("reference count"); err != nil {
			return err
		}
	} else {
		if nRef, err = i32("reference count"); err != nil {
			return err
		}
		if err = skip(24, "header"); err != nil { // format, col_seq, col_beg, col_end, meta, skip
			return err
		}
		lnm, err := i32("name length")
		if err != nil {
			return err
		}
		if err = skip(lnm, "names"); err != nil {
			return err
		}
	}
	if err := need(nRef*4, "references"); err != nil {
		return err
	}
	for r := int64(0); r < nRef; r++ {
		nBin, err := i32("bin count")
		if err != nil {
			return err
		}
		perBin := int64(8) // bin, n_chunk
		if csi {
			perBin = 16 // bin, loffset, n_chunk
			if raw[3] == 2 {
				perBin = 24 // version 2 adds a 64-bit record count per bin
			}
		}
		if err := need(nBin*perBin, "bins"); err != nil {
			return err
		}
		for b := int64(0); b < nBin; b++ {
			if err := skip(perBin-4, "bin"); err != nil {
				return err
			}
			nChunk, err := i32("chunk count")
			if err != nil {
				return err
			}
			if err := skip(nChunk*16, "chunks"); err != nil {
				return err
			}
		}
		if !csi {
			nIntv, err := i32("interval count")
			if err != nil {
				return err
			}
			if err := skip(nIntv*8, "linear index"); err != nil {
				return err
			}
		}
	}
	return nil
}
