package scanrun

import (
	"bytes"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"fgauge/vcfscan"
)

// TestXStoreRoundTrip: calls stored 4 bits each come back unchanged, for
// odd and even sample counts (simple reference: the calls as written).
func TestXStoreRoundTrip(t *testing.T) {
	for _, n := range []int{1, 2, 7, 300} {
		x := newXDeferral(filepath.Join(t.TempDir(), "x"), n)
		rng := rand.New(rand.NewPCG(uint64(n), 9))
		var want [][]vcfscan.Geno
		for k := 0; k < 50; k++ {
			calls := make([]vcfscan.Geno, n)
			for i := range calls {
				calls[i] = vcfscan.Geno(rng.IntN(6))
			}
			want = append(want, calls)
			rec := &vcfscan.Record{Pos: int64(100 + k), Ref: []byte("C"), Alt: []byte("T")}
			if err := x.store("chrX", rec, calls); err != nil {
				t.Fatal(err)
			}
		}
		if err := x.w.Flush(); err != nil {
			t.Fatal(err)
		}
		f, err := os.Open(x.path)
		if err != nil {
			t.Fatal(err)
		}
		rd := &xReader{r: bufioReader(f), ns: n}
		for k, w := range want {
			if err := rd.next(); err != nil {
				t.Fatal(err)
			}
			if string(rd.chrom) != "chrX" || rd.rec.Pos != int64(100+k) || !bytes.Equal(rd.rec.Alt, []byte("T")) || !slices.Equal(rd.calls, w) {
				t.Fatalf("n=%d record %d: read back %s:%d %v", n, k, rd.chrom, rd.rec.Pos, rd.calls)
			}
		}
		f.Close()
		x.close()
	}
}

// BenchmarkXStore: storing and reading back one X record of 1,000
// samples, reported per genotype.
func BenchmarkXStore(b *testing.B) {
	const n = 1000
	calls := make([]vcfscan.Geno, n)
	for i := range calls {
		calls[i] = vcfscan.Geno(i % 6)
	}
	rec := &vcfscan.Record{Pos: 12345, Ref: []byte("A"), Alt: []byte("G")}
	x := newXDeferral(filepath.Join(b.TempDir(), "x"), n)
	defer x.close()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := x.store("X", rec, calls); err != nil {
			b.Fatal(err)
		}
	}
	if err := x.w.Flush(); err != nil {
		b.Fatal(err)
	}
	f, _ := os.Open(x.path)
	defer f.Close()
	rd := &xReader{r: bufioReader(f), ns: n}
	for i := 0; i < b.N; i++ {
		if err := rd.next(); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/genotype")
}
