package vcfscan

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/biogo/hts/bgzf/index"
	"github.com/biogo/hts/tabix"
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
// BGZFWriter.Offset) each is stored in, and writes it with
// biogo/hts/tabix. Records of one chromosome must be contiguous and sorted
// by start.
type TabixWriter struct {
	idx   *tabix.Index
	err   error
	added int
}

// NewTabixWriter returns an empty index for a table laid out as cols.
func NewTabixWriter(cols TabixColumns) *TabixWriter {
	idx := tabix.New()
	idx.Format = 0 // generic
	if cols.VCF {
		idx.Format = 2
	}
	idx.ZeroBased = cols.ZeroBased
	idx.NameColumn, idx.BeginColumn, idx.EndColumn = int32(cols.Seq), int32(cols.Begin), int32(cols.End)
	idx.MetaChar = rune(cols.Meta)
	idx.Skip = int32(cols.Skip)
	return &TabixWriter{idx: idx}
}

// tabixRecord is what biogo's index takes: 0-based half-open interval.
type tabixRecord struct {
	chrom      string
	start, end int
}

func (r tabixRecord) RefName() string { return r.chrom }
func (r tabixRecord) Start() int      { return r.start }
func (r tabixRecord) End() int        { return r.end }

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
	ids := t.idx.IDs()
	_, known := ids[chrom]
	if known && chrom != t.idx.Names()[len(t.idx.Names())-1] {
		t.err = fmt.Errorf("%w: tabix: chromosome %s appears again after %s; the records of a chromosome must be contiguous",
			ErrUnsorted, chrom, t.idx.Names()[len(t.idx.Names())-1])
		return t.err
	}
	// biogo/hts v1.4.5 finds a record's last 16 kb window of the linear
	// index from its exclusive end, one past the last window when the end
	// falls on a window boundary (and then panics): give it the inclusive
	// end there. Its bin, computed from end-1, is the same.
	bEnd := end
	if end%(1<<14) == 0 {
		bEnd = end - 1 // for one base, [beg, beg): BinFor still bins it at beg
	}
	err := noPanic(func() error {
		return t.idx.Add(tabixRecord{chrom, int(beg), int(bEnd)}, toBGZFChunk(c), true, true)
	})
	if err != nil && strings.Contains(err.Error(), "unexpected alignment length") {
		err = fmt.Errorf("a record crossing a 16 kb window boundary into a window no earlier record reached cannot be indexed by biogo/hts v1.4.5")
	}
	if !known {
		// biogo/hts v1.4.5 appends the name without recording its ID;
		// record it so that later records of chrom join it.
		ids[chrom] = len(t.idx.Names()) - 1
	}
	if err != nil {
		t.err = fmt.Errorf("%w: tabix: %s:%d: %v", ErrUnsorted, chrom, beg+1, err)
	}
	// biogo keeps one chunk per record until merged; merge touching
	// chunks now and then so that memory stays small.
	if t.added++; t.added%(1<<16) == 0 {
		t.idx.MergeChunks(index.Adjacent)
	}
	return t.err
}

// WriteTo writes the index, BGZF-compressed as the format asks, to w.
func (t *TabixWriter) WriteTo(w io.Writer) (int64, error) {
	if t.err != nil {
		return 0, t.err
	}
	t.idx.MergeChunks(index.Adjacent)
	cw := &countWriter{w: w}
	bw := NewBGZFWriter(cw, flate.DefaultCompression)
	bw.SetThreads(1)
	if err := tabix.WriteTo(bw, t.idx); err != nil {
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
func IndexBGZFTable(path string, cols TabixColumns) (err error) {
	idx := NewTabixWriter(cols)
	if err := scanBGZFLines(path, func(line []byte, n int64, c Chunk) error {
		if int(n) <= cols.Skip || (cols.Meta != 0 && len(line) > 0 && line[0] == cols.Meta) {
			return nil
		}
		chrom, beg, end, err := tabixInterval(line, cols)
		if err != nil {
			return &ParseError{File: path, Line: n, Offset: int64(c.Begin.Virtual()), Record: -1, Err: err}
		}
		if err := idx.Add(chrom, beg, end, c); err != nil {
			return &ParseError{File: path, Line: n, Offset: int64(c.Begin.Virtual()), Record: -1, Err: err}
		}
		return nil
	}); err != nil {
		return err
	}
	tmp := path + ".tbi.tmp"
	f, err := os.Create(tmp)
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			os.Remove(tmp)
		}
	}()
	if _, err = idx.WriteTo(f); err != nil {
		f.Close()
		return err
	}
	if err = f.Close(); err != nil {
		return err
	}
	return os.Rename(tmp, path+".tbi")
}

// tabixInterval returns the chromosome and 0-based half-open interval of
// one table line laid out as cols.
func tabixInterval(line []byte, cols TabixColumns) (string, int64, int64, error) {
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
		v, err := strconv.ParseInt(string(f), 10, 64)
		if err != nil {
			return 0, fmt.Errorf("%w: column %d (%s) %q is not a whole number", ErrMalformed, k, what, f)
		}
		return v, nil
	}
	chrom, ok := field(cols.Seq)
	if !ok || len(chrom) == 0 {
		return "", 0, 0, fmt.Errorf("%w: no chromosome in column %d", ErrMalformed, cols.Seq)
	}
	beg, err := num(cols.Begin, "start")
	if err != nil {
		return "", 0, 0, err
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
			return "", 0, 0, err
		}
	}
	return string(chrom), beg, end, nil
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
		out     bytes.Buffer
		fr      io.ReadCloser
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
		raw := make([]byte, size-18)
		if _, err := io.ReadFull(br, raw); err != nil {
			return &ParseError{File: path, Offset: coff << 16, Record: -1, Field: "BGZF block", Err: fmt.Errorf("%w: %v", ErrTruncated, err)}
		}
		xlen := int(head[10]) | int(head[11])<<8
		body := raw[xlen-6 : len(raw)-8] // after the extra field, before CRC32 and ISIZE
		if fr == nil {
			fr = flate.NewReader(bytes.NewReader(body))
		} else {
			fr.(flate.Resetter).Reset(bytes.NewReader(body), nil)
		}
		out.Reset()
		if _, err := out.ReadFrom(fr); err != nil {
			return &ParseError{File: path, Offset: coff << 16, Record: -1, Field: "BGZF block", Err: fmt.Errorf("%w: %v", ErrMalformed, err)}
		}
		data := out.Bytes()
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
