package genedrop

import (
	"bytes"
	"encoding/binary"
	"hash/crc32"
	"io"

	"github.com/klauspost/compress/flate"
)

// bgzfBlockSize is the most uncompressed data put in one BGZF block (the
// same limit htslib uses, so that a compressed block always fits 64 KiB).
const bgzfBlockSize = 0xff00

// bgzfEOFBlock is the empty block that ends a BGZF file (SAM specification,
// section 4.1.2).
var bgzfEOFBlock = []byte{
	0x1f, 0x8b, 0x08, 0x04, 0, 0, 0, 0, 0, 0xff, 0x06, 0, 0x42, 0x43, 0x02, 0, 0x1b, 0,
	0x03, 0, 0, 0, 0, 0, 0, 0, 0, 0,
}

// bgzfWriter writes BGZF (SAM specification, section 4.1) one block at a
// time, synchronously, so that the compressed offset of every block is
// known when it is written: virtual offset = block start << 16 | offset
// within the block. Data is cut into blocks of exactly bgzfBlockSize bytes
// (the last one shorter), which keeps the output byte-identical for the
// same input.
type bgzfWriter struct {
	w   io.Writer
	off int64 // compressed bytes written so far = start of the next block
	buf []byte
	fw  *flate.Writer
	out bytes.Buffer
	err error
}

func newBGZFWriter(w io.Writer) *bgzfWriter {
	fw, _ := flate.NewWriter(nil, 6)
	return &bgzfWriter{w: w, fw: fw, buf: make([]byte, 0, 2*bgzfBlockSize)}
}

// voffset is the virtual offset of the next byte written.
func (b *bgzfWriter) voffset() uint64 {
	return uint64(b.off)<<16 | uint64(len(b.buf))
}

func (b *bgzfWriter) Write(p []byte) (int, error) {
	if b.err != nil {
		return 0, b.err
	}
	b.buf = append(b.buf, p...)
	for len(b.buf) >= bgzfBlockSize {
		b.block(b.buf[:bgzfBlockSize])
		b.buf = append(b.buf[:0], b.buf[bgzfBlockSize:]...)
	}
	return len(p), b.err
}

// flush ends the current block early (if it holds data).
func (b *bgzfWriter) flush() error {
	if len(b.buf) > 0 && b.err == nil {
		b.block(b.buf)
		b.buf = b.buf[:0]
	}
	return b.err
}

// close flushes and writes the EOF block; it does not close the
// underlying writer.
func (b *bgzfWriter) close() error {
	if err := b.flush(); err != nil {
		return err
	}
	_, b.err = b.w.Write(bgzfEOFBlock)
	return b.err
}

func (b *bgzfWriter) block(data []byte) {
	if b.err != nil {
		return
	}
	b.out.Reset()
	// gzip member header with the BC extra subfield; BSIZE filled below.
	b.out.Write([]byte{0x1f, 0x8b, 0x08, 0x04, 0, 0, 0, 0, 0, 0xff, 0x06, 0, 0x42, 0x43, 0x02, 0, 0, 0})
	b.fw.Reset(&b.out)
	b.fw.Write(data)
	if err := b.fw.Close(); err != nil {
		b.err = err
		return
	}
	var tail [8]byte
	binary.LittleEndian.PutUint32(tail[0:4], crc32.ChecksumIEEE(data))
	binary.LittleEndian.PutUint32(tail[4:8], uint32(len(data)))
	b.out.Write(tail[:])
	blk := b.out.Bytes()
	binary.LittleEndian.PutUint16(blk[16:18], uint16(len(blk)-1))
	n, err := b.w.Write(blk)
	b.off += int64(n)
	b.err = err
}
