package htmlreport

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
)

// ErrMalformed is wrapped by errors about an output table that does not
// follow the scan's schema.
var ErrMalformed = errors.New("malformed table")

// table is a whole TSV file held as strings, small enough for memory
// (samples.tsv, runs.tsv, populations*.tsv).
type table struct {
	path   string
	header []string
	index  map[string]int
	rows   [][]string
}

// has reports whether the table has the named column.
func (t *table) has(col string) bool {
	if t == nil {
		return false
	}
	_, ok := t.index[col]
	return ok
}

// str returns the cell of row r in column col, "" when the column is absent.
func (t *table) str(r int, col string) string {
	i, ok := t.index[col]
	if !ok || i >= len(t.rows[r]) {
		return ""
	}
	return t.rows[r][i]
}

// num returns the cell as a float, NaN when absent, NA or unparsable.
func (t *table) num(r int, col string) float64 {
	return parseNum(t.str(r, col))
}

// parseNum reads a number cell; NA, empty and junk give NaN.
func parseNum(s string) float64 {
	if s == "" || s == "NA" {
		return math.NaN()
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return math.NaN()
	}
	return v
}

// readTable reads a TSV file with one header line. A missing file returns
// (nil, nil) when optional is true.
func readTable(path string, optional bool, required ...string) (*table, error) {
	f, err := os.Open(path)
	if err != nil {
		if optional && errors.Is(err, os.ErrNotExist) {
			return nil, nil
		}
		return nil, err
	}
	defer f.Close()
	return parseTable(path, f, required...)
}

// parseTable reads TSV text from r; path is used in error messages.
func parseTable(path string, r io.Reader, required ...string) (*table, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64<<10), 16<<20)
	t := &table{path: path, index: map[string]int{}}
	line := 0
	for sc.Scan() {
		line++
		b := sc.Bytes()
		b = bytes.TrimSuffix(b, []byte{'\r'})
		if line == 1 {
			t.header = strings.Split(string(b), "\t")
			for i, h := range t.header {
				t.index[h] = i
			}
			for _, c := range required {
				if _, ok := t.index[c]; !ok {
					return nil, fmt.Errorf("%s:1: no column %q: %w", path, c, ErrMalformed)
				}
			}
			continue
		}
		if len(b) == 0 {
			continue
		}
		row := strings.Split(string(b), "\t")
		if len(row) != len(t.header) {
			return nil, fmt.Errorf("%s:%d: %d fields, header has %d: %w", path, line, len(row), len(t.header), ErrMalformed)
		}
		t.rows = append(t.rows, row)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s:%d: %w", path, line+1, err)
	}
	if line == 0 {
		return nil, fmt.Errorf("%s:1: empty file, expected a header line: %w", path, ErrMalformed)
	}
	return t, nil
}
