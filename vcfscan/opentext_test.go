package vcfscan

import (
	"bytes"
	"compress/gzip"
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

// OpenText gives the same text for a plain, a gzip (Go's compress/gzip,
// an implementation of RFC 1952 independent of the one OpenText uses)
// and a BGZF copy of a file, whatever their names, and reports a damaged
// gzip stream as a ParseError naming the file.
func TestOpenText(t *testing.T) {
	dir := t.TempDir()
	text := []byte("# map\n1\t1000\t0.5\nchr2\t2000\t1.25\n")
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(text)
	zw.Close()
	var bg bytes.Buffer
	bw := NewBGZFWriter(&bg, 6)
	bw.Write(text[:10])
	bw.Flush() // two data blocks
	bw.Write(text[10:])
	bw.Close()
	files := map[string][]byte{"plain.txt": text, "gzip.txt": gz.Bytes(), "bgzf.txt.gz": bg.Bytes(), "plain.gz": text}
	for name, b := range files {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		r, err := OpenText(p)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		got, err := io.ReadAll(r)
		r.Close()
		if err != nil || !bytes.Equal(got, text) {
			t.Errorf("%s: got %q, %v; want %q", name, got, err, text)
		}
	}
	bad := append([]byte(nil), gz.Bytes()...)
	bad = bad[:len(bad)-6] // cut inside the trailer
	p := filepath.Join(dir, "cut.gz")
	os.WriteFile(p, bad, 0o644)
	r, err := OpenText(p)
	if err == nil {
		_, err = io.ReadAll(r)
		r.Close()
	}
	var pe *ParseError
	if !errors.As(err, &pe) || pe.File != p || !(errors.Is(err, ErrTruncated) || errors.Is(err, ErrMalformed)) {
		t.Errorf("cut gzip: got %v, want a ParseError naming %s", err, p)
	}
	if _, err := OpenText(filepath.Join(dir, "absent")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("absent file: got %v", err)
	}
}
