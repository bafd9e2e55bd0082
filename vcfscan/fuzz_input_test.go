package vcfscan

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

// gunzipFile returns the inflated content of a gzip/BGZF file.
func gunzipFile(tb testing.TB, path string) []byte {
	tb.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		tb.Fatal(err)
	}
	zr, err := gzip.NewReader(bytes.NewReader(raw))
	if err != nil {
		tb.Fatal(err)
	}
	b, err := io.ReadAll(zr)
	if err != nil {
		tb.Fatal(err)
	}
	return b
}

// FuzzIndex feeds arbitrary tabix/CSI index bytes for a small valid BGZF
// VCF to the region planner. The index decoders trust counts read from the
// file; a damaged index must give an error, never a panic, and accepted
// chunks must lie inside the data file. Seeds: the real indexes in
// testdata (htslib/pysam-built, see testdata/SOURCES.md) and the corpus.
func FuzzIndex(f *testing.F) {
	for _, p := range []string{
		"../testdata/cohort189.vcf.gz.tbi", "../testdata/chr22_1000g.vcf.gz.tbi",
		"../testdata/bcf/chr22_1000g.vcf.gz.csi", "../testdata/bcf/annotated_small.bcf.csi",
		"../testdata/bad/index_past_end.vcf.gz.tbi",
	} {
		f.Add(gunzipFile(f, p))
	}
	f.Add([]byte("TBI\x01"))
	f.Add([]byte("CSI\x01\x0e\x00\x00\x00\x05\x00\x00\x00"))
	data, err := os.ReadFile("../testdata/bad/index_garbage.vcf.gz") // a valid BGZF VCF
	if err != nil {
		f.Fatal(err)
	}
	r, err := NewReader(bytes.NewReader(data), "data.vcf.gz", Options{Threads: 1})
	if err != nil {
		f.Fatal(err)
	}
	hdr := r.Header()
	r.Close()
	regs := []Region{{Chrom: "1", Start: 1}, {Chrom: "2", Start: 1000, End: 3000}}
	path := filepath.Join(f.TempDir(), "data.vcf.gz")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, idx []byte) {
		if err := os.WriteFile(path+".tbi", idx, 0o644); err != nil {
			t.Fatal(err)
		}
		chunks, err := regionChunks(path, hdr, regs)
		if err != nil {
			return
		}
		for _, c := range chunks {
			if c.Begin.File < 0 || c.Begin.File >= int64(len(data)) {
				t.Fatalf("chunk %+v outside the %d-byte data file", c, len(data))
			}
		}
	})
}

// FuzzVCFHeader feeds arbitrary text to the VCF header parser: it must
// not panic, must report problems as *ParseError, and an accepted header
// has unique, non-empty sample names within the limit.
func FuzzVCFHeader(f *testing.F) {
	for _, p := range []string{"../testdata/edge/test-hemi.vcf", "../testdata/edge/no-seq-len.vcf",
		"../testdata/edge/test-invalid-header.vcf", "../testdata/bad/duplicate_samples.vcf",
		"../testdata/bad/chrom_line_spaces.vcf", "../testdata/bad/too_few_fixed_columns.vcf"} {
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, text []byte) {
		lim := Limits{MaxLineBytes: 1 << 16, MaxSamples: 100}
		h, _, _, err := parseTextHeader(bufio.NewReader(bytes.NewReader(text)), "fuzz.vcf", lim, func(string, string) {})
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a ParseError", err)
			}
			return
		}
		if len(h.Samples) > lim.MaxSamples {
			t.Fatalf("%d samples over the limit", len(h.Samples))
		}
		seen := map[string]bool{}
		for _, s := range h.Samples {
			if s == "" || seen[s] {
				t.Fatalf("sample name %q empty or repeated", s)
			}
			seen[s] = true
		}
	})
}

// FuzzBCFHeader feeds arbitrary bytes (after the BGZF layer) to the BCF
// header reader: magic, l_text and the header text. It must not panic
// and must report problems as *ParseError.
func FuzzBCFHeader(f *testing.F) {
	for _, p := range []string{"../testdata/bcf/annotated_small.bcf", "../testdata/bcf/gl_chr1.bcf"} {
		b := gunzipFile(f, p)
		f.Add(b[:min(len(b), 4096)])
	}
	f.Add([]byte("BCF\x02\x02\x05\x00\x00\x00##fi\x00"))
	f.Fuzz(func(t *testing.T, data []byte) {
		_, err := readBCFHeader(bytes.NewReader(data), "fuzz.bcf", Limits{MaxLineBytes: 1 << 16, MaxSamples: 100}, nil)
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a ParseError", err)
			}
		}
	})
}

// FuzzReadAll feeds whole files of any kind (plain or compressed VCF, BCF,
// garbage) to NewReader and reads them to the end with small limits. It
// must not panic or hang, and every error must wrap one of the package's
// sentinels so that callers can tell bad input from a bug. Seeds: the
// malformed-input corpus (testdata/bad) and small edge-case files.
func FuzzReadAll(f *testing.F) {
	seeds, _ := filepath.Glob("../testdata/bad/*")
	seeds = append(seeds, "../testdata/edge/test-genotypes.vcf", "../testdata/bcf/annotated_small.bcf")
	for _, p := range seeds {
		if st, err := os.Stat(p); err != nil || st.IsDir() || st.Size() > 8<<10 {
			continue
		}
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	sentinels := []error{ErrMalformed, ErrTruncated, ErrChecksum, ErrLimit, ErrUnsorted, ErrSampleCount}
	f.Fuzz(func(t *testing.T, data []byte) {
		opt := Options{Threads: 2, RequireSorted: true, WantPL: true,
			Limits: Limits{MaxLineBytes: 1 << 14, MaxSamples: 64, MaxAlleles: 16}}
		r, err := NewReader(bytes.NewReader(data), "fuzz", opt)
		if err == nil {
			for {
				var b *Batch
				if b, err = r.Next(); err != nil {
					break
				}
				r.Release(b)
			}
			r.Close()
			if err == io.EOF {
				return
			}
		}
		for _, s := range sentinels {
			if errors.Is(err, s) {
				return
			}
		}
		t.Fatalf("error %v wraps no sentinel", err)
	})
}
