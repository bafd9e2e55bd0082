// Package genmap reads genetic maps (physical position in bp to genetic
// position in centiMorgans) and interpolates them. It is the one map
// reader behind every --recombination-map option: the
// runs-of-homozygosity detection in a scan and the gene-drop simulator
// read a map file by the same rules and see the same genetic positions.
//
// The rules:
//
//   - A map is text, plain or gzip/BGZF compressed (detected by content),
//     with whitespace-separated lines "chrom pos cM": pos in bp (>= 0),
//     cM the cumulative genetic position (finite, within +-1e6). Further
//     fields are ignored.
//   - A UTF-8 byte order mark at the start of the file is ignored. Blank
//     lines and lines starting with '#' are skipped. The first other line
//     is a header, and skipped, when its pos or cM is not a number; any
//     later such line is an error.
//   - Chromosome names match without a leading "chr" in any case: "chr7",
//     "Chr7" and "7" are one chromosome, in the map and in the data.
//   - Within a chromosome positions must increase and cM must not
//     decrease; chromosomes may come in any order and may interleave.
//   - Between two map points the genetic position is interpolated
//     linearly; beyond the first or last point it is extrapolated with the
//     slope of the nearest two points (common practice); a chromosome with
//     a single point extrapolates with the caller's cM per Mb.
//
// Errors name the file and line and wrap ErrMap.
package genmap

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"

	"fgauge/vcfscan"
)

// ErrMap is wrapped by every error about the content of a genetic map.
var ErrMap = errors.New("malformed genetic map")

// Map holds the genetic positions of physical positions per chromosome.
// Its fields are exported so that it survives encoding/gob (shard states).
type Map struct {
	Chroms map[string]*Chrom // keyed by Key(name)
}

// Chrom is the map of one chromosome: points sorted by position.
type Chrom struct {
	Pos []int64   // bp, increasing
	CM  []float64 // cumulative cM, not decreasing
}

// Key is the name a chromosome is matched by: name without a leading
// "chr" (any case), so that "chr7" and "7" match.
func Key(name string) string {
	if len(name) > 3 && strings.EqualFold(name[:3], "chr") {
		return name[3:]
	}
	return name
}

// ReadFile reads the map in file path (plain, gzip or BGZF).
func ReadFile(path string) (*Map, error) {
	f, err := vcfscan.OpenText(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return Read(f, path)
}

// Read reads a map by the package's rules; name is used in error
// messages.
func Read(r io.Reader, name string) (*Map, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 1<<20)
	m := &Map{Chroms: map[string]*Chrom{}}
	line := 0
	first := true // no data or header line met yet
	for sc.Scan() {
		line++
		b := sc.Bytes()
		if line == 1 {
			b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")) // UTF-8 byte order mark
		}
		t := strings.TrimSpace(string(b))
		if t == "" || t[0] == '#' {
			continue
		}
		f := strings.Fields(t)
		if len(f) < 3 {
			return nil, fmt.Errorf("%s:%d: want 3 fields (chrom pos cM), got %d: %w", name, line, len(f), ErrMap)
		}
		pos, err1 := strconv.ParseInt(f[1], 10, 64)
		cm, err2 := strconv.ParseFloat(f[2], 64)
		if err1 != nil || err2 != nil {
			if first {
				first = false
				continue // header
			}
			return nil, fmt.Errorf("%s:%d: position %q or cM %q is not a number: %w", name, line, f[1], f[2], ErrMap)
		}
		first = false
		if pos < 0 || cm != cm || cm > 1e6 || cm < -1e6 {
			return nil, fmt.Errorf("%s:%d: position %d or cM %g out of range: %w", name, line, pos, cm, ErrMap)
		}
		key := Key(f[0])
		c := m.Chroms[key]
		if c == nil {
			c = &Chrom{}
			m.Chroms[key] = c
		}
		if n := len(c.Pos); n > 0 {
			if pos <= c.Pos[n-1] {
				return nil, fmt.Errorf("%s:%d: position %d not after %d on %s: %w", name, line, pos, c.Pos[n-1], f[0], ErrMap)
			}
			if cm < c.CM[n-1] {
				return nil, fmt.Errorf("%s:%d: cM %g decreases (previous %g) on %s: %w", name, line, cm, c.CM[n-1], f[0], ErrMap)
			}
		}
		c.Pos = append(c.Pos, pos)
		c.CM = append(c.CM, cm)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s:%d: %w", name, line+1, err)
	}
	if len(m.Chroms) == 0 {
		return nil, fmt.Errorf("%s: no map points: %w", name, ErrMap)
	}
	return m, nil
}

// Chrom returns the map of the chromosome called name (matched by Key),
// or nil when the map (which may be nil) lacks it.
func (m *Map) Chrom(name string) *Chrom {
	if m == nil {
		return nil
	}
	return m.Chroms[Key(name)]
}

// At returns the genetic position (cM) of pos; fallback is the cM per Mb
// used when the chromosome has a single point.
func (c *Chrom) At(pos int64, fallback float64) float64 {
	n := len(c.Pos)
	if n == 1 {
		return c.CM[0] + float64(pos-c.Pos[0])*fallback/1e6
	}
	i := sort.Search(n, func(i int) bool { return c.Pos[i] >= pos })
	var a, b int
	switch {
	case i == 0:
		a, b = 0, 1
	case i == n:
		a, b = n-2, n-1
	default:
		if c.Pos[i] == pos {
			return c.CM[i]
		}
		a, b = i-1, i
	}
	slope := (c.CM[b] - c.CM[a]) / float64(c.Pos[b]-c.Pos[a])
	return c.CM[a] + slope*float64(pos-c.Pos[a])
}

// PosAt inverts At: the smallest (fractional) position whose genetic
// position is cm. Where the map is flat beyond an end point (zero slope),
// genetic positions past that point's cM map to the point itself.
func (c *Chrom) PosAt(cm float64, fallback float64) float64 {
	n := len(c.Pos)
	lineAt := func(a, b int) float64 { // on the line through points a and b
		if c.CM[b] == c.CM[a] {
			return float64(c.Pos[a])
		}
		return float64(c.Pos[a]) + (cm-c.CM[a])/(c.CM[b]-c.CM[a])*float64(c.Pos[b]-c.Pos[a])
	}
	if n == 1 {
		if !(fallback > 0) {
			return float64(c.Pos[0])
		}
		return float64(c.Pos[0]) + (cm-c.CM[0])/fallback*1e6
	}
	switch {
	case cm <= c.CM[0]:
		return lineAt(0, 1)
	case cm > c.CM[n-1]:
		if c.CM[n-1] == c.CM[n-2] {
			return float64(c.Pos[n-1])
		}
		return lineAt(n-2, n-1)
	}
	k := sort.Search(n, func(i int) bool { return c.CM[i] >= cm })
	if c.CM[k] == cm {
		// the first point reaching cm (the smallest position)
		return float64(c.Pos[k])
	}
	return lineAt(k-1, k)
}
