package vcfscan

import (
	"encoding/binary"
	"os"
)

// BGZFEOF is the 28-byte empty block that ends every BGZF file (SAM/BAM
// format specification, section 4.1.2, hts-specs).
const BGZFEOF = "\x1f\x8b\x08\x04\x00\x00\x00\x00\x00\xff\x06\x00\x42\x43\x02\x00" +
	"\x1b\x00\x03\x00\x00\x00\x00\x00\x00\x00\x00\x00"

// BGZFBlockSize returns the total size in bytes of the BGZF block whose
// header starts b (SAM/BAM format specification, section 4.1: the BC
// extra subfield holds BSIZE, the block size minus 1). It reports false
// when b does not start with a gzip member header carrying a BC subfield
// (b must hold the whole extra field; 64 bytes are always enough for the
// blocks BGZF writers produce).
func BGZFBlockSize(b []byte) (int, bool) {
	if len(b) < 18 || b[0] != 0x1f || b[1] != 0x8b || b[2] != 8 || b[3]&4 == 0 {
		return 0, false
	}
	xlen := int(binary.LittleEndian.Uint16(b[10:]))
	if 12+xlen > len(b) {
		return 0, false
	}
	size, ok := findBC(b[12 : 12+xlen])
	return size + 1, ok
}

// BGZFRatio returns compressed/uncompressed bytes of the BGZF block at
// file offset off of file path (BSIZE and ISIZE, SAM/BAM format
// specification, section 4.1), or false when no block with data can be
// read there.
func BGZFRatio(path string, off int64) (float64, bool) {
	f, err := os.Open(path)
	if err != nil {
		return 0, false
	}
	defer f.Close()
	head := make([]byte, 64)
	n, _ := f.ReadAt(head, off)
	size, ok := BGZFBlockSize(head[:n])
	if !ok || size < 28 {
		return 0, false
	}
	var isize [4]byte
	if _, err := f.ReadAt(isize[:], off+int64(size)-4); err != nil {
		return 0, false
	}
	u := binary.LittleEndian.Uint32(isize[:])
	if u == 0 {
		return 0, false
	}
	return float64(size) / float64(u), true
}
