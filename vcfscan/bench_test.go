package vcfscan

import (
	"bytes"
	"io"
	"math/rand"
	"os"
	"strconv"
	"testing"
)

// synthVCF makes an invented cohort of nSamples animals with phased GT
// calls over nLines sites, for benchmarks only.
func synthVCF(nSamples, nLines int) []byte {
	var b bytes.Buffer
	b.WriteString("##fileformat=VCFv4.2\n##contig=<ID=1,length=250000000>\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for i := 0; i < nSamples; i++ {
		b.WriteString("\tanimal")
		b.WriteString(strconv.Itoa(i))
	}
	b.WriteByte('\n')
	rng := rand.New(rand.NewSource(1))
	pos := 0
	for l := 0; l < nLines; l++ {
		pos += 1 + rng.Intn(2000)
		p := 0.02 + 0.48*rng.Float64()*rng.Float64()
		b.WriteString("1\t")
		b.WriteString(strconv.Itoa(pos))
		b.WriteString("\t.\tA\tG\t50\tPASS\tNS=1\tGT")
		for i := 0; i < nSamples; i++ {
			x, y := byte('0'), byte('0')
			if rng.Float64() < p {
				x = '1'
			}
			if rng.Float64() < p {
				y = '1'
			}
			b.Write([]byte{'\t', x, '|', y})
		}
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// BenchmarkBGZFDecode measures parallel BGZF inflation (bytes/s of
// inflated output).
func BenchmarkBGZFDecode(b *testing.B) {
	text := synthVCF(1000, 5000)
	enc := toBGZF(b, text)
	b.SetBytes(int64(len(text)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		z, err := newBGZFReader(bytes.NewReader(enc), "bench", 2, 0, nil)
		if err != nil {
			b.Fatal(err)
		}
		if _, err := io.Copy(io.Discard, z); err != nil {
			b.Fatal(err)
		}
		z.Close()
	}
}

func benchScan(b *testing.B, data []byte, opt Options) {
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		r, err := NewReader(bytes.NewReader(data), "bench", opt)
		if err != nil {
			b.Fatal(err)
		}
		for {
			bt, err := r.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			r.Release(bt)
		}
		r.Close()
	}
}

// BenchmarkVCFParse measures parsing plain text (bytes/s of text).
func BenchmarkVCFParse(b *testing.B) {
	benchScan(b, synthVCF(1000, 5000), Options{Threads: 2})
}

// BenchmarkVCFParseMasked measures the general path (DP/GQ masking and
// PL decoding) on caller-style GT:AD:DP:GQ:PL columns.
func BenchmarkVCFParseMasked(b *testing.B) {
	benchScan(b, synthRichVCF(1000, 1000), Options{Threads: 2, MinGQ: 20, MinDP: 5, WantPL: true})
}

// synthRichVCF is synthVCF with GT:AD:DP:GQ:PL sample columns.
func synthRichVCF(nSamples, nLines int) []byte {
	var b bytes.Buffer
	b.WriteString("##fileformat=VCFv4.2\n##contig=<ID=1,length=250000000>\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for i := 0; i < nSamples; i++ {
		b.WriteString("\tanimal")
		b.WriteString(strconv.Itoa(i))
	}
	b.WriteByte('\n')
	rng := rand.New(rand.NewSource(2))
	calls := []string{"0/0:12,0:12:36:0,36,400", "0/1:6,7:13:99:120,0,110", "1/1:0,9:9:27:300,27,0", "./.:0,0:0:.:."}
	for l := 0; l < nLines; l++ {
		b.WriteString("1\t")
		b.WriteString(strconv.Itoa(100 * (l + 1)))
		b.WriteString("\t.\tA\tG\t50\tPASS\tDP=10000\tGT:AD:DP:GQ:PL")
		for i := 0; i < nSamples; i++ {
			b.WriteByte('\t')
			b.WriteString(calls[rng.Intn(len(calls))])
		}
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// BenchmarkScanBGZF measures inflate plus parse together.
func BenchmarkScanBGZF(b *testing.B) {
	text := synthVCF(1000, 5000)
	enc := toBGZF(b, text)
	b.SetBytes(int64(len(text)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		benchScanOnce(b, bytes.NewReader(enc))
	}
}

func benchScanOnce(b *testing.B, src io.Reader) {
	r, err := NewReader(src, "bench", Options{Threads: 2})
	if err != nil {
		b.Fatal(err)
	}
	for {
		bt, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			b.Fatal(err)
		}
		r.Release(bt)
	}
	r.Close()
}

// BenchmarkScanFile reads the file named by FGAUGE_BENCH_VCF (skipped when
// unset), for comparing with other decompressors on large inputs.
func BenchmarkScanFile(b *testing.B) {
	path := os.Getenv("FGAUGE_BENCH_VCF")
	if path == "" {
		b.Skip("set FGAUGE_BENCH_VCF to a VCF file")
	}
	for i := 0; i < b.N; i++ {
		r, err := Open(path, Options{})
		if err != nil {
			b.Fatal(err)
		}
		var n int64
		for {
			bt, err := r.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			n += int64(len(bt.Records))
			r.Release(bt)
		}
		r.Close()
		b.ReportMetric(float64(n), "records")
	}
}

// BenchmarkBGZFWrite measures block compression at level 1, the level the
// scan command uses for its tables (bytes/s of input).
func BenchmarkBGZFWrite(b *testing.B) {
	text := synthVCF(200, 5000)
	b.SetBytes(int64(len(text)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		w := NewBGZFWriter(io.Discard, 1)
		w.SetThreads(2)
		if _, err := w.Write(text); err != nil {
			b.Fatal(err)
		}
		if err := w.Close(); err != nil {
			b.Fatal(err)
		}
	}
}
