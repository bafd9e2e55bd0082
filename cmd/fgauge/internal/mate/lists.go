package mate

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
)

// ErrInput is wrapped by every error that blames the command line or an
// input file rather than fgauge (exit code 2); test with errors.Is.
var ErrInput = errors.New("bad input")

// InputError locates a problem in an input file (Line 0: the file as a
// whole, or no file).
type InputError struct {
	File string
	Line int
	Msg  string
	Err  error // wrapped cause, may be nil
}

func (e *InputError) Error() string {
	switch {
	case e.File == "":
		return e.Msg
	case e.Line == 0:
		return e.File + ": " + e.Msg
	}
	return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
}

// Is makes errors.Is(err, ErrInput) true.
func (e *InputError) Is(target error) bool { return target == ErrInput }

func (e *InputError) Unwrap() error { return e.Err }

func inputErrorf(file string, line int, format string, a ...any) error {
	return &InputError{File: file, Line: line, Msg: fmt.Sprintf(format, a...)}
}

// idList is a list of animals with the line each came from.
type idList struct {
	file  string
	ids   []string
	lines []int
}

// readIDList reads one id per line; blank lines and lines starting with
// '#' are skipped. An id listed twice, a line with more than one field and
// an empty list are errors naming file and line.
func readIDList(r io.Reader, name, what string) (*idList, error) {
	l := &idList{file: name}
	seen := map[string]int{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), 1<<20)
	line := 0
	for sc.Scan() {
		line++
		b := bytes.TrimSpace(sc.Bytes())
		if len(b) == 0 || b[0] == '#' {
			continue
		}
		if f := bytes.Fields(b); len(f) != 1 {
			return nil, inputErrorf(name, line, "want one %s id per line, got %d fields", what, len(f))
		}
		id := string(b)
		if first, dup := seen[id]; dup {
			return nil, inputErrorf(name, line, "%s %q listed twice (first on line %d)", what, id, first)
		}
		seen[id] = line
		l.ids = append(l.ids, id)
		l.lines = append(l.lines, line)
	}
	if err := sc.Err(); err != nil {
		return nil, &InputError{File: name, Line: line + 1, Msg: err.Error(), Err: err}
	}
	if len(l.ids) == 0 {
		return nil, inputErrorf(name, 0, "no %s listed (one id per line)", what)
	}
	return l, nil
}

// listFromFile opens and reads a list file.
func listFromFile(path, what string) (*idList, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &InputError{File: path, Msg: "cannot open the " + what + " list: " + err.Error(), Err: err}
	}
	defer f.Close()
	return readIDList(f, path, what)
}

// listFromIDs wraps ids given directly (for callers such as the demo);
// they are checked like a file named name, line k+1 for ids[k].
func listFromIDs(ids []string, name, what string) (*idList, error) {
	var b bytes.Buffer
	for _, id := range ids {
		b.WriteString(id)
		b.WriteByte('\n')
	}
	return readIDList(&b, name, what)
}

// readLimits reads a per-sire limits file: two whitespace-separated
// columns, sire id and the largest number of dams for it (a non-negative
// integer); an optional header line "sire limit"; blank and '#' lines
// skipped. Ids must be listed sires; a sire listed twice is an error.
func readLimits(path string, sireIdx map[string]int) (map[int]int, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &InputError{File: path, Msg: "cannot open the sire limits: " + err.Error(), Err: err}
	}
	defer f.Close()
	out := map[int]int{}
	first := map[int]int{}
	sc := bufio.NewScanner(f)
	line := 0
	for sc.Scan() {
		line++
		b := bytes.TrimSpace(sc.Bytes())
		if len(b) == 0 || b[0] == '#' {
			continue
		}
		fs := bytes.Fields(b)
		if len(fs) != 2 {
			return nil, inputErrorf(path, line, "want 2 columns (sire limit), got %d", len(fs))
		}
		if string(fs[0]) == "sire" && string(fs[1]) == "limit" {
			continue
		}
		s, ok := sireIdx[string(fs[0])]
		if !ok {
			return nil, inputErrorf(path, line, "%q is not a listed sire", fs[0])
		}
		n, err := strconv.Atoi(string(fs[1]))
		if err != nil || n < 0 {
			return nil, inputErrorf(path, line, "limit %q is not a non-negative integer", fs[1])
		}
		if l, dup := first[s]; dup {
			return nil, inputErrorf(path, line, "sire %q listed twice (first on line %d)", fs[0], l)
		}
		first[s] = line
		out[s] = n
	}
	if err := sc.Err(); err != nil {
		return nil, &InputError{File: path, Line: line + 1, Msg: err.Error(), Err: err}
	}
	return out, nil
}
