package vcfscan

import (
	"bytes"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// siteTable is an invented per-site table: a header line, then chrom, pos
// and a value, sorted, on three chromosomes, long enough for many BGZF
// blocks.
func siteTable(n int) (text string, rows [][3]string) {
	var b strings.Builder
	b.WriteString("chrom\tpos\tvalue\n")
	rng := rand.New(rand.NewPCG(3, 4))
	for _, c := range []string{"2", "1", "chr10"} {
		pos := int64(0)
		for i := 0; i < n; i++ {
			pos += 1 + rng.Int64N(3000)
			v := fmt.Sprintf("%.6f", rng.Float64())
			fmt.Fprintf(&b, "%s\t%d\t%s\n", c, pos, v)
			rows = append(rows, [3]string{c, fmt.Sprint(pos), v})
		}
	}
	return b.String(), rows
}

// tabixQueries asks the Debian tabix command (htslib) for random regions
// of path and checks each answer equals filtering rows by the region.
func tabixQueries(t *testing.T, path string, rows [][3]string, rng *rand.Rand) {
	t.Helper()
	tabixCmd, err := exec.LookPath("tabix")
	if err != nil {
		t.Skip("the tabix command is not installed (Debian package tabix); it checks our .tbi")
	}
	maxPos := map[string]int64{}
	pos := make([]int64, len(rows))
	for i, r := range rows {
		pos[i], _ = strconv.ParseInt(r[1], 10, 64)
		maxPos[r[0]] = max(maxPos[r[0]], pos[i])
	}
	for q := 0; q < 60; q++ {
		c := []string{"2", "1", "chr10"}[rng.IntN(3)]
		a := 1 + rng.Int64N(maxPos[c])
		e := a + rng.Int64N(400_000)
		if q%10 == 0 {
			e = a // single position
		}
		out, err := exec.Command(tabixCmd, path, fmt.Sprintf("%s:%d-%d", c, a, e)).Output()
		if err != nil {
			t.Fatalf("tabix %s %s:%d-%d: %v", path, c, a, e, err)
		}
		var want bytes.Buffer
		for i, r := range rows {
			if p := pos[i]; r[0] == c && p >= a && p <= e {
				want.WriteString(strings.Join(r[:], "\t") + "\n")
			}
		}
		if !bytes.Equal(out, want.Bytes()) {
			t.Fatalf("tabix %s:%d-%d: %d bytes, filtering the table gives %d", c, a, e, len(out), want.Len())
		}
	}
}

// IndexBGZFTable writes a .tbi beside a finished table; region queries
// through it, made by the Debian tabix command (htslib 1.16), return
// exactly the lines filtering the table returns.
func TestIndexBGZFTableWithTabix(t *testing.T) {
	text, rows := siteTable(20000)
	path := filepath.Join(t.TempDir(), "sites.tsv.gz")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	bw := NewBGZFWriter(f, 1)
	bw.Write([]byte(text))
	if err := bw.Close(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	if err := IndexBGZFTable(path, TabixSitesColumns); err != nil {
		t.Fatal(err)
	}
	idx, err := OpenIndex(path, nil)
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(idx.Names(), ","); got != "2,1,chr10" {
		t.Errorf("index names %s, want 2,1,chr10 (file order)", got)
	}
	for _, r := range idx.Refs {
		if r.Records != 20000 {
			t.Errorf("%s: %d records in the index, want 20000", r.Name, r.Records)
		}
	}
	tabixQueries(t, path, rows, rand.New(rand.NewPCG(9, 9)))
}

// A TabixWriter fed while the table is written, with BGZFWriter.Offset
// giving each line's chunk, gives an index that answers the same.
func TestTabixWriterStreaming(t *testing.T) {
	text, rows := siteTable(8000)
	path := filepath.Join(t.TempDir(), "streamed.tsv.gz")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	bw := NewBGZFWriter(f, 6)
	idx := NewTabixWriter(TabixSitesColumns)
	lines := strings.SplitAfter(text, "\n")
	for i, l := range lines {
		if l == "" {
			continue
		}
		begin, err := bw.Offset()
		if err != nil {
			t.Fatal(err)
		}
		bw.Write([]byte(l))
		if i == 0 {
			continue // header
		}
		end, err := bw.Offset()
		if err != nil {
			t.Fatal(err)
		}
		chrom, beg, e, err := tabixInterval([]byte(strings.TrimSuffix(l, "\n")), TabixSitesColumns)
		if err != nil {
			t.Fatal(err)
		}
		if err := idx.Add(chrom, beg, e, Chunk{begin, end}); err != nil {
			t.Fatal(err)
		}
	}
	if err := bw.Close(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	tf, err := os.Create(path + ".tbi")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := idx.WriteTo(tf); err != nil {
		t.Fatal(err)
	}
	tf.Close()
	if err := idx.Add("2", 5, 6, Chunk{}); err == nil {
		t.Error("a chromosome met again after others was accepted")
	}
	tabixQueries(t, path, rows, rand.New(rand.NewPCG(5, 5)))
}

// FuzzIndexBGZFTable: damaged BGZF or table text never makes the indexer
// panic, and every refusal is a ParseError naming the file.
func FuzzIndexBGZFTable(f *testing.F) {
	var good bytes.Buffer
	bw := NewBGZFWriter(&good, 6)
	bw.Write([]byte("chrom\tpos\tv\n1\t5\ta\n1\t9\tb\n2\t3\tc\n"))
	bw.Close()
	f.Add(good.Bytes())
	f.Add(good.Bytes()[:40])
	f.Add([]byte(BGZFEOF))
	f.Fuzz(func(t *testing.T, b []byte) {
		path := filepath.Join(t.TempDir(), "t.tsv.gz")
		if err := os.WriteFile(path, b, 0o644); err != nil {
			t.Fatal(err)
		}
		err := IndexBGZFTable(path, TabixSitesColumns)
		var pe *ParseError
		if err != nil && (!errors.As(err, &pe) || pe.File != path) {
			t.Fatalf("error without the file: %v", err)
		}
	})
}
