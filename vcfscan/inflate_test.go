package vcfscan

import (
	"bytes"
	"compress/flate"
	"encoding/binary"
	"errors"
	"io"
	"math/rand/v2"
	"os"
	"testing"

	kflate "github.com/klauspost/compress/flate"
)

// stdInflate decodes src with compress/flate (the reference: Go's standard
// library), reading at most limit+1 bytes of output. It returns the output,
// the number of src bytes the stream used and the error.
func stdInflate(src []byte, limit int) ([]byte, int, error) {
	br := bytes.NewReader(src)
	fr := flate.NewReader(br)
	out, err := io.ReadAll(io.LimitReader(fr, int64(limit)+1))
	if err == nil && len(out) <= limit {
		// ReadAll stops at EOF without reporting it; make sure the stream
		// really ended (a limited read may stop early).
		var one [1]byte
		if n, e := fr.Read(one[:]); n != 0 || e != io.EOF {
			err = e
			if err == nil {
				err = errors.New("more output")
			}
		}
	}
	return out, len(src) - br.Len(), err
}

// checkInflate compares the block inflater with compress/flate on src.
func checkInflate(t *testing.T, f *inflater, src []byte) {
	t.Helper()
	const limit = 1 << 17
	want, wantUsed, wantErr := stdInflate(src, limit)
	if len(want) > limit {
		return // too large to compare here
	}
	if wantErr != nil {
		dst := make([]byte, limit)
		if n, _, err := f.inflate(dst, src); err == nil {
			t.Fatalf("compress/flate fails (%v) but the block inflater decodes %d bytes", wantErr, n)
		}
		return
	}
	dst := make([]byte, len(want), len(want)+16)
	n, used, err := f.inflate(dst, src)
	if err != nil {
		t.Fatalf("compress/flate decodes %d bytes but the block inflater fails: %v", len(want), err)
	}
	if n != len(want) || !bytes.Equal(dst[:n], want) {
		t.Fatalf("output differs from compress/flate (%d vs %d bytes)", n, len(want))
	}
	if used != wantUsed {
		t.Fatalf("used %d input bytes, compress/flate used %d", used, wantUsed)
	}
	if len(want) > 0 {
		short := make([]byte, len(want)-1)
		if _, _, err := f.inflate(short, src); !errors.Is(err, errInflateTooLong) {
			t.Fatalf("one byte short of the output: got %v, want errInflateTooLong", err)
		}
	}
	// A larger destination decodes the same bytes and stops there.
	big := make([]byte, len(want)+100)
	if n, _, err := f.inflate(big, src); err != nil || n != len(want) || !bytes.Equal(big[:n], want) {
		t.Fatalf("with room to spare: n=%d err=%v, want %d bytes", n, err, len(want))
	}
}

// bgzfPayloads returns the deflate data of the first blocks of a BGZF file.
func bgzfPayloads(t testing.TB, path string, max int) [][]byte {
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var out [][]byte
	for len(raw) >= 18 && len(out) < max {
		xlen := int(binary.LittleEndian.Uint16(raw[10:12]))
		bsize, ok := findBC(raw[12 : 12+xlen])
		if !ok || bsize+1 > len(raw) {
			t.Fatalf("%s: not BGZF", path)
		}
		out = append(out, raw[12+xlen:bsize+1-8])
		raw = raw[bsize+1:]
	}
	return out
}

// vcfLike returns n bytes of genotype text with the short repeats (period
// 1 to 12) that VCF compresses into.
func vcfLike(rng *rand.Rand, n int) []byte {
	var b []byte
	gts := []string{"0/0", "0/1", "1/1", "./.", "0|0", "1|0", "0/."}
	for len(b) < n {
		switch rng.IntN(20) {
		case 0:
			b = append(b, "\n1\t12345\t.\tA\tG\t50\tPASS\t.\tGT"...)
		case 1:
			for k := rng.IntN(300); k > 0; k-- {
				b = append(b, 'N')
			}
		default:
			g := gts[0]
			if rng.IntN(4) == 0 {
				g = gts[rng.IntN(len(gts))]
			}
			b = append(b, '\t')
			b = append(b, g...)
		}
	}
	return b[:n]
}

func compressWith(t testing.TB, data []byte, level int) []byte {
	var buf bytes.Buffer
	w, err := flate.NewWriter(&buf, level)
	if err != nil {
		t.Fatal(err)
	}
	w.Write(data)
	w.Close()
	return buf.Bytes()
}

// TestInflateMatchesStdlib checks the block inflater against compress/flate
// (Go standard library) on real BGZF blocks, on streams that compress/flate
// writes at every level (stored, fixed and dynamic blocks) and on damaged
// copies of them.
func TestInflateMatchesStdlib(t *testing.T) {
	f := new(inflater)
	var srcs [][]byte
	for _, p := range []string{"../testdata/cohort189.vcf.gz", "../testdata/chr22_1000g.vcf.gz"} {
		srcs = append(srcs, bgzfPayloads(t, p, 20)...)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{0, 1, 7, 100, 5000, 65280} {
		data := vcfLike(rng, n)
		rnd := make([]byte, n)
		for i := range rnd {
			rnd[i] = byte(rng.IntN(256))
		}
		for _, level := range []int{flate.HuffmanOnly, flate.NoCompression, 1, 2, 6, 9} {
			srcs = append(srcs, compressWith(t, data, level), compressWith(t, rnd, level))
		}
	}
	// Fixed-code blocks: compress/flate writes them for short inputs.
	for _, s := range []string{"a", "abcabcabcabc", "0/0\t0/0\t0/0\t0/0\t0/0\t1/1"} {
		srcs = append(srcs, compressWith(t, []byte(s), 6))
	}
	for i, src := range srcs {
		checkInflate(t, f, src)
		// Damaged copies: truncations, flipped bits, trailing bytes.
		for k := 0; k < 20 && len(src) > 0; k++ {
			d := append([]byte(nil), src...)
			switch k % 3 {
			case 0:
				d = d[:rng.IntN(len(d))]
			case 1:
				d[rng.IntN(len(d))] ^= 1 << rng.IntN(8)
			case 2:
				d = append(d, byte(k))
			}
			checkInflate(t, f, d)
		}
		_ = i
	}
}

// FuzzInflate compares the block inflater with compress/flate byte for
// byte; the corpus starts from the BGZF blocks of the real testdata files.
func FuzzInflate(f *testing.F) {
	for _, p := range []string{"../testdata/cohort189.vcf.gz", "../testdata/chr22_1000g.vcf.gz"} {
		for _, b := range bgzfPayloads(f, p, 1) {
			f.Add(b)
		}
	}
	rng := rand.New(rand.NewPCG(3, 4))
	f.Add(compressWith(f, vcfLike(rng, 2000), 1))
	f.Add(compressWith(f, []byte("abcabcabc"), 6))
	f.Add(compressWith(f, []byte("stored"), 0))
	inf := new(inflater)
	f.Fuzz(func(t *testing.T, src []byte) {
		checkInflate(t, inf, src)
	})
}

// benchBlocks returns the deflate payloads and inflated sizes of a BGZF
// stream of VCF text written by this package's writer.
func benchBlocks(b *testing.B) ([][]byte, []int, int) {
	var cdata [][]byte
	var sizes []int
	total := 0
	for _, p := range []string{"../testdata/cohort189.vcf.gz", "../testdata/chr22_1000g.vcf.gz"} {
		for _, c := range bgzfPayloads(b, p, 1000) {
			out, _, err := stdInflate(c, 1<<16)
			if err != nil {
				b.Fatal(err)
			}
			cdata = append(cdata, c)
			sizes = append(sizes, len(out))
			total += len(out)
		}
	}
	return cdata, sizes, total
}

// BenchmarkInflate decodes the BGZF blocks of the real testdata files with
// the block inflater, klauspost/compress/flate (the reader used before)
// and compress/flate; MB/s is of inflated bytes.
func BenchmarkInflate(b *testing.B) {
	cdata, sizes, total := benchBlocks(b)
	dst := make([]byte, 1<<16)
	b.Run("block", func(b *testing.B) {
		f := new(inflater)
		b.SetBytes(int64(total))
		for b.Loop() {
			for i, c := range cdata {
				if _, _, err := f.inflate(dst[:sizes[i]], c); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
	b.Run("klauspost", func(b *testing.B) {
		br := bytes.NewReader(nil)
		fr := kflate.NewReader(br)
		b.SetBytes(int64(total))
		for b.Loop() {
			for i, c := range cdata {
				br.Reset(c)
				fr.(kflate.Resetter).Reset(br, nil)
				if _, err := io.ReadFull(fr, dst[:sizes[i]]); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
	b.Run("stdlib", func(b *testing.B) {
		br := bytes.NewReader(nil)
		fr := flate.NewReader(br)
		b.SetBytes(int64(total))
		for b.Loop() {
			for i, c := range cdata {
				br.Reset(c)
				fr.(flate.Resetter).Reset(br, nil)
				if _, err := io.ReadFull(fr, dst[:sizes[i]]); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
}

// BenchmarkInflateFile is BenchmarkInflate on the first 400 blocks of the
// BGZF file named by FGAUGE_BENCH_BGZF (bench/run sets it to its tiled
// cohort); it is skipped when the variable is unset.
func BenchmarkInflateFile(b *testing.B) {
	path := os.Getenv("FGAUGE_BENCH_BGZF")
	if path == "" {
		b.Skip("FGAUGE_BENCH_BGZF is not set")
	}
	cdata := bgzfPayloads(b, path, 400)
	var sizes []int
	total := 0
	for _, c := range cdata {
		out, _, err := stdInflate(c, 1<<16)
		if err != nil {
			b.Fatal(err)
		}
		sizes = append(sizes, len(out))
		total += len(out)
	}
	dst := make([]byte, 1<<16)
	b.Run("block", func(b *testing.B) {
		f := new(inflater)
		b.SetBytes(int64(total))
		for b.Loop() {
			for i, c := range cdata {
				if _, _, err := f.inflate(dst[:sizes[i]], c); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
	b.Run("klauspost", func(b *testing.B) {
		br := bytes.NewReader(nil)
		fr := kflate.NewReader(br)
		b.SetBytes(int64(total))
		for b.Loop() {
			for i, c := range cdata {
				br.Reset(c)
				fr.(kflate.Resetter).Reset(br, nil)
				if _, err := io.ReadFull(fr, dst[:sizes[i]]); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
}
