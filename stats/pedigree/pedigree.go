// Package pedigree reads animal pedigrees and computes pedigree inbreeding
// coefficients and coancestries.
//
// Inbreeding coefficients are those of Meuwissen & Luo (1992, Genetics
// Selection Evolution 24:305-313), which trace only the ancestors of each
// animal through the L factor of A = L D L'. The traces are grouped by sire
// (Sargolzaei, Iwaisaki & Colleau 2005) so that a sire's ancestry is walked
// once for all its offspring; a generated herd book of 10^6 animals takes
// about a second and a half (BenchmarkInbreeding1M).
// The package knows nothing about genotypes: it is the pedigree side of the
// comparison between expected (pedigree) and realised (genomic) inbreeding.
package pedigree

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"strings"
)

// Sentinel errors wrapped by *Error; test with errors.Is.
var (
	ErrMalformed = errors.New("malformed pedigree line")
	ErrDuplicate = errors.New("duplicate id")
	ErrLoop      = errors.New("animal is its own ancestor")
	ErrUnknownID = errors.New("id not in pedigree")
)

// Error locates a problem in a pedigree file.
type Error struct {
	File string
	Line int // 1-based; 0 when the problem has no single line
	Err  error
	Msg  string // detail, e.g. the id concerned
}

func (e *Error) Error() string {
	s := e.File
	if e.Line > 0 {
		s += fmt.Sprintf(":%d", e.Line)
	}
	s += ": " + e.Err.Error()
	if e.Msg != "" {
		s += ": " + e.Msg
	}
	return s
}

func (e *Error) Unwrap() error { return e.Err }

// Sex of an animal as given in the optional fourth column.
type Sex byte

// Sex codes.
const (
	SexUnknown Sex = 0
	SexMale    Sex = 1
	SexFemale  Sex = 2
)

func (s Sex) String() string {
	switch s {
	case SexMale:
		return "male"
	case SexFemale:
		return "female"
	}
	return "unknown"
}

// Record is one animal with its parents' ids; an empty parent id means
// unknown.
type Record struct {
	ID, Sire, Dam string
	Sex           Sex
	Line          int // source line, 0 when built in memory
}

// Pedigree is a set of animals sorted so that parents come before their
// offspring. Animals that appear only as parents are added as founders
// (unknown parents) just before their first offspring.
type Pedigree struct {
	ids   []string
	sire  []int32 // index of the sire, -1 when unknown
	dam   []int32
	sex   []Sex
	line  []int // source line (0 for added founders)
	index map[string]int32
	name  string
}

// Len returns the number of animals.
func (p *Pedigree) Len() int { return len(p.ids) }

// ID returns the id of animal i (0 <= i < Len()).
func (p *Pedigree) ID(i int) string { return p.ids[i] }

// Sire returns the index of the sire of animal i, or -1 when unknown.
func (p *Pedigree) Sire(i int) int { return int(p.sire[i]) }

// Dam returns the index of the dam of animal i, or -1 when unknown.
func (p *Pedigree) Dam(i int) int { return int(p.dam[i]) }

// SexOf returns the sex of animal i as given (SexUnknown when not given).
func (p *Pedigree) SexOf(i int) Sex { return p.sex[i] }

// Line returns the input line of animal i, or 0 for an animal added because
// it appears only as a parent (or built in memory).
func (p *Pedigree) Line(i int) int { return p.line[i] }

// Index returns the position of id, and false when id is not in the pedigree.
func (p *Pedigree) Index(id string) (int, bool) {
	i, ok := p.index[id]
	return int(i), ok
}

// isHeader reports whether the first line names its columns: a first field
// "id" or "animal", or second and third fields "sire" and "dam".
func isHeader(fields [][]byte) bool {
	f0 := string(fields[0])
	if strings.EqualFold(f0, "id") || strings.EqualFold(f0, "animal") {
		return true
	}
	return len(fields) >= 3 && strings.EqualFold(string(fields[1]), "sire") && strings.EqualFold(string(fields[2]), "dam")
}

// isUnknown reports whether a parent field means "unknown parent".
func isUnknown(s string) bool {
	return s == "" || s == "0" || s == "NA" || s == "." || s == "-"
}

func parseSex(s string) (Sex, bool) {
	switch strings.ToLower(s) {
	case "", "0", "u", "unknown", "na", ".":
		return SexUnknown, true
	case "1", "m", "male":
		return SexMale, true
	case "2", "f", "female":
		return SexFemale, true
	}
	return SexUnknown, false
}

// Read parses a pedigree table: one animal per line, tab-separated
// (or whitespace-separated when a line has no tab) columns id, sire, dam and
// an optional sex (M/F, 1/2, male/female). A parent of "0", "", "NA", "."
// or "-" is unknown. Blank lines and lines starting with '#' are skipped; a
// first line whose first field is "id" or "animal", or whose second and
// third are "sire" and "dam", is a header. name is used in error
// messages. Offspring may come before their parents; duplicate ids and
// loops are errors naming the line.
func Read(r io.Reader, name string) (*Pedigree, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 16*1024*1024)
	var recs []Record
	lineNo := 0
	seenData := false
	var fields [][]byte
	for sc.Scan() {
		lineNo++
		b := bytes.TrimRight(sc.Bytes(), "\r")
		if lineNo == 1 {
			b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")) // UTF-8 byte order mark
		}
		if len(bytes.TrimSpace(b)) == 0 || b[0] == '#' {
			continue
		}
		fields = fields[:0]
		if bytes.IndexByte(b, '\t') >= 0 {
			for _, f := range bytes.Split(b, []byte{'\t'}) {
				fields = append(fields, bytes.TrimSpace(f))
			}
		} else {
			fields = append(fields, bytes.Fields(b)...)
		}
		if !seenData {
			seenData = true
			if isHeader(fields) {
				continue
			}
		}
		if len(fields) < 3 {
			return nil, &Error{File: name, Line: lineNo, Err: ErrMalformed,
				Msg: fmt.Sprintf("want columns id, sire, dam [, sex], found %d field(s)", len(fields))}
		}
		id := string(fields[0])
		if isUnknown(id) {
			return nil, &Error{File: name, Line: lineNo, Err: ErrMalformed, Msg: fmt.Sprintf("animal id %q is empty or means unknown", id)}
		}
		rec := Record{ID: id, Line: lineNo}
		if s := string(fields[1]); !isUnknown(s) {
			rec.Sire = s
		}
		if s := string(fields[2]); !isUnknown(s) {
			rec.Dam = s
		}
		if len(fields) > 3 {
			sx, ok := parseSex(string(fields[3]))
			if !ok {
				return nil, &Error{File: name, Line: lineNo, Err: ErrMalformed, Msg: fmt.Sprintf("sex %q is not one of M, F, 1, 2, male, female, 0", fields[3])}
			}
			rec.Sex = sx
		}
		recs = append(recs, rec)
	}
	if err := sc.Err(); err != nil {
		return nil, &Error{File: name, Line: lineNo + 1, Err: ErrMalformed, Msg: err.Error()}
	}
	return build(recs, name)
}

// FromRecords builds a pedigree from records held in memory; name is used
// in error messages. The same rules as Read apply.
func FromRecords(recs []Record, name string) (*Pedigree, error) {
	return build(recs, name)
}

// build checks ids, adds parent-only founders and sorts parents before
// offspring (depth-first, keeping input order otherwise).
func build(recs []Record, name string) (*Pedigree, error) {
	// Unique ids: input records first, then parents seen only as parents.
	idx := make(map[string]int32, len(recs))
	for i, r := range recs {
		if prev, ok := idx[r.ID]; ok {
			return nil, &Error{File: name, Line: r.Line, Err: ErrDuplicate,
				Msg: fmt.Sprintf("%q already listed on line %d", r.ID, recs[prev].Line)}
		}
		idx[r.ID] = int32(i)
	}
	n := len(recs)
	all := recs
	extra := 0
	for _, r := range recs {
		for _, par := range [2]string{r.Sire, r.Dam} {
			if par == "" {
				continue
			}
			if _, ok := idx[par]; !ok {
				idx[par] = int32(n + extra)
				all = append(all, Record{ID: par})
				extra++
			}
		}
	}
	m := len(all)
	psire := make([]int32, m)
	pdam := make([]int32, m)
	for i, r := range all {
		psire[i], pdam[i] = -1, -1
		if r.Sire != "" {
			psire[i] = idx[r.Sire]
		}
		if r.Dam != "" {
			pdam[i] = idx[r.Dam]
		}
	}
	// Iterative depth-first topological sort with loop detection.
	const (
		unvisited = 0
		active    = 1
		done      = 2
	)
	state := make([]uint8, m)
	order := make([]int32, 0, m)
	type frame struct {
		node  int32
		stage uint8 // 0: visit sire next, 1: dam next, 2: emit
	}
	var stack []frame
	visit := func(start int32) error {
		stack = append(stack[:0], frame{node: start})
		state[start] = active
		for len(stack) > 0 {
			f := &stack[len(stack)-1]
			var next int32 = -1
			switch f.stage {
			case 0:
				next = psire[f.node]
			case 1:
				next = pdam[f.node]
			}
			if f.stage == 2 {
				state[f.node] = done
				order = append(order, f.node)
				stack = stack[:len(stack)-1]
				continue
			}
			f.stage++
			if next < 0 || state[next] == done {
				continue
			}
			if state[next] == active {
				// The offending line is the one of the child whose parent
				// closes the cycle.
				child := f.node
				return &Error{File: name, Line: all[child].Line, Err: ErrLoop,
					Msg: fmt.Sprintf("%q has %q among its parents, which descends from %q", all[child].ID, all[next].ID, all[child].ID)}
			}
			state[next] = active
			stack = append(stack, frame{node: next})
		}
		return nil
	}
	for i := int32(0); i < int32(m); i++ {
		if state[i] == unvisited {
			if err := visit(i); err != nil {
				return nil, err
			}
		}
	}
	p := &Pedigree{
		ids:   make([]string, m),
		sire:  make([]int32, m),
		dam:   make([]int32, m),
		sex:   make([]Sex, m),
		line:  make([]int, m),
		index: make(map[string]int32, m),
		name:  name,
	}
	pos := make([]int32, m)
	for newI, old := range order {
		pos[old] = int32(newI)
	}
	for newI, old := range order {
		r := all[old]
		p.ids[newI] = r.ID
		p.sex[newI] = r.Sex
		p.line[newI] = r.Line
		p.index[r.ID] = int32(newI)
		p.sire[newI], p.dam[newI] = -1, -1
		if s := psire[old]; s >= 0 {
			p.sire[newI] = pos[s]
		}
		if d := pdam[old]; d >= 0 {
			p.dam[newI] = pos[d]
		}
	}
	return p, nil
}
