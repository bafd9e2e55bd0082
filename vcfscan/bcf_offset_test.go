package vcfscan

import (
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"testing"

	"github.com/biogo/hts/bgzf"
)

// readAtVirtual reads n bytes at virtual offset v with biogo/hts's BGZF
// reader, an implementation independent of ours.
func readAtVirtual(t *testing.T, path string, v int64, n int) []byte {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	z, err := bgzf.NewReader(f, 1)
	if err != nil {
		t.Fatal(err)
	}
	defer z.Close()
	if err := z.Seek(bgzf.Offset{File: v >> 16, Block: uint16(v)}); err != nil {
		t.Fatal(err)
	}
	out := make([]byte, n)
	if _, err := io.ReadFull(z, out); err != nil {
		t.Fatal(err)
	}
	return out
}

// TestBCFErrorOffset corrupts one record of the chr22 twin and checks that
// the error names its index and a virtual offset at which biogo/hts finds
// the corrupted bytes.
func TestBCFErrorOffset(t *testing.T) {
	zf, err := os.Open("../testdata/bcf/chr22_1000g.bcf")
	if err != nil {
		t.Fatal(err)
	}
	zr, err := gzip.NewReader(zf)
	if err != nil {
		t.Fatal(err)
	}
	raw, err := io.ReadAll(zr)
	zf.Close()
	if err != nil {
		t.Fatal(err)
	}
	// Walk to record 7000 and give it contig number 99.
	const bad = 7000
	p := 9 + int(binary.LittleEndian.Uint32(raw[5:]))
	for i := 0; i < bad; i++ {
		p += 8 + int(binary.LittleEndian.Uint32(raw[p:])) + int(binary.LittleEndian.Uint32(raw[p+4:]))
	}
	binary.LittleEndian.PutUint32(raw[p+8:], 99)
	want := append([]byte(nil), raw[p:p+16]...)

	path := filepath.Join(t.TempDir(), "bad.bcf")
	var out bytes.Buffer
	w := NewBGZFWriter(&out, 6)
	if _, err := w.Write(raw); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, out.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}

	r, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	for err == nil {
		_, err = r.Next()
	}
	var pe *ParseError
	if !errors.As(err, &pe) || !errors.Is(err, ErrMalformed) {
		t.Fatalf("error %v, want a ParseError wrapping ErrMalformed", err)
	}
	if pe.Record != bad || pe.Field != "CHROM" || pe.Offset < 0 {
		t.Fatalf("error %v: record %d field %q offset %d", err, pe.Record, pe.Field, pe.Offset)
	}
	if got := readAtVirtual(t, path, pe.Offset, 16); !bytes.Equal(got, want) {
		t.Errorf("bytes at virtual offset %d: % x, want % x", pe.Offset, got, want)
	}
}

// TestBGZFVirtualOffsetChunks checks the mapping for the concatenated
// stream of region chunks against biogo/hts seeking to the result.
func TestBGZFVirtualOffsetChunks(t *testing.T) {
	path := "../testdata/bcf/chr22_1000g.bcf"
	h := bcfTestFileHeader(t, path)
	chunks, err := regionChunks(path, h, []Region{{"22", 50400000, 50500000}, {"22", 50700000, 50800000}})
	if err != nil || len(chunks) < 2 {
		t.Fatalf("%v, %d chunks", err, len(chunks))
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	z, err := newBGZFReader(f, path, 1, 0, chunks)
	if err != nil {
		t.Fatal(err)
	}
	stream, err := io.ReadAll(z)
	z.Close()
	if err != nil {
		t.Fatal(err)
	}
	g, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer g.Close()
	for _, u := range []int64{0, 1, 65000, int64(len(stream)) / 2, int64(len(stream)) - 16} {
		v := bgzfVirtualOffset(g, chunks, u)
		if v < 0 {
			t.Fatalf("u=%d: no offset", u)
		}
		if got := readAtVirtual(t, path, v, 16); !bytes.Equal(got, stream[u:u+16]) {
			t.Errorf("u=%d: virtual offset %d reads % x, want % x", u, v, got, stream[u:u+16])
		}
	}
	if v := bgzfVirtualOffset(g, chunks, int64(len(stream))+5); v != -1 {
		t.Errorf("past the end: %d, want -1", v)
	}
}

// TestBCFFrameErrorOffset checks the offset given to a record cut short:
// the start of the record after the last one decoded.
func TestBCFFrameErrorOffset(t *testing.T) {
	path := "../testdata/bcf/cohort189.bcf"
	h, recs := bcfFixtureRecords(t, path)
	d := newBCFDecoder(h, nil, Options{IncludeFiltered: true})
	d.name = path
	b := &Batch{NSamples: len(h.Samples)}
	for i, r := range recs[:40] {
		if _, _, err := d.decode(r, int64(i), b); err != nil {
			t.Fatal(err)
		}
	}
	err := d.frameError(40, fmt.Errorf("%w: cut", ErrTruncated))
	var pe *ParseError
	if !errors.As(err, &pe) || !errors.Is(err, ErrTruncated) || pe.Record != 40 || pe.Offset < 0 {
		t.Fatalf("%v", err)
	}
	if got := readAtVirtual(t, path, pe.Offset, 32); !bytes.Equal(got, recs[40][:32]) {
		t.Errorf("bytes at %d: % x, want % x", pe.Offset, got, recs[40][:32])
	}
}
