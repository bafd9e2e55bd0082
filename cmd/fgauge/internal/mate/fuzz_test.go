package mate

import (
	"bytes"
	"errors"
	"strings"
	"testing"
)

// FuzzReadIDList: any input either parses into unique, non-empty,
// single-field ids with increasing line numbers, or is an input error
// naming the file.
func FuzzReadIDList(f *testing.F) {
	f.Add([]byte("buck_a\nbuck_b\n"))
	f.Add([]byte("# header\n\nbuck_a\nbuck_a\n"))
	f.Add([]byte("a b\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		l, err := readIDList(bytes.NewReader(data), "list.txt", "sire")
		if err != nil {
			if !errors.Is(err, ErrInput) || !strings.HasPrefix(err.Error(), "list.txt") {
				t.Fatalf("error %q is not an input error naming the file", err)
			}
			return
		}
		seen := map[string]bool{}
		last := 0
		for i, id := range l.ids {
			if id == "" || strings.ContainsAny(id, " \t\n") || seen[id] || l.lines[i] <= last {
				t.Fatalf("bad id %q at line %d", id, l.lines[i])
			}
			seen[id], last = true, l.lines[i]
		}
	})
}
