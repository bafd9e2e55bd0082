package genmap

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"compress/gzip"
)

// Interpolation and extrapolation, worked by hand from the points of the
// map (linear between points, the nearest slope beyond the ends, the
// caller's cM/Mb for a single point: common practice).
func TestRead(t *testing.T) {
	const in = "\xef\xbb\xbf# made up\nchrom pos cm\nchr1 1000000 0.5\n1 2000000 2.5\n1 4000000 3.5\n2 500 1\n"
	m, err := Read(strings.NewReader(in), "map.txt")
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"chr1", "1", "CHR1", "Chr1"} {
		if m.Chrom(name) == nil || len(m.Chrom(name).Pos) != 3 {
			t.Fatalf("Chrom(%q) = %v, want the three points given as chr1 and 1", name, m.Chrom(name))
		}
	}
	c := m.Chrom("1")
	for _, tc := range []struct {
		pos  int64
		want float64
	}{{1_000_000, 0.5}, {1_500_000, 1.5}, {3_000_000, 3.0}, {5_000_000, 4.0}, {0, -1.5}} {
		if got := c.At(tc.pos, 1); math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("At(%d) = %g, want %g", tc.pos, got, tc.want)
		}
		if back := c.PosAt(tc.want, 1); math.Abs(back-float64(tc.pos)) > 1e-6 {
			t.Errorf("PosAt(%g) = %g, want %d", tc.want, back, tc.pos)
		}
	}
	if got := m.Chrom("chr2").At(1_000_500, 2); math.Abs(got-3) > 1e-12 {
		t.Errorf("single point map: got %g, want 3", got)
	}
	if got := m.Chrom("chr2").PosAt(3, 2); math.Abs(got-1_000_500) > 1e-6 {
		t.Errorf("single point map inverse: got %g, want 1000500", got)
	}
	if m.Chrom("3") != nil || (*Map)(nil).Chrom("1") != nil {
		t.Error("absent chromosome or nil map gives a map")
	}
	for _, bad := range []string{"1 100 1\n1 50 2\n", "1 100 2\n1 200 1\n", "1 100\n", "1 100 1\n1 x 2\n",
		"", "# only a comment\n", "chrom pos cm\nchrom pos cm\n1 1 1\n", "1 -5 1\n", "1 5 NaN\n"} {
		_, err := Read(strings.NewReader(bad), "bad.txt")
		if !errors.Is(err, ErrMap) || !strings.HasPrefix(err.Error(), "bad.txt") {
			t.Errorf("%q: got %v, want ErrMap naming bad.txt", bad, err)
		}
	}
	// A flat stretch: PosAt returns its first position.
	flat, err := Read(strings.NewReader("1 100 1\n1 200 1\n1 300 2\n"), "flat")
	if err != nil {
		t.Fatal(err)
	}
	if got := flat.Chrom("1").PosAt(1, 1); got != 100 {
		t.Errorf("PosAt on a flat stretch = %g, want 100", got)
	}
}

// ReadFile takes plain and gzip-compressed maps alike.
func TestReadFileGzip(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "map.txt.gz")
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	zw := gzip.NewWriter(f)
	zw.Write([]byte("chr5 10 0\nchr5 20 1\n"))
	zw.Close()
	f.Close()
	m, err := ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	if got := m.Chrom("5").At(15, 1); got != 0.5 {
		t.Errorf("At(15) = %g, want 0.5", got)
	}
}

// TestPosAtFlatEnd: where the map is flat from an inner point to the last
// one, the cM of that flat stretch maps back to its first point (the
// smallest position reaching it). Found by FuzzRead.
func TestPosAtFlatEnd(t *testing.T) {
	m, err := Read(strings.NewReader("1 1 0\n1 7 5\n1 11 5\n"), "flat.map")
	if err != nil {
		t.Fatal(err)
	}
	c := m.Chroms[Key("1")]
	if got := c.PosAt(5, 1); got != 7 {
		t.Errorf("PosAt(5) = %g, want 7", got)
	}
	if got := c.PosAt(6, 1); got != 11 {
		t.Errorf("PosAt(6) = %g, want 11 (past the flat end)", got)
	}
}

// FuzzRead: the reader never panics; what it accepts is sorted, and the
// interpolation does not decrease and PosAt inverts At at the points.
func FuzzRead(f *testing.F) {
	f.Add("chrom pos cm\n1 1000 0.1\n1 2000 0.3\n")
	f.Add("# c\nchr2 5 0\nchr2 9 0\n")
	f.Add("1 1 1\n1 1 1\n")
	f.Add("\xef\xbb\xbf1\t10\t0\n1\t20\t5\n")
	f.Add("1 1 0\n1 7 5\n1 11 5\n") // flat at the end: PosAt(5) is 7, not 11
	f.Fuzz(func(t *testing.T, in string) {
		m, err := Read(strings.NewReader(in), "fuzz.map")
		if err != nil {
			if !errors.Is(err, ErrMap) && !strings.Contains(err.Error(), "fuzz.map") {
				t.Fatalf("error without position or sentinel: %v", err)
			}
			return
		}
		for _, c := range m.Chroms {
			for i := 1; i < len(c.Pos); i++ {
				if c.Pos[i] <= c.Pos[i-1] || c.CM[i] < c.CM[i-1] {
					t.Fatalf("accepted unsorted map %v %v", c.Pos, c.CM)
				}
			}
			prev := math.Inf(-1)
			for _, p := range c.Pos {
				cm := c.At(p, 1)
				if cm < prev {
					t.Fatalf("interpolation decreases at %d", p)
				}
				prev = cm
				if back := c.PosAt(cm, 1); back > float64(p)+1e-6*math.Max(1, float64(p)) {
					t.Fatalf("PosAt(At(%d)) = %g, past %d", p, back, p)
				}
			}
		}
	})
}
