package htmlreport

import (
	"strconv"
	"strings"
)

// maxFileStem bounds the length of a per-sample file name (bytes, before
// the collision suffix and extension).
const maxFileStem = 80

// safeStem turns a sample name into a file name stem that cannot leave the
// samples folder: only ASCII letters, digits, '-', '_' and '.' survive
// (everything else, including path separators and control characters,
// becomes '_'), no ".." anywhere, no leading dot, at most maxFileStem
// bytes, never empty and never "index".
func safeStem(name string) string {
	var b strings.Builder
	for _, r := range name {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '-', r == '_', r == '.':
			b.WriteRune(r)
		default:
			b.WriteByte('_')
		}
	}
	s := b.String()
	for strings.Contains(s, "..") {
		s = strings.ReplaceAll(s, "..", "_")
	}
	s = strings.TrimLeft(s, ".")
	if len(s) > maxFileStem {
		s = s[:maxFileStem]
	}
	s = strings.TrimRight(s, ".")
	if s == "" {
		s = "sample"
	}
	if strings.EqualFold(s, "index") {
		s += "_"
	}
	return s
}

// stems assigns each name a distinct stem, in order: the first name keeps
// its stem, later ones that would collide (ignoring case, so pages also
// stay apart on case-insensitive file systems) get -2, -3, ...
func stems(names []string) []string {
	out := make([]string, len(names))
	used := map[string]bool{}
	for i, n := range names {
		base := safeStem(n)
		s := base
		for k := 2; used[strings.ToLower(s)]; k++ {
			s = base + "-" + strconv.Itoa(k)
		}
		used[strings.ToLower(s)] = true
		out[i] = s
	}
	return out
}
