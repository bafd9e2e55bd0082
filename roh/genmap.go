package roh

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
)

// ErrMap is wrapped by errors reading a genetic map.
var ErrMap = errors.New("malformed genetic map")

// GeneticMap holds genetic positions (cM) of physical positions (bp) per
// chromosome. Positions between map points are interpolated linearly;
// positions beyond the ends are extrapolated with the slope of the nearest
// two points (or the fallback cM/Mb when a chromosome has one point).
type GeneticMap struct {
	Chroms map[string]*ChromMap // keyed by name without "chr"
}

// ChromMap is the map of one chromosome, sorted by position.
type ChromMap struct {
	Pos []int64
	CM  []float64
}

// ReadGeneticMap reads whitespace-separated lines "chrom pos cM" (bp,
// centimorgans). Blank lines and lines starting with '#' are skipped, as is
// a first line whose second field is not a number (a header). Within a
// chromosome, positions must increase and cM must not decrease; lines may
// come in any chromosome order. name is used in error messages.
func ReadGeneticMap(r io.Reader, name string) (*GeneticMap, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 1<<20)
	m := &GeneticMap{Chroms: map[string]*ChromMap{}}
	line := 0
	for sc.Scan() {
		line++
		t := strings.TrimSpace(sc.Text())
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
			if line == 1 {
				continue // header
			}
			return nil, fmt.Errorf("%s:%d: position %q or cM %q is not a number: %w", name, line, f[1], f[2], ErrMap)
		}
		if pos < 0 || cm != cm || cm > 1e6 || cm < -1e6 {
			return nil, fmt.Errorf("%s:%d: position %d or cM %g out of range: %w", name, line, pos, cm, ErrMap)
		}
		key := normName(f[0])
		c := m.Chroms[key]
		if c == nil {
			c = &ChromMap{}
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

// chrom returns the map of a chromosome or nil.
func (m *GeneticMap) chrom(name string) *ChromMap {
	if m == nil {
		return nil
	}
	return m.Chroms[normName(name)]
}

// At returns the genetic position (cM) of pos; fallback is the cM/Mb used
// when the map has a single point.
func (c *ChromMap) At(pos int64, fallback float64) float64 {
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
