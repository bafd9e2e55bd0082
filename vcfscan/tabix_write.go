package vcfscan

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"

	"github.com/klauspost/compress/flate"
)

// TabixColumns describes a tab-separated table for its tabix index (the
// header fields of hts-specs, "The tabix index file format"). Columns are
// numbered from 1; End 0 means a record covers only its Begin position.
type TabixColumns struct {
	VCF       bool // format 2 (VCF): a record ends at POS + len(REF) - 1
	Seq       int  // column of the chromosome name
	Begin     int  // column of the start position
	End       int  // column of the end position, 0 for none
	ZeroBased bool // positions are 0-based half-open (BED), else 1-based inclusive
	Meta      byte // lines starting with it are skipped (0 for none)
	Skip      int  // number of first lines skipped
}

// Column layouts of the tables we index.
var (
	// TabixVCFColumns is the layout of VCF.
	TabixVCFColumns = TabixColumns{VCF: true, Seq: 1, Begin: 2, Meta: '#'}
	// TabixSitesColumns is the layout of a per-site table whose first
	// line is a header and whose first two columns are chrom and pos
	// (1-based), as fgauge's sites.tsv.gz.
	TabixSitesColumns = TabixColumns{Seq: 1, Begin: 2, Skip: 1}
)

// TabixWriter builds the tabix index of a BGZF table from its records,
// given in file order with the chunk (virtual offsets, see
// BGZFWriter.Offset) each is stored in, and writes it. Records of one
// chromosome must be contiguous and sorted by start. The index is the one
// biogo/hts/tabix v1.4.5 writes for the same records, byte for byte (see
// tabixBuild), built in time linear in the records.
type TabixWriter struct {
	idx   *tabixBuild
	cols  TabixColumns
	err   error
	added int
}

// NewTabixWriter returns an empty index for a table laid out as cols.
func NewTabixWriter(cols TabixColumns) *TabixWriter {
	return &TabixWriter{idx: newTabixBuild(), cols: cols}
}

// Add records that the 0-based half-open interval [beg, end) of chrom is
// covered by a record stored in chunk c. The first error (records out of
// order, a position past the tabix limit of 2^29) is returned and kept.
func (t *TabixWriter) Add(chrom string, beg, end int64, c Chunk) error {
	if t.err != nil {
		return t.err
	}
	if beg < 0 || end <= beg || end > tabixMaxPos {
		t.err = fmt.Errorf("%w: tabix: record %s:%d-%d outside the indexable range 1-%d", ErrLimit, chrom, beg+1, end, tabixMaxPos)
		return t.err
	}
	names := t.idx.names
	_, known := t.idx.ids[chrom]
	if known && chrom != names[len(names)-1] {
		t.err = fmt.Errorf("%w: tabix: chromosome %s appears again after %s; the records of a chromosome must be contiguous",
			ErrUnsorted, chrom, names[len(names)-1])
		return t.err
	}
	// As biogo/hts v1.4.5 (whose index this is), a record's last 16 kb
	// window of the linear index comes from its exclusive end, one past
	// the last window when the end falls on a window boundary: give it
	// the inclusive end there. Its bin, computed from end-1, is the same.
	bEnd := end
	if end%(1<<14) == 0 {
		bEnd = end - 1 // for one base, [beg, beg): the bin is still beg's
	}
	err := t.idx.add(chrom, int(beg), int(bEnd), c)
	if errors.Is(err, errTabixLength) {
		err = fmt.Errorf("a record crossing a 16 kb window boundary into a window no earlier record reached cannot be indexed by biogo/hts v1.4.5")
	}
	if err != nil {
		t.err = fmt.Errorf("%w: tabix: %s:%d: %v", ErrUnsorted, chrom, beg+1, err)
	}
	// Merge touching chunks now and then so that memory stays small (and
	// the index stays the one biogo/hts builds, which merges here too).
	if t.added++; t.added%(1<<16) == 0 {
		t.idx.mergeAdjacent()
	}
	return t.err
}

// WriteTo writes the index, BGZF-compressed as the format asks, to w.
func (t *TabixWriter) WriteTo(w io.Writer) (int64, error) {
	if t.err != nil {
		return 0, t.err
	}
	t.idx.mergeAdjacent()
	cw := &countWriter{w: w}
	bw := NewBGZFWriter(cw, flate.DefaultCompression)
	bw.SetThreads(1)
	if _, err := bw.Write(t.idx.appendTBI(nil, t.cols)); err != nil {
		bw.Close()
		return cw.n, err
	}
	err := bw.Close()
	return cw.n, err
}

type countWriter struct {
	w io.Writer
	n int64
}

func (c *countWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.n += int64(n)
	return n, err
}

// IndexBGZFTable reads the finished BGZF table at path and writes its
// tabix index to path+".tbi" (through a temporary file renamed into
// place, so a failed run leaves no index). Errors name the file and the
// line.
func IndexBGZFTable(path string, cols TabixColumns) error {
	idx := NewTabixWriter(cols)
	chrom := ""
	if err := scanBGZFLines(path, func(line []byte, n int64, c Chunk) error {
		if int(n) <= cols.Skip || (cols.Meta != 0 && len(line) > 0 && line[0] == cols.Meta) {
			return nil
		}
		chromB, beg, end, err := tabixFields(line, cols)
		if err != nil {
			return &ParseError{File: path, Line: n, Offset: int64(c.Begin.Virtual()), Record: -1, Err: err}
		}
		if string(chromB) != chrom { // no allocation per line
			chrom = string(chromB)
		}
		if err := idx.Add(chrom, beg, end, c); err != nil {
			return &ParseError{File: path, Line: n, Offset: int64(c.Begin.Virtual()), Record: -1, Err: err}
		}
		return nil
	}); err != nil {
		return err
	}
	return writeTBIFile(path+".tbi", idx)
}

// tabixInterval returns the chromosome and 0-based half-open interval of
// one table line laid out as cols.
func tabixInterval(line []byte, cols TabixColumns) (string, int64, int64, error) {
	chrom, beg, end, err := tabixFields(line, cols)
	return string(chrom), beg, end, err
}

// tabixFields is tabixInterval with the chromosome name left in line.
func tabixFields(line []byte, cols TabixColumns) ([]byte, int64, int64, error) {
	field := func(k int) ([]byte, bool) {
		rest := line
		for i := 1; ; i++ {
			f, after, found := bytes.Cut(rest, []byte{'\t'})
			if i == k {
				return f, true
			}
			if !found {
				return nil, false
			}
			rest = after
		}
	}
	num := func(k int, what string) (int64, error) {
		f, ok := field(k)
		if !ok {
			return 0, fmt.Errorf("%w: no column %d (%s)", ErrMalformed, k, what)
		}
		if v, ok := parsePos(f); ok {
			return v, nil
		}
		v, err := strconv.ParseInt(string(f), 10, 64)
		if err != nil {
			return 0, fmt.Errorf("%w: column %d (%s) %q is not a whole number", ErrMalformed, k, what, f)
		}
		return v, nil
	}
	chrom, ok := field(cols.Seq)
	if !ok || len(chrom) == 0 {
		return nil, 0, 0, fmt.Errorf("%w: no chromosome in column %d", ErrMalformed, cols.Seq)
	}
	beg, err := num(cols.Begin, "start")
	if err != nil {
		return nil, 0, 0, err
	}
	if !cols.ZeroBased {
		beg--
	}
	end := beg + 1
	switch {
	case cols.VCF:
		if ref, ok := field(4); ok && len(ref) > 0 {
			end = beg + int64(len(ref))
		}
	case cols.End > 0:
		if end, err = num(cols.End, "end"); err != nil {
			return nil, 0, 0, err
		}
	}
	return chrom, beg, end, nil
}

// scanBGZFLines calls fn with every line (without its newline) of the
// BGZF file at path, its 1-based number and the chunk of virtual offsets
// it occupies, newline included. A line ending exactly at the end of a
// block ends at the start of the next block.
func scanBGZFLines(path string, fn func(line []byte, n int64, c Chunk) error) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	br := &offsetReader{r: f}
	var (
		line    []byte
		begin   Offset
		inLine  bool
		lineNum int64
		buf     []byte
		rawBuf  []byte
		inf     = new(inflater)
	)
	head := make([]byte, 18)
	for {
		coff := br.n
		if _, err := io.ReadFull(br, head); err == io.EOF {
			break
		} else if err != nil {
			return &ParseError{File: path, Offset: coff << 16, Record: -1, Field: "BGZF block", Err: fmt.Errorf("%w: %v", ErrTruncated, err)}
		}
		size, ok := BGZFBlockSize(head)
		if !ok || size < 26 {
			return &ParseError{File: path, Offset: coff << 16, Record: -1, Field: "BGZF block", Err: fmt.Errorf("%w: not a BGZF block header", ErrMalformed)}
		}
		if cap(rawBuf) < size-18 {
			rawBuf = make([]byte, bgzfMaxBlock)
		}
		raw := rawBuf[:size-18]
		if _, err := io.ReadFull(br, raw); err != nil {
			return &ParseError{File: path, Offset: coff << 16, Record: -1, Field: "BGZF block", Err: fmt.Errorf("%w: %v", ErrTruncated, err)}
		}
		xlen := int(head[10]) | int(head[11])<<8
		body := raw[xlen-6 : len(raw)-8] // after the extra field, before CRC32 and ISIZE
		isize := int(binary.LittleEndian.Uint32(raw[len(raw)-4:]))
		if isize > bgzfMaxBlock {
			return &ParseError{File: path, Offset: coff << 16, Record: -1, Field: "BGZF block", Err: fmt.Errorf("%w: block claims %d inflated bytes, more than a BGZF block holds", ErrMalformed, isize)}
		}
		if cap(buf) < isize {
			buf = make([]byte, bgzfMaxBlock)
		}
		n, _, err := inf.inflate(buf[:isize], body)
		if err == nil && n != isize {
			err = fmt.Errorf("block inflates to %d bytes but its ISIZE says %d", n, isize)
		}
		if err != nil {
			return &ParseError{File: path, Offset: coff << 16, Record: -1, Field: "BGZF block", Err: fmt.Errorf("%w: %v", ErrMalformed, err)}
		}
		data := buf[:isize]
		next := coff + int64(size)
		at := func(i int) Offset {
			if i >= len(data) {
				return Offset{File: next}
			}
			return Offset{File: coff, Block: uint16(i)}
		}
		for i := 0; i < len(data); {
			if !inLine {
				begin, inLine = at(i), true
			}
			j := bytes.IndexByte(data[i:], '\n')
			if j < 0 {
				line = append(line, data[i:]...)
				break
			}
			line = append(line, data[i:i+j]...)
			lineNum++
			if err := fn(line, lineNum, Chunk{begin, at(i + j + 1)}); err != nil {
				return err
			}
			line, inLine = line[:0], false
			i += j + 1
		}
	}
	if inLine && len(line) > 0 {
		return &ParseError{File: path, Line: lineNum + 1, Offset: -1, Record: -1, Err: fmt.Errorf("%w: last line has no newline", ErrTruncated)}
	}
	return nil
}

type offsetReader struct {
	r io.Reader
	n int64
}

func (o *offsetReader) Read(p []byte) (int, error) {
	n, err := o.r.Read(p)
	o.n += int64(n)
	return n, err
}
