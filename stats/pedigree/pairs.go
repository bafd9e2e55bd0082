package pedigree

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
)

// ReadPairs reads pairs of ids, two per line (tab- or space-separated),
// for Coancestry. Blank lines and '#' comments are skipped; a first line
// whose two ids are both unknown is taken as a header. Any other unknown id
// is an error naming the line (ErrUnknownID).
func (p *Pedigree) ReadPairs(r io.Reader, name string) ([][2]int, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 1<<20)
	var out [][2]int
	line := 0
	first := true
	for sc.Scan() {
		line++
		b := bytes.TrimSpace(sc.Bytes())
		if line == 1 {
			b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")) // UTF-8 byte order mark
		}
		if len(b) == 0 || b[0] == '#' {
			continue
		}
		f := bytes.Fields(b)
		if len(f) < 2 {
			return nil, &Error{File: name, Line: line, Err: ErrMalformed, Msg: "want two ids"}
		}
		a, okA := p.index[string(f[0])]
		c, okC := p.index[string(f[1])]
		if first && !okA && !okC {
			first = false
			continue
		}
		first = false
		if !okA || !okC {
			missing := string(f[0])
			if okA {
				missing = string(f[1])
			}
			return nil, &Error{File: name, Line: line, Err: ErrUnknownID, Msg: fmt.Sprintf("%q", missing)}
		}
		out = append(out, [2]int{int(a), int(c)})
	}
	if err := sc.Err(); err != nil {
		return nil, &Error{File: name, Line: line + 1, Err: ErrMalformed, Msg: err.Error()}
	}
	return out, nil
}

// SexConflicts lists animals whose recorded sex contradicts their use as a
// parent: a female recorded as a sire or a male as a dam. Each entry names
// the offspring's line. Unknown sex never conflicts; selfing (sire = dam)
// is allowed for animals of unknown sex.
func (p *Pedigree) SexConflicts() []string {
	var out []string
	for i := range p.ids {
		where := p.name
		if p.line[i] > 0 {
			where = fmt.Sprintf("%s:%d", p.name, p.line[i])
		}
		if s := p.sire[i]; s >= 0 && p.sex[s] == SexFemale {
			out = append(out, fmt.Sprintf("%s: sire %q of %q is recorded as female", where, p.ids[s], p.ids[i]))
		}
		if m := p.dam[i]; m >= 0 && p.sex[m] == SexMale {
			out = append(out, fmt.Sprintf("%s: dam %q of %q is recorded as male", where, p.ids[m], p.ids[i]))
		}
	}
	return out
}
