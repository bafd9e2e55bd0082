package vcfscan

import (
	"bufio"
	"fmt"
	"strings"
)

// ReadNameList reads a list of sample names, one per line, from a plain,
// gzip or BGZF file (OpenText). Blank lines and lines starting with '#'
// are skipped. With wholeLine the name is the line without surrounding
// space (a '#' or space inside a name is kept); otherwise it is the
// line's first whitespace-separated field. Errors name the file and line.
func ReadNameList(path string, wholeLine bool) ([]string, error) {
	f, err := OpenText(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var names []string
	sc := bufio.NewScanner(f)
	line := 0
	for sc.Scan() {
		line++
		s := strings.TrimSpace(sc.Text())
		if s == "" || strings.HasPrefix(s, "#") {
			continue
		}
		if !wholeLine {
			s = strings.Fields(s)[0]
		}
		names = append(names, s)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s:%d: %w", path, line+1, err)
	}
	return names, nil
}
