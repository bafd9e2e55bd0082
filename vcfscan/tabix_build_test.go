package vcfscan

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/biogo/hts/bgzf/index"
	"github.com/biogo/hts/tabix"
	"github.com/klauspost/compress/flate"
)

// biogoTabix is the reference TabixWriter builds its index against: the
// same records given to biogo/hts/tabix v1.4.5 (tabix.Index.Add,
// MergeChunks(index.Adjacent) every 2^16 records and before writing,
// tabix.WriteTo), with the same guards as TabixWriter.Add.
type biogoTabix struct {
	idx   *tabix.Index
	err   error
	added int
}

func newBiogoTabix(cols TabixColumns) *biogoTabix {
	idx := tabix.New()
	idx.Format = 0
	if cols.VCF {
		idx.Format = 2
	}
	idx.ZeroBased = cols.ZeroBased
	idx.NameColumn, idx.BeginColumn, idx.EndColumn = int32(cols.Seq), int32(cols.Begin), int32(cols.End)
	idx.MetaChar = rune(cols.Meta)
	idx.Skip = int32(cols.Skip)
	return &biogoTabix{idx: idx}
}

func (t *biogoTabix) add(chrom string, beg, end int64, c Chunk) error {
	if t.err != nil {
		return t.err
	}
	if beg < 0 || end <= beg || end > tabixMaxPos {
		t.err = fmt.Errorf("outside")
		return t.err
	}
	ids := t.idx.IDs()
	_, known := ids[chrom]
	if known && chrom != t.idx.Names()[len(t.idx.Names())-1] {
		t.err = fmt.Errorf("again")
		return t.err
	}
	bEnd := end
	if end%(1<<14) == 0 {
		bEnd = end - 1
	}
	err := noPanic(func() error {
		return t.idx.Add(tabixRecord{chrom, int(beg), int(bEnd)}, toBGZFChunk(c), true, true)
	})
	if !known {
		ids[chrom] = len(t.idx.Names()) - 1
	}
	if err != nil {
		t.err = err
	}
	if t.added++; t.added%(1<<16) == 0 {
		t.idx.MergeChunks(index.Adjacent)
	}
	return t.err
}

func (t *biogoTabix) bytes(tb testing.TB) []byte {
	t.idx.MergeChunks(index.Adjacent)
	var out bytes.Buffer
	bw := NewBGZFWriter(&out, flate.DefaultCompression)
	bw.SetThreads(1)
	if err := tabix.WriteTo(bw, t.idx); err != nil {
		tb.Fatal(err)
	}
	if err := bw.Close(); err != nil {
		tb.Fatal(err)
	}
	return out.Bytes()
}

// tabixRecord is what biogo's index takes: 0-based half-open interval.
type tabixRecord struct {
	chrom      string
	start, end int
}

func (r tabixRecord) RefName() string { return r.chrom }
func (r tabixRecord) Start() int      { return r.start }
func (r tabixRecord) End() int        { return r.end }

type tabixRec struct {
	chrom    string
	beg, end int64
	c        Chunk
}

// compareTabix feeds recs to TabixWriter and to biogo and compares the
// errors and the written index bytes.
func compareTabix(t testing.TB, cols TabixColumns, recs []tabixRec) {
	ours, ref := NewTabixWriter(cols), newBiogoTabix(cols)
	for i, r := range recs {
		e1, e2 := ours.Add(r.chrom, r.beg, r.end, r.c), ref.add(r.chrom, r.beg, r.end, r.c)
		if (e1 == nil) != (e2 == nil) {
			t.Fatalf("record %d %s:%d-%d: error %v, biogo %v", i, r.chrom, r.beg, r.end, e1, e2)
		}
		if e1 != nil {
			return
		}
	}
	var got bytes.Buffer
	if _, err := ours.WriteTo(&got); err != nil {
		t.Fatal(err)
	}
	if want := ref.bytes(t); !bytes.Equal(got.Bytes(), want) {
		t.Fatalf("index of %d records: %d bytes, biogo/hts writes %d bytes, not the same", len(recs), got.Len(), len(want))
	}
}

// tableRecs returns the records of a BGZF table file with their chunks,
// as IndexBGZFTable reads them.
func tableRecs(t testing.TB, path string, cols TabixColumns) []tabixRec {
	var recs []tabixRec
	err := scanBGZFLines(path, func(line []byte, n int64, c Chunk) error {
		if int(n) <= cols.Skip || (cols.Meta != 0 && len(line) > 0 && line[0] == cols.Meta) {
			return nil
		}
		chrom, beg, end, err := tabixInterval(line, cols)
		if err != nil {
			return err
		}
		recs = append(recs, tabixRec{chrom, beg, end, c})
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return recs
}

// TestTabixBuildMatchesBiogo: the index TabixWriter writes is byte for
// byte the one biogo/hts/tabix v1.4.5 writes for the same records: an
// invented sites table (3 chromosomes x 30,000 sites, more than 2^16
// records so the periodic merge runs), the VCF fixtures (records of
// several bases, chromosomes in header order), records crossing 16 kb
// windows and on window boundaries, an empty table, and refused input.
func TestTabixBuildMatchesBiogo(t *testing.T) {
	text, _ := siteTable(30000)
	path := filepath.Join(t.TempDir(), "sites.tsv.gz")
	var z bytes.Buffer
	bw := NewBGZFWriter(&z, 1)
	bw.Write([]byte(text))
	bw.Close()
	if err := os.WriteFile(path, z.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	compareTabix(t, TabixSitesColumns, tableRecs(t, path, TabixSitesColumns))
	for _, f := range []string{"../testdata/cohort189.vcf.gz", "../testdata/chr22_1000g.vcf.gz", "../testdata/edge/chr7-sub.vcf.gz"} {
		t.Run(filepath.Base(f), func(t *testing.T) {
			recs := tableRecs(t, f, TabixVCFColumns)
			if len(recs) == 0 {
				t.Fatalf("%s: no records", f)
			}
			compareTabix(t, TabixVCFColumns, recs)
		})
	}
	compareTabix(t, TabixSitesColumns, nil)
	at := func(i int) Chunk {
		return Chunk{Offset{File: int64(i / 7 * 300), Block: uint16(i % 7 * 40)}, Offset{File: int64((i + 1) / 7 * 300), Block: uint16((i + 1) % 7 * 40)}}
	}
	// Long records (an End column), boundaries, a refused order.
	long := []tabixRec{{"a", 10, 20, at(0)}, {"a", 16380, 16384, at(1)}, {"a", 16383, 40000, at(2)}, {"a", 16384, 16385, at(3)},
		{"a", 32767, 32768, at(4)}, {"a", 50000, 50000 + 1<<17, at(5)}, {"a", 60000, 60001, at(6)}, {"b", 1 << 28, 1<<28 + 1<<21, at(7)},
		{"b", 1<<29 - 2, 1 << 29, at(8)}}
	compareTabix(t, TabixColumns{Seq: 1, Begin: 2, End: 3, ZeroBased: true}, long)
	compareTabix(t, TabixSitesColumns, []tabixRec{{"a", 100, 101, at(0)}, {"a", 50, 51, at(1)}})
	compareTabix(t, TabixSitesColumns, []tabixRec{{"a", 10, 11, at(0)}, {"a", 20000, 40000, at(1)}})
	compareTabix(t, TabixSitesColumns, []tabixRec{{"a", 10, 11, at(0)}, {"b", 5, 6, at(1)}, {"a", 12, 13, at(2)}})
}

// FuzzTabixBuild: for any records (chromosome, start, length, chunk
// lengths) TabixWriter and biogo/hts agree on refusal and on the bytes.
func FuzzTabixBuild(f *testing.F) {
	f.Add([]byte{0, 10, 1, 5, 0, 200, 3, 9, 1, 4, 2, 1, 1, 255, 255, 7})
	f.Add([]byte(strings.Repeat("\x00\x40\x01\x03", 40)))
	f.Fuzz(func(t *testing.T, b []byte) {
		var recs []tabixRec
		rng := rand.New(rand.NewPCG(uint64(len(b)), 1))
		pos, file, blk := int64(0), int64(0), 0
		for i := 0; i+3 < len(b) && len(recs) < 3000; i += 4 {
			chrom := string(rune('a' + b[i]%3))
			pos += int64(b[i+1]) * int64(1+rng.IntN(400))
			if b[i]&0x80 != 0 {
				pos -= int64(b[i+1]) // sometimes out of order
			}
			length := int64(1 + int(b[i+2])*int(b[i+2])*int(b[i+2])%70000)
			begin := Offset{File: file, Block: uint16(blk)}
			blk += 1 + int(b[i+3])*37
			if blk > 65000 {
				file, blk = file+int64(blk/3), blk%97
			}
			recs = append(recs, tabixRec{chrom, max(pos, 0), max(pos, 0) + length, Chunk{begin, Offset{File: file, Block: uint16(blk)}}})
		}
		compareTabix(t, TabixSitesColumns, recs)
	})
}

// BenchmarkTabixWriter indexes 1 M sites on two 100 Mb chromosomes, as a
// 100-sample, 1 M-site scan's sites table (biogo/hts: a linear search of
// the bins per record).
func BenchmarkTabixWriter(b *testing.B) {
	recs := make([]tabixRec, 0, 1_000_000)
	for i := 0; i < cap(recs); i++ {
		chrom := "1"
		if i >= cap(recs)/2 {
			chrom = "2"
		}
		p := int64(i%(cap(recs)/2)) * 200
		o := int64(i) * 110
		recs = append(recs, tabixRec{chrom, p, p + 1, Chunk{Offset{File: o >> 16 * 30000, Block: uint16(o & 0xffff)}, Offset{File: (o + 110) >> 16 * 30000, Block: uint16((o + 110) & 0xffff)}}})
	}
	b.Run("ours", func(b *testing.B) {
		for b.Loop() {
			w := NewTabixWriter(TabixSitesColumns)
			for _, r := range recs {
				w.Add(r.chrom, r.beg, r.end, r.c)
			}
			w.WriteTo(&bytes.Buffer{})
		}
	})
	b.Run("biogo", func(b *testing.B) {
		for b.Loop() {
			w := newBiogoTabix(TabixSitesColumns)
			for _, r := range recs {
				w.add(r.chrom, r.beg, r.end, r.c)
			}
			w.bytes(b)
		}
	})
}
