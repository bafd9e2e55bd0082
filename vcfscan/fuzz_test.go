package vcfscan

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/klauspost/compress/gzip"
)

// FuzzVCFLine feeds arbitrary data lines after a fixed three-sample
// header. The reader must not panic or hang, and the word-at-a-time GT
// path must agree with the general path (forced by MinDP when no DP key
// masks anything).
func FuzzVCFLine(f *testing.F) {
	seeds := []string{
		"1\t10\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1",
		"1\t10\t.\tA\tG\t.\tPASS\t.\tGT\t0|0\t./.\t1",
		"1\t10\t.\tA\tG\t.\tPASS\tAF=0.5\tGT:GQ:PL\t0/0:3:0,3,30\t0/1:.:.\t./1:9",
		"1\t10\t.\tA\tG,T\t.\tPASS\t.\tGT\t0/0\t0/2\t1/1",
		"1\t10\t.\tA\tG\t.\tPASS\t.\tGT\t0/0/1\t|0|1\t0/2",
		"1\t10\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1",
		"X\t0\t.\tA\t<DEL>\t.\t.\t.\t.\t\t\t",
	}
	for _, s := range seeds {
		f.Add(s)
	}
	// Data lines of real fixtures (see testdata/SOURCES.md).
	for _, name := range []string{"test-genotypes.vcf", "issue_198.vcf", "test-format-string.vcf"} {
		data, err := os.ReadFile(filepath.Join("..", "testdata", "edge", name))
		if err != nil {
			f.Fatal(err)
		}
		for _, l := range strings.Split(string(data), "\n") {
			if l != "" && l[0] != '#' {
				f.Add(l)
			}
		}
	}
	f.Fuzz(func(t *testing.T, lines string) {
		data := mini(lines)
		lim := Limits{MaxLineBytes: 1 << 16, MaxAlleles: 50}
		fast, errFast := readBytes(t, data, Options{Threads: 2, Limits: lim, IncludeFiltered: true, chunkBytes: 1024})
		slow, errSlow := readBytes(t, data, Options{Threads: 1, Limits: lim, IncludeFiltered: true, MinDP: 1, WantPL: true, chunkBytes: 100})
		var pe *ParseError
		if errFast == nil && errors.As(errSlow, &pe) && (pe.Field == "PL" || pe.Field == "GL") {
			return // only the general path reads likelihoods (WantPL)
		}
		if (errFast == nil) != (errSlow == nil) {
			t.Fatalf("fast path error %v, general path error %v", errFast, errSlow)
		}
		if errFast != nil || slow.masked > 0 {
			return
		}
		if !reflect.DeepEqual(fast.gts, slow.gts) || fast.skipped != slow.skipped || !reflect.DeepEqual(fast.sites, slow.sites) {
			t.Fatalf("paths disagree: fast %v %v, general %v %v", fast.gts, fast.skipped, slow.gts, slow.skipped)
		}
	})
}

// FuzzBGZF feeds arbitrary bytes to the block reader. It must not panic
// or hang, and whatever it accepts must equal what a plain multi-member
// gzip reader (klauspost/compress/gzip) makes of the same bytes.
func FuzzBGZF(f *testing.F) {
	for _, p := range []string{
		filepath.Join("..", "testdata", "edge", "test-multiallelic-homozygous-alt.vcf.gz"),
	} {
		data, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Add(bgzfEOF)
	f.Add(toBGZF(f, []byte("##fileformat=VCFv4.2\n")))
	f.Add([]byte{0x1f, 0x8b, 8, 4, 0, 0, 0, 0, 0, 0xff, 6, 0, 'B', 'C', 2, 0, 0xff, 0xff})
	f.Fuzz(func(t *testing.T, data []byte) {
		z, err := newBGZFReader(bytes.NewReader(data), "fuzz", 2, 1<<16, nil)
		if err != nil {
			t.Fatal(err)
		}
		got, err := io.ReadAll(z)
		z.Close()
		if err != nil {
			return
		}
		if len(data) == 0 {
			if len(got) != 0 {
				t.Fatal("bytes from nothing")
			}
			return
		}
		zr, err := gzip.NewReader(bytes.NewReader(data))
		if err != nil {
			t.Fatalf("accepted input that gzip rejects: %v", err)
		}
		want, err := io.ReadAll(zr)
		if err != nil {
			t.Fatalf("accepted input that gzip rejects: %v", err)
		}
		if !bytes.Equal(got, want) {
			t.Fatalf("inflated %d bytes, gzip %d", len(got), len(want))
		}
	})
}
