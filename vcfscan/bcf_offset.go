package vcfscan

import (
	"encoding/binary"
	"errors"
	"io"
	"os"

	"github.com/biogo/hts/bgzf"
)

// Locating a BCF record by BGZF virtual offset for error messages.
//
// The decoder counts the bytes of the records it has seen (bcfDecoder.seen,
// with bcfDecoder.cur the start of the current one);
// the caller feeds it every record in input order, as the reader does. When
// a record is bad, the position of its first byte in the uncompressed
// stream is the header length plus that count. bgzfVirtualOffset turns the
// position into a virtual offset (SAM specification section 4.1.1:
// compressed offset of the block << 16 | offset inside the block) by
// walking the block headers of the file, which needs no decompression, so
// the cost falls on the error path only.

// recordOffset returns the virtual offset of the first byte of the record
// being decoded, or -1 when it cannot be known (standard input, plain BCF,
// a name that is not a file).
func (d *bcfDecoder) recordOffset() int64 { return d.offsetAt(d.cur) }

// frameError wraps an error of readBCFRecord for the record after the last
// one decoded (index) into a ParseError with that record's virtual offset.
func (d *bcfDecoder) frameError(index int64, err error) error {
	var pe *ParseError
	if errors.As(err, &pe) {
		return err
	}
	return &ParseError{File: d.name, Offset: d.offsetAt(d.seen), Record: index, Field: "record", Err: err}
}

// offsetAt returns the virtual offset of byte u of the record stream (u
// counts record bytes only: the header is added here).
func (d *bcfDecoder) offsetAt(u int64) int64 {
	f, err := os.Open(d.name)
	if err != nil {
		return -1
	}
	defer f.Close()
	var chunks []bgzf.Chunk
	if d.regions != nil {
		if d.hdr == nil {
			return -1
		}
		if chunks, err = regionChunks(d.name, d.hdr, d.opt.Regions); err != nil || len(chunks) == 0 {
			return -1
		}
		return bgzfVirtualOffset(f, chunks, u)
	}
	// The header length comes from the first 9 uncompressed bytes.
	z, err := bgzf.NewReader(f, 1)
	if err != nil {
		return -1
	}
	var pre [9]byte
	_, err = io.ReadFull(z, pre[:])
	z.Close()
	if err != nil || string(pre[:5]) != bcfMagic22 {
		return -1
	}
	return bgzfVirtualOffset(f, nil, 9+int64(binary.LittleEndian.Uint32(pre[5:]))+u)
}

// bgzfVirtualOffset returns the virtual offset of byte u of the
// uncompressed stream of the BGZF file f: the whole file when chunks is
// empty, otherwise the concatenation of the chunks (as a region reader
// delivers them). It returns -1 when u is past the end or a block header
// is not BGZF.
func bgzfVirtualOffset(f io.ReaderAt, chunks []bgzf.Chunk, u int64) int64 {
	if u < 0 {
		return -1
	}
	if len(chunks) == 0 {
		chunks = []bgzf.Chunk{{Begin: bgzf.Offset{}, End: bgzf.Offset{File: 1 << 62}}}
	}
	var cum int64 // uncompressed bytes before the current block's part
	for _, c := range chunks {
		coff, lo := c.Begin.File, int64(c.Begin.Block)
		for {
			bsize, isize, ok := bgzfBlockSizes(f, coff)
			if !ok {
				return -1
			}
			hi := isize
			if coff == c.End.File {
				hi = min(hi, int64(c.End.Block))
			}
			if n := hi - lo; n > 0 {
				if u < cum+n {
					return coff<<16 | (lo + u - cum)
				}
				cum += n
			}
			if coff >= c.End.File {
				break
			}
			coff += bsize
			lo = 0
		}
	}
	return -1
}

// bgzfBlockSizes reads the total size and the uncompressed size of the
// BGZF block at file offset coff from its header and trailer.
func bgzfBlockSizes(f io.ReaderAt, coff int64) (bsize, isize int64, ok bool) {
	var h [12]byte
	if _, err := f.ReadAt(h[:], coff); err != nil {
		return 0, 0, false
	}
	if h[0] != 0x1f || h[1] != 0x8b || h[3]&4 == 0 {
		return 0, 0, false
	}
	xlen := int(binary.LittleEndian.Uint16(h[10:]))
	extra := make([]byte, xlen)
	if _, err := f.ReadAt(extra, coff+12); err != nil {
		return 0, 0, false
	}
	bs, found := findBC(extra)
	if !found {
		return 0, 0, false
	}
	var t [4]byte
	if _, err := f.ReadAt(t[:], coff+int64(bs)+1-4); err != nil {
		return 0, 0, false
	}
	return int64(bs) + 1, int64(binary.LittleEndian.Uint32(t[:])), true
}
