package vcfscan

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// OpenIndex lists each reference with records and the number of records
// its statistics count. Record counts per chromosome are from python3-pysam
// 0.20 (pysam.VariantFile, counting records by chrom) on the same files.
func TestOpenIndexRefs(t *testing.T) {
	for _, c := range []struct {
		path, chrom string
		records     int64
	}{
		{"../testdata/chr22_1000g.vcf.gz", "22", 10376},  // tabix
		{"../testdata/bcf/chr22_1000g.bcf", "22", 10376}, // CSI without names: BCF header dictionary
		{"../testdata/annotated_small.bcf", "chr1", 10},  // CSI, 93 contigs in the header
		{"../testdata/cohort189.vcf.gz", "1", 115},       // tabix
		{"../testdata/bcf/cohort189.bcf", "1", 115},      // CSI
	} {
		rd, err := Open(c.path, Options{Threads: 1})
		if err != nil {
			t.Fatal(err)
		}
		h := rd.Header()
		rd.Close()
		idx, err := OpenIndex(c.path, h)
		if err != nil {
			t.Fatalf("%s: %v", c.path, err)
		}
		var with []string
		for _, r := range idx.Refs {
			if r.HasStats {
				with = append(with, r.Name)
			}
		}
		if len(with) != 1 || with[0] != c.chrom {
			t.Errorf("%s: references with records %v, want [%s]", c.path, with, c.chrom)
			continue
		}
		id, ok := idx.Ref(c.chrom)
		if !ok {
			t.Fatalf("%s: Ref(%q) not found", c.path, c.chrom)
		}
		r := idx.Refs[id]
		if r.Records != c.records {
			t.Errorf("%s: %s has %d records in the index, want %d", c.path, c.chrom, r.Records, c.records)
		}
		if !r.Span.Begin.Less(r.Span.End) {
			t.Errorf("%s: span %v is empty", c.path, r.Span)
		}
		// The chunks of the whole reference lie within its span.
		cs, err := idx.Chunks(id, 0, idx.MaxPos)
		if err != nil || len(cs) == 0 {
			t.Fatalf("%s: Chunks: %v, %d chunks", c.path, err, len(cs))
		}
		for _, ch := range cs {
			if ch.Begin.Less(r.Span.Begin) || r.Span.End.Less(ch.End) {
				t.Errorf("%s: chunk %v outside the span %v", c.path, ch, r.Span)
			}
		}
	}
}

// An index older than its data, or one that lies about its sizes, is
// refused with the index file named.
func TestOpenIndexRefuses(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "c.vcf.gz")
	copyFile := func(from, to string) {
		b, err := os.ReadFile(from)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(to, b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	copyFile("../testdata/cohort189.vcf.gz", data)
	copyFile("../testdata/cohort189.vcf.gz.tbi", data+".tbi")
	old := time.Now().Add(-time.Hour)
	if err := os.Chtimes(data+".tbi", old, old); err != nil {
		t.Fatal(err)
	}
	if _, err := OpenIndex(data, nil); !errors.Is(err, ErrStaleIndex) || !strings.Contains(err.Error(), "c.vcf.gz.tbi") {
		t.Errorf("stale index: got %v, want ErrStaleIndex naming c.vcf.gz.tbi", err)
	}
	// TBI magic, one reference, then nothing: cut short.
	if err := os.WriteFile(data+".tbi", []byte("TBI\x01\x01\x00\x00\x00"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := OpenIndex(data, nil); !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), "c.vcf.gz.tbi") {
		t.Errorf("truncated index: got %v, want ErrMalformed naming c.vcf.gz.tbi", err)
	}
	if err := os.WriteFile(data+".tbi", []byte("BAI\x01\x00\x00\x00\x00"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := OpenIndex(data, nil); !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), "not a tabix or CSI index") {
		t.Errorf("wrong magic: got %v, want ErrMalformed", err)
	}
	os.Remove(data + ".tbi")
	if _, err := OpenIndex(data, nil); !errors.Is(err, ErrNoIndex) {
		t.Errorf("no index: got %v, want ErrNoIndex", err)
	}
}
