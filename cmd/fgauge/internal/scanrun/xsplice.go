package scanrun

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"sync"

	"fgauge/stats"
	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

// X rows and the ordering problem.
//
// A non-PAR X row needs every sample's sex (given, else inferred), and
// the inferred sexes need all of X and Y, so when some sample has no
// given sex the rows cannot be written when their records pass. The
// ordered stage then writes the other rows as usual, and at the first X
// record of each stretch of X records it ends the current BGZF block and
// notes the compressed offset (a hole; BGZF blocks are independent, so
// blocks may be cut and joined at their boundaries). The X records'
// identities and calls go to a temporary file, 4 bits per call (X is a
// few per cent of the sites; the file keeps memory bounded). When the
// input ends, the sexes are decided, the X rows computed and written as
// BGZF blocks of their own, and the site table is rebuilt by copying the
// body's blocks between the holes and the X blocks into the holes: rows
// stay in input order. With a sex given for every sample nothing waits.

// xSegment is one stretch of consecutive deferred X records: the
// compressed offset of its hole in the body and its number of records.
type xSegment struct {
	offset int64
	n      int
}

// XRange is the compressed byte range [Start, End) of one stretch of X
// rows in the finished site table (for shard states).
type XRange struct{ Start, End int64 }

// xRows records the X rows a scan spliced in: their ranges and the sexes
// they were tested with (for a shard state, so that merge can check them).
type xRows struct {
	ranges []XRange
	sexes  []sexcheck.Sex
}

// xDeferral collects deferred X records in the ordered stage.
type xDeferral struct {
	path   string
	f      *os.File
	w      *bufio.Writer
	ns     int
	segs   []xSegment
	inSeg  bool
	packed []byte
	hdr    []byte
}

// newXDeferral returns a collector whose temporary file, path, is
// created at the first deferred record.
func newXDeferral(path string, nSamples int) *xDeferral {
	return &xDeferral{path: path, ns: nSamples}
}

// write writes one batch's rows, leaving holes for its deferred X
// records, whose calls it stores.
func (x *xDeferral) write(sitesZ *vcfscan.BGZFWriter, rows []byte, deferred []stats.Deferred, b *vcfscan.Batch, chrom func(int) string) error {
	prev := 0
	for _, d := range deferred {
		if d.Offset > prev {
			if _, err := sitesZ.Write(rows[prev:d.Offset]); err != nil {
				return err
			}
			x.inSeg = false
		}
		prev = d.Offset
		if !x.inSeg {
			if err := sitesZ.Flush(); err != nil {
				return err
			}
			off, err := sitesZ.Offset()
			if err != nil {
				return err
			}
			x.segs = append(x.segs, xSegment{offset: off.File})
			x.inSeg = true
		}
		rec := &b.Records[d.Record]
		if err := x.store(chrom(rec.ChromID), rec, b.Calls(d.Record)); err != nil {
			return err
		}
		x.segs[len(x.segs)-1].n++
	}
	if prev < len(rows) {
		if _, err := sitesZ.Write(rows[prev:]); err != nil {
			return err
		}
		x.inSeg = false
	}
	return nil
}

// store appends one record: chrom, pos, ref, alt (length-prefixed) and
// the calls, two per byte.
func (x *xDeferral) store(chrom string, rec *vcfscan.Record, calls []vcfscan.Geno) error {
	if x.f == nil {
		f, err := os.Create(x.path)
		if err != nil {
			return err
		}
		x.f, x.w = f, bufio.NewWriterSize(f, 1<<20)
	}
	h := x.hdr[:0]
	h = binary.AppendUvarint(h, uint64(len(chrom)))
	h = append(h, chrom...)
	h = binary.AppendUvarint(h, uint64(rec.Pos))
	h = binary.AppendUvarint(h, uint64(len(rec.Ref)))
	h = append(h, rec.Ref...)
	h = binary.AppendUvarint(h, uint64(len(rec.Alt)))
	h = append(h, rec.Alt...)
	x.hdr = h
	if _, err := x.w.Write(h); err != nil {
		return err
	}
	p := x.packed[:0]
	for i := 0; i < len(calls); i += 2 {
		v := byte(calls[i])
		if i+1 < len(calls) {
			v |= byte(calls[i+1]) << 4
		}
		p = append(p, v)
	}
	x.packed = p
	_, err := x.w.Write(p)
	return err
}

// xReader reads the stored records back.
type xReader struct {
	r     *bufio.Reader
	ns    int
	calls []vcfscan.Geno
	buf   []byte
	chrom []byte
	rec   vcfscan.Record
}

func (r *xReader) bytes() ([]byte, error) {
	n, err := binary.ReadUvarint(r.r)
	if err != nil {
		return nil, err
	}
	b := make([]byte, n)
	_, err = io.ReadFull(r.r, b)
	return b, err
}

func (r *xReader) next() error {
	var err error
	if r.chrom, err = r.bytes(); err != nil {
		return err
	}
	pos, err := binary.ReadUvarint(r.r)
	if err != nil {
		return err
	}
	r.rec.Pos = int64(pos)
	if r.rec.Ref, err = r.bytes(); err != nil {
		return err
	}
	if r.rec.Alt, err = r.bytes(); err != nil {
		return err
	}
	nb := (r.ns + 1) / 2
	if cap(r.buf) < nb {
		r.buf = make([]byte, nb)
	}
	r.buf = r.buf[:nb]
	if _, err := io.ReadFull(r.r, r.buf); err != nil {
		return err
	}
	r.calls = r.calls[:0]
	for i := 0; i < r.ns; i++ {
		v := r.buf[i/2]
		if i%2 == 1 {
			v >>= 4
		}
		r.calls = append(r.calls, vcfscan.Geno(v&15))
	}
	return nil
}

// eofHolder forwards writes but holds back the last len(BGZFEOF) bytes,
// so that a BGZFWriter's closing EOF block can be dropped.
type eofHolder struct {
	w    io.Writer
	tail []byte
	n    int64 // bytes forwarded
}

func (h *eofHolder) Write(p []byte) (int, error) {
	h.tail = append(h.tail, p...)
	if k := len(h.tail) - len(vcfscan.BGZFEOF); k > 0 {
		if _, err := h.w.Write(h.tail[:k]); err != nil {
			return 0, err
		}
		h.n += int64(k)
		h.tail = append(h.tail[:0], h.tail[k:]...)
	}
	return len(p), nil
}

// splice rebuilds the site table at table: the body's blocks with the X
// rows, computed with sexes, in its holes. It returns the compressed
// ranges of the X rows in the new table.
func (x *xDeferral) splice(table string, sexes []sexcheck.Sex, xcols bool, threads int) ([]XRange, error) {
	if err := x.w.Flush(); err != nil {
		return nil, err
	}
	if _, err := x.f.Seek(0, io.SeekStart); err != nil {
		return nil, err
	}
	body := table + ".body"
	if err := os.Rename(table, body); err != nil {
		return nil, err
	}
	defer os.Remove(body)
	src, err := os.Open(body)
	if err != nil {
		return nil, err
	}
	defer src.Close()
	st, err := src.Stat()
	if err != nil {
		return nil, err
	}
	if st.Size() < int64(len(vcfscan.BGZFEOF)) {
		return nil, errors.New("internal: site table shorter than its EOF block")
	}
	dst, err := os.Create(table)
	if err != nil {
		return nil, err
	}
	defer dst.Close()
	bw := bufio.NewWriterSize(dst, 1<<20)
	rd := &xReader{r: bufioReader(x.f), ns: x.ns}
	rc := newXRowComputer(threads, sexes, xcols)
	var ranges []XRange
	var pos, written int64
	for _, sg := range x.segs {
		n, err := io.Copy(bw, io.NewSectionReader(src, pos, sg.offset-pos))
		if err != nil {
			return nil, err
		}
		written += n
		pos = sg.offset
		h := &eofHolder{w: bw}
		zw := vcfscan.NewBGZFWriter(h, vcfscan.BGZFSitesLevel)
		for left := sg.n; left > 0; {
			k := min(left, xRowChunk)
			left -= k
			if err := rc.compute(rd, k); err != nil {
				zw.Close()
				return nil, err
			}
			for _, row := range rc.rows[:k] {
				if _, err := zw.Write(row); err != nil {
					zw.Close()
					return nil, err
				}
			}
		}
		if err := zw.Close(); err != nil {
			return nil, err
		}
		if string(h.tail) != vcfscan.BGZFEOF {
			return nil, errors.New("internal: X rows did not end with a BGZF EOF block")
		}
		ranges = append(ranges, XRange{Start: written, End: written + h.n})
		written += h.n
	}
	if _, err := io.Copy(bw, io.NewSectionReader(src, pos, st.Size()-pos)); err != nil {
		return nil, err
	}
	if err := bw.Flush(); err != nil {
		return nil, err
	}
	return ranges, dst.Close()
}

// close removes the temporary file (safe to call again).
func (x *xDeferral) close() {
	if x == nil || x.f == nil {
		return
	}
	x.f.Close()
	os.Remove(x.path)
	x.f = nil
}

func bufioReader(r io.Reader) *bufio.Reader { return bufio.NewReaderSize(r, 1<<20) }

// xRowChunk is how many X records are read before their rows are
// computed in parallel.
const xRowChunk = 256

// xRowComputer computes chunks of X rows on several goroutines (the X
// exact test dominates the cost), each with its own test cache; rows come
// out in record order, so the output does not depend on threads.
type xRowComputer struct {
	threads int
	sexes   []sexcheck.Sex
	xcols   bool
	caches  []*stats.XHWECache
	chroms  [][]byte
	recs    []vcfscan.Record
	calls   [][]vcfscan.Geno
	rows    [][]byte
}

func newXRowComputer(threads int, sexes []sexcheck.Sex, xcols bool) *xRowComputer {
	threads = max(threads, 1)
	c := &xRowComputer{threads: threads, sexes: sexes, xcols: xcols,
		chroms: make([][]byte, xRowChunk), recs: make([]vcfscan.Record, xRowChunk),
		calls: make([][]vcfscan.Geno, xRowChunk), rows: make([][]byte, xRowChunk)}
	for range threads {
		c.caches = append(c.caches, stats.NewXHWECache(0))
	}
	return c
}

// compute reads k records and computes their rows into c.rows[:k].
func (c *xRowComputer) compute(rd *xReader, k int) error {
	for i := 0; i < k; i++ {
		if err := rd.next(); err != nil {
			return fmt.Errorf("reading back X calls: %w", err)
		}
		c.chroms[i] = append(c.chroms[i][:0], rd.chrom...)
		c.recs[i] = vcfscan.Record{Pos: rd.rec.Pos, Ref: append(c.recs[i].Ref[:0], rd.rec.Ref...), Alt: append(c.recs[i].Alt[:0], rd.rec.Alt...)}
		c.calls[i] = append(c.calls[i][:0], rd.calls...)
	}
	var wg sync.WaitGroup
	for w := 0; w < c.threads; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := w; i < k; i += c.threads {
				c.rows[i] = stats.AppendXRow(c.rows[i][:0], c.chroms[i], &c.recs[i], c.calls[i], c.sexes, c.caches[w], c.xcols)
			}
		}()
	}
	wg.Wait()
	return nil
}
