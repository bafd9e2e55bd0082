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

// sitesLikeTable is n rows shaped as fgauge's sites table: chrom, pos,
// alleles, five counts and ten floats in shortest round-trip form.
func sitesLikeTable(n int) []byte {
	rng := rand.New(rand.NewSource(7))
	var b []byte
	for i := 0; i < n; i++ {
		b = append(b, "1\t"...)
		b = strconv.AppendInt(b, int64(1000+i*1000), 10)
		b = append(b, "\tC\tG"...)
		n0, n1, n2 := rng.Intn(80), rng.Intn(30), rng.Intn(10)
		for _, c := range []int{n0, n1, n2, 100 - n0 - n1 - n2, 0} {
			b = append(b, '\t')
			b = strconv.AppendInt(b, int64(c), 10)
		}
		p := float64(n1+2*n2) / float64(2*(n0+n1+n2)+1)
		for _, x := range []float64{p, p, float64(n0+n1+n2) / 100, float64(n1) / 100, 2 * p * (1 - p), rng.Float64() - 0.5, rng.Float64(), rng.Float64(), 1, rng.Float64()} {
			b = append(b, '\t')
			b = strconv.AppendFloat(b, x, 'g', -1, 64)
		}
		b = append(b, '\n')
	}
	return b
}

// BenchmarkBGZFWrite measures block compression of a sites-like table
// (bytes/s of input; "ratio" is compressed/input) at level 1 and at
// BGZFSitesLevel, the level of the scan's sites.tsv.gz.
func BenchmarkBGZFWrite(b *testing.B) {
	text := sitesLikeTable(100000)
	for _, lv := range []struct {
		name  string
		level int
	}{{"level1", 1}, {"sites_level", BGZFSitesLevel}} {
		b.Run(lv.name, func(b *testing.B) {
			b.SetBytes(int64(len(text)))
			var cw countWriter
			for b.Loop() {
				cw = countWriter{w: io.Discard}
				w := NewBGZFWriter(&cw, lv.level)
				w.SetThreads(1)
				if _, err := w.Write(text); err != nil {
					b.Fatal(err)
				}
				if err := w.Close(); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(cw.n)/float64(len(text)), "ratio")
		})
	}
}
