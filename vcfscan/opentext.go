package vcfscan

import (
	"bufio"
	"fmt"
	"io"
	"os"

	"github.com/klauspost/compress/gzip"
)

// OpenText opens a small text input (a genetic map, sample list,
// pedigree, frequency panel or region list) and returns its text,
// decompressed when the content starts with the gzip magic bytes (plain
// gzip and BGZF alike: BGZF is a series of gzip members, RFC 1952 and
// SAM/BAM format specification section 4.1), whatever the file name.
// Closing the result closes the file. An open failure is returned as
// os.Open returns it (*fs.PathError); a damaged gzip stream gives a
// *ParseError naming the file and wrapping ErrMalformed, ErrTruncated or
// ErrChecksum, at open or at the Read that meets it.
func OpenText(path string) (io.ReadCloser, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	br := bufio.NewReaderSize(f, 64<<10)
	if m, _ := br.Peek(2); len(m) == 2 && m[0] == 0x1f && m[1] == 0x8b {
		zr, err := gzip.NewReader(br)
		if err != nil {
			f.Close()
			return nil, &ParseError{File: path, Offset: -1, Record: -1, Field: "gzip header",
				Err: fmt.Errorf("%w: %v", ErrMalformed, err)}
		}
		return textFile{Reader: &gzipErrs{r: zr, name: path}, f: f}, nil
	}
	return textFile{Reader: br, f: f}, nil
}

type textFile struct {
	io.Reader
	f *os.File
}

func (t textFile) Close() error { return t.f.Close() }
