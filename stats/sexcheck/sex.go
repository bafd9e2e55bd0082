package sexcheck

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"strings"

	"fgauge/stats/pedigree"
)

// Sex is a sample's sex: given by the user or inferred from genotypes.
// The codes are those of pedigree.Sex.
type Sex uint8

// Sex codes.
const (
	Unknown Sex = 0
	Male    Sex = 1
	Female  Sex = 2
)

// String returns "male", "female" or "unknown", the words used in output
// columns.
func (s Sex) String() string {
	switch s {
	case Male:
		return "male"
	case Female:
		return "female"
	}
	return "unknown"
}

// Known reports whether s is Male or Female.
func (s Sex) Known() bool { return s == Male || s == Female }

// Mismatch reports whether a given and an inferred sex are both known and
// differ (the sample-level sex mismatch flag).
func Mismatch(given, inferred Sex) bool {
	return given.Known() && inferred.Known() && given != inferred
}

// ParseSex reads a sex value: male, m, 1; female, f, 2; unknown, 0, na,
// "." (any case). ok is false for anything else.
func ParseSex(s string) (sx Sex, ok bool) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "male", "m", "1":
		return Male, true
	case "female", "f", "2":
		return Female, true
	case "unknown", "0", "na", ".":
		return Unknown, true
	}
	return Unknown, false
}

// Sentinel errors wrapped by *Error; test with errors.Is.
var (
	ErrMalformed     = errors.New("malformed sex line")
	ErrBadSex        = errors.New("unreadable sex value")
	ErrDuplicate     = errors.New("sample listed twice")
	ErrUnknownSample = errors.New("sample not in the data")
)

// Error locates a problem in a sex file.
type Error struct {
	File string
	Line int // 1-based
	Err  error
	Msg  string
}

func (e *Error) Error() string {
	s := fmt.Sprintf("%s:%d: %v", e.File, e.Line, e.Err)
	if e.Msg != "" {
		s += ": " + e.Msg
	}
	return s
}

func (e *Error) Unwrap() error { return e.Err }

// List is a parsed sex file: samples in file order with their sex and
// source line.
type List struct {
	Name    string // file name used in messages
	Samples []string
	Sexes   []Sex
	Lines   []int
}

// ReadList parses a sex file: one "sample sex" line per sample, fields
// separated by a tab (or by blanks when the line has no tab); blank lines
// and lines starting with '#' are skipped; a first line whose second
// field is "sex" (any case) is a header. Sex values are read by ParseSex.
// A line without exactly two fields, an unreadable value or a sample
// listed twice is an *Error naming the file and line.
func ReadList(r io.Reader, name string) (*List, error) {
	l := &List{Name: name}
	seen := map[string]int{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 16*1024*1024)
	lineNo := 0
	first := true
	for sc.Scan() {
		lineNo++
		b := bytes.TrimRight(sc.Bytes(), "\r")
		if lineNo == 1 {
			b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf"))
		}
		if len(bytes.TrimSpace(b)) == 0 || b[0] == '#' {
			continue
		}
		var fields []string
		if bytes.IndexByte(b, '\t') >= 0 {
			for _, f := range strings.Split(string(b), "\t") {
				fields = append(fields, strings.TrimSpace(f))
			}
		} else {
			fields = strings.Fields(string(b))
		}
		if first {
			first = false
			if len(fields) == 2 && strings.EqualFold(fields[1], "sex") {
				continue
			}
		}
		if len(fields) != 2 || fields[0] == "" {
			return nil, &Error{File: name, Line: lineNo, Err: ErrMalformed,
				Msg: fmt.Sprintf("want two fields, sample and sex; found %d", len(fields))}
		}
		sx, ok := ParseSex(fields[1])
		if !ok {
			return nil, &Error{File: name, Line: lineNo, Err: ErrBadSex,
				Msg: fmt.Sprintf("%q is not one of male/female, M/F, 1/2, or unknown, 0, NA, .", fields[1])}
		}
		if prev, dup := seen[fields[0]]; dup {
			return nil, &Error{File: name, Line: lineNo, Err: ErrDuplicate,
				Msg: fmt.Sprintf("%q already on line %d", fields[0], prev)}
		}
		seen[fields[0]] = lineNo
		l.Samples = append(l.Samples, fields[0])
		l.Sexes = append(l.Sexes, sx)
		l.Lines = append(l.Lines, lineNo)
	}
	if err := sc.Err(); err != nil {
		return nil, &Error{File: name, Line: lineNo + 1, Err: ErrMalformed, Msg: err.Error()}
	}
	return l, nil
}

// Absent says what ForSamples does with listed samples that are not in
// the data.
type Absent int

const (
	// AbsentIsError makes the first listed sample missing from the data
	// an *Error (ErrUnknownSample) naming its line.
	AbsentIsError Absent = iota
	// AbsentIsWarning counts such samples and returns them in Match.Absent.
	AbsentIsWarning
)

// Match is a sex list laid over the data's samples.
type Match struct {
	Sexes    []Sex    // per data sample, in data order; Unknown when not listed
	Listed   int      // data samples found in the list (any value)
	Unlisted int      // data samples not in the list
	Absent   []string // listed samples not in the data ("file:line: name"), with AbsentIsWarning
}

// ForSamples returns the given sex of each data sample.
func (l *List) ForSamples(samples []string, absent Absent) (Match, error) {
	idx := make(map[string]int, len(samples))
	for i, s := range samples {
		idx[s] = i
	}
	m := Match{Sexes: make([]Sex, len(samples))}
	for j, s := range l.Samples {
		i, ok := idx[s]
		if !ok {
			if absent == AbsentIsError {
				return Match{}, &Error{File: l.Name, Line: l.Lines[j], Err: ErrUnknownSample, Msg: fmt.Sprintf("%q", s)}
			}
			m.Absent = append(m.Absent, fmt.Sprintf("%s:%d: %s", l.Name, l.Lines[j], s))
			continue
		}
		m.Sexes[i] = l.Sexes[j]
		m.Listed++
	}
	m.Unlisted = len(samples) - m.Listed
	return m, nil
}

// FromPedigree returns the sex recorded in a pedigree's sex column for
// each data sample (Unknown for samples not in the pedigree or without a
// recorded sex), and whether the pedigree records any sex at all (false:
// the file has no sex column, or it is empty throughout).
func FromPedigree(p *pedigree.Pedigree, samples []string) (sexes []Sex, present bool) {
	for i := 0; i < p.Len(); i++ {
		if p.SexOf(i) != pedigree.SexUnknown {
			present = true
			break
		}
	}
	sexes = make([]Sex, len(samples))
	if !present {
		return sexes, false
	}
	for i, s := range samples {
		if j, ok := p.Index(s); ok {
			sexes[i] = Sex(p.SexOf(j))
		}
	}
	return sexes, true
}
