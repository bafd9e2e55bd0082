package vcfscan

import (
	"bytes"
	"errors"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
)

// writeIndexed writes text through a BGZFWriter with IndexLines, cut into
// writes of random sizes (some splitting lines, some with a Flush after
// them), and returns the table's path and WriteIndex's error.
func writeIndexed(t testing.TB, dir string, text []byte, threads int, rng *rand.Rand) (string, error) {
	path := filepath.Join(dir, "inline.tsv.gz")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	bw := NewBGZFWriter(f, 1)
	bw.SetThreads(threads)
	bw.IndexLines(TabixSitesColumns)
	for len(text) > 0 {
		n := min(len(text), 1+rng.IntN(200_000))
		if _, err := bw.Write(text[:n]); err != nil {
			t.Fatal(err)
		}
		text = text[n:]
		if rng.IntN(8) == 0 {
			if err := bw.Flush(); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := bw.Close(); err != nil {
		t.Fatal(err)
	}
	return path, bw.WriteIndex(path)
}

// The index built while writing is the one IndexBGZFTable builds by
// reading the finished table back, byte for byte, whatever the write
// sizes, flushes and compressing threads.
func TestIndexLinesMatchesReread(t *testing.T) {
	text, _ := siteTable(60000)
	for seed := uint64(1); seed <= 6; seed++ {
		rng := rand.New(rand.NewPCG(seed, 3))
		dir := t.TempDir()
		path, err := writeIndexed(t, dir, []byte(text), 1+int(seed%3), rng)
		if err != nil {
			t.Fatal(err)
		}
		inline, err := os.ReadFile(path + ".tbi")
		if err != nil {
			t.Fatal(err)
		}
		if err := IndexBGZFTable(path, TabixSitesColumns); err != nil {
			t.Fatal(err)
		}
		reread, err := os.ReadFile(path + ".tbi")
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(inline, reread) {
			t.Fatalf("seed %d: the index built while writing differs from the re-read one", seed)
		}
	}
}

// A table whose chromosomes come back, or whose line is not a record,
// gives the errors IndexBGZFTable gives, and no index.
func TestIndexLinesErrors(t *testing.T) {
	for _, c := range []struct {
		text string
		want error
	}{
		{"chrom\tpos\n1\t5\n2\t7\n1\t9\n", ErrUnsorted},
		{"chrom\tpos\n1\t5\n1\tx\n", ErrMalformed},
		{"chrom\tpos\n1\t5\n1\t7", ErrTruncated},
		{"chrom\tpos\n1\t5\n1\t900000000\n", ErrLimit},
	} {
		dir := t.TempDir()
		path, err := writeIndexed(t, dir, []byte(c.text), 1, rand.New(rand.NewPCG(1, 1)))
		if !errors.Is(err, c.want) {
			t.Errorf("%q: got %v, want %v", c.text, err, c.want)
		}
		if err2 := IndexBGZFTable(path, TabixSitesColumns); !errors.Is(err2, c.want) {
			t.Errorf("%q: IndexBGZFTable gives %v", c.text, err2)
		}
		if _, err := os.Stat(path + ".tbi"); err == nil {
			t.Errorf("%q: an index was written", c.text)
		}
	}
}
